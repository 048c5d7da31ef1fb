"""CSV export of a stored table, view or query: plain CSV that default readers open, caution on every row.

File format. ``pandas.read_csv``, DuckDB's ``read_csv`` and a spreadsheet open it with their
default settings, and the caution travels with the data:

* line 1 is the header; the rest are rows, comma separated, UTF-8, ``\\n`` line ends;
* the last column, ``caution``, holds the caution text (:data:`schemas.caution.CAUTION`) on
  every row. A column and not a comment line (default readers take a ``#`` line for the
  header and return garbage columns), not a file beside the CSV (it gets left behind when the
  CSV is mailed) and not a trailing row (it turns every numeric column into text): a row
  filtered, sorted or pasted elsewhere keeps it. It costs about 110 bytes a row, which any
  compression removes;
* rows that belong to runs carry a ``scenario`` column (``baseline`` or ``temperature +2 K``,
  the ``run_scenarios`` view) next to ``run_id`` when the table or view has none of its own;
* a missing value is an empty cell, the one spelling of missing in every file (text tables on
  the terminal print :data:`MISSING`);
* numbers are rounded by the unit in the column name (:func:`decimals`: whole kilograms,
  tenths of a metre, knot or degree Celsius, …; other floats to 12 significant digits, so no
  ``23.100000000000023``); a column rounded to whole units is written without ``.0``;
* durations (DuckDB ``INTERVAL``) are written in seconds, the column name ending in ``_s``;
* text cells that a spreadsheet would run as a formula — starting with ``=``, ``+``, ``-``,
  ``@``, a tab or a carriage return — get a single quote ``'`` in front. So that the file
  still reads back exactly, a text cell that already starts with ``'`` gets one too.
  :func:`read_export` removes that one quote again. Numbers are never altered (a negative
  headwind stays a number).

Rows are streamed from DuckDB in batches, so exporting a large table needs little memory.
"""

from __future__ import annotations

import io
import os
import re
from pathlib import Path

import duckdb
import numpy as np
import pandas as pd

from fieldlimits.pipeline import store
from fieldlimits.pipeline.errors import BadInput
from fieldlimits.schemas.caution import CAUTION

FORMULA_PREFIXES = ("=", "+", "-", "@", "\t", "\r")
CAUTION_COLUMN = "caution"
SCENARIO_COLUMN = "scenario"
MISSING = "-"
"""How a missing value is shown in text tables (in CSV files it is an empty cell)."""
_QUOTE = "'"
_BATCH_ROWS = 100_000
_IDENT = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")

#: Decimals kept for a column by the unit its name ends with (house style: the unit is in
#: the name). Kilograms to the kilogram (the weight search stops at 1 kg), lengths and
#: speeds to a tenth, coordinates to 1e-5 degree (about a metre).
UNIT_DECIMALS: tuple[tuple[str, int], ...] = (
    ("_kg", 0), ("_n", 0), ("_w", 0), ("_m", 1), ("_km", 1), ("_ft", 0), ("_kt", 1),
    ("_mps", 2), ("_c", 1), ("_k", 2), ("_hpa", 1), ("_pa", 0), ("_pct", 2), ("_s", 2),
    ("_min", 1), ("_deg", 5), ("_m2", 2), ("_kn", 2), ("_kw", 1),
)
#: Dimensionless result columns (shares, gradients, factors) keep four decimals.
SHARE_DECIMALS = 4
SIGNIFICANT_DIGITS = 12


def neutralise(value):
    """Prefix a text cell that a spreadsheet would execute (or that starts with ``'``)."""
    if isinstance(value, str) and value and (value[0] in FORMULA_PREFIXES or value[0] == _QUOTE):
        return _QUOTE + value
    return value


def restore(value):
    """Undo :func:`neutralise` on a cell read back from an export."""
    if isinstance(value, str) and len(value) > 1 and value[0] == _QUOTE and (
            value[1] in FORMULA_PREFIXES or value[1] == _QUOTE):
        return value[1:]
    return value


def _is_text(series: pd.Series) -> bool:
    return series.dtype == object or pd.api.types.is_string_dtype(series)


def neutralise_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """Copy of ``frame`` with every text cell passed through :func:`neutralise`."""
    out = frame.copy()
    for col in out.columns:
        if _is_text(out[col]):
            out[col] = out[col].map(neutralise, na_action="ignore")
    return out


# --- tidy numbers ----------------------------------------------------------------------

def _dimensionless_columns() -> set[str]:
    from fieldlimits.schemas import results

    return {c.name for cols in results.TABLES.values() for c in cols
            if c.unit == "-" and c.sql_type == "DOUBLE"}


def decimals(column: str) -> int | None:
    """Decimals to keep in ``column``: by its unit suffix, four for the dimensionless result
    columns, None (12 significant digits) otherwise."""
    name = str(column).lower()
    for suffix, n in UNIT_DECIMALS:
        if name.endswith(suffix):
            return n
    if name in _dimensionless_columns():
        return SHARE_DECIMALS
    return None


def _significant(values: np.ndarray, digits: int = SIGNIFICANT_DIGITS) -> np.ndarray:
    """``values`` rounded to ``digits`` significant digits (float noise gone, precision kept)."""
    out = values.astype(float, copy=True)
    ok = np.isfinite(out) & (out != 0)
    if ok.any():
        exponent = np.floor(np.log10(np.abs(out[ok]))).astype(int)
        shift = digits - 1 - exponent
        v = out[ok]
        up = shift >= 0
        # multiply and divide by exact powers of ten: the quotient is the double nearest
        # the decimal, so it prints as that decimal
        v[up] = np.rint(v[up] * 10.0 ** shift[up]) / 10.0 ** shift[up]
        v[~up] = np.rint(v[~up] / 10.0 ** -shift[~up]) * 10.0 ** -shift[~up]
        out[ok] = v
    return out


def _is_arrow_interval(series: pd.Series) -> bool:
    """A column of DuckDB ``INTERVAL`` values read through Arrow (month-day-nano tuples)."""
    if series.dtype != object:
        return False
    first = series.dropna()
    return len(first) > 0 and all(hasattr(first.iloc[0], a) for a in ("months", "days", "nanoseconds"))


def _interval_seconds(value) -> float:
    # a month counts 30 days, as DuckDB's epoch() of an interval does
    return (value.months * 30 + value.days) * 86400.0 + value.nanoseconds / 1e9


def tidy_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """Durations in seconds and floats rounded by unit (see the module docstring)."""
    out = frame.copy()
    renames = {}
    for col in list(out.columns):
        name = col
        if pd.api.types.is_timedelta64_dtype(out[col]) or _is_arrow_interval(out[col]):
            if pd.api.types.is_timedelta64_dtype(out[col]):
                out[col] = out[col].dt.total_seconds()
            else:
                out[col] = out[col].map(_interval_seconds, na_action="ignore").astype(float)
            if not str(col).endswith("_s"):
                name = renames[col] = f"{col}_s"
        if not pd.api.types.is_float_dtype(out[col]):
            continue
        values = out[col].to_numpy(dtype=float, na_value=np.nan)
        n = decimals(name)
        if n is None:
            out[col] = _significant(values)
        elif n == 0:  # whole units: written without ".0"
            rounded = np.round(values)
            finite = np.isfinite(rounded)
            if not np.isinf(values).any() and (np.abs(rounded[finite]) < 2.0 ** 53).all():
                whole = pd.array(np.where(finite, rounded, 0.0).astype(np.int64), dtype="Int64")
                whole[~finite] = pd.NA
                out[col] = whole
            else:
                out[col] = rounded
        else:
            out[col] = np.round(values, n)
    return out.rename(columns=renames) if renames else out


def with_caution(frame: pd.DataFrame) -> pd.DataFrame:
    """``frame`` with the ``caution`` column last (replacing one it may already have)."""
    out = frame.drop(columns=[CAUTION_COLUMN], errors="ignore")
    out[CAUTION_COLUMN] = CAUTION
    return out


def file_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """What goes into a CSV or JSON file: tidy numbers, safe text, the caution column."""
    return with_caution(neutralise_frame(tidy_frame(frame)))


def to_csv(frame: pd.DataFrame, fh, header: bool = True) -> None:
    """Write a :func:`file_frame` to an open text file (empty cell for missing)."""
    frame.to_csv(fh, index=False, header=header, lineterminator="\n", na_rep="")


def to_json(frame: pd.DataFrame) -> str:
    """Records as JSON (missing values null, times ISO 8601), caution in every record."""
    return frame.to_json(orient="records", date_format="iso", indent=1)


def text_table(frame: pd.DataFrame, max_rows: int | None = None) -> str:
    """A frame as an aligned text table: tidy numbers, :data:`MISSING` for missing values."""
    shown = frame if max_rows is None or len(frame) <= max_rows else frame.head(max_rows)
    shown = tidy_frame(shown).astype(object).where(lambda f: f.notna(), MISSING)
    with pd.option_context("display.max_columns", None, "display.width", 250,
                           "display.max_colwidth", 80):
        return shown.to_string(index=False)


# --- DuckDB errors -------------------------------------------------------------------------

def query_error(exc: BaseException) -> str:
    """DuckDB's message in full: the error, its hints ("Did you mean …", candidate bindings)
    on the same line, and the position pointer (``LINE 1: …`` and the carets) below."""
    lines = str(exc).rstrip().splitlines()
    head, pointer = [], []
    for i, line in enumerate(lines):
        if line.startswith("LINE "):
            pointer = lines[i:]
            break
        if line.strip():
            head.append(line.strip())
    text = " ".join(head)
    if pointer:
        text += "\n" + "\n".join("  " + p for p in pointer)
    return text


# --- resolving what to export --------------------------------------------------------------

def _names(con) -> set[str]:
    return {r[0] for r in con.execute("SELECT table_name FROM information_schema.tables").fetchall()}


def check_run_exists(con, run_id: int, db_path=None) -> None:
    """Raise :class:`BadInput` naming the stored runs when ``run_id`` is not one of them."""
    if "runs" not in _names(con):
        raise BadInput(f"there are no runs in {db_path or 'the database'}; run `fieldlimits run` first")
    found = con.execute(store.sql("run_exists"), {"run_id": int(run_id)}).fetchall()
    if found:
        return
    ids = [r[0] for r in con.execute(store.sql("run_ids")).fetchall()]
    known = (f"stored runs: {_id_ranges(ids)}" if ids else "no runs are stored yet")
    raise BadInput(f"run {run_id} does not exist in {db_path or 'the database'}; {known} "
                   f"(see `fieldlimits runs`)")


def _id_ranges(ids) -> str:
    """``1-4, 7, 9-10``."""
    ids = sorted(int(i) for i in ids)
    parts, start = [], None
    for i, x in enumerate(ids):
        if start is None:
            start = x
        if i == len(ids) - 1 or ids[i + 1] != x + 1:
            parts.append(str(start) if start == x else f"{start}-{x}")
            start = None
    return ", ".join(parts)


def resolve_query(con, what: str, run_id: int | None = None) -> tuple[str, dict]:
    """Turn a table/view name or a SELECT statement into (query, bound parameters).

    A table or view with ``run_id`` but no ``scenario`` column gets the run's scenario from
    the ``run_scenarios`` view (when the file has it).
    """
    what = what.strip().rstrip(";")
    if _IDENT.match(what):
        names = _names(con)
        if what not in names:
            raise BadInput(
                f"no table or view named {what!r} in the database; known: {', '.join(sorted(names))}")
        cols = [r[0] for r in con.execute(f'DESCRIBE "{what}"').fetchall()]
        params: dict = {}
        if "run_id" in cols and SCENARIO_COLUMN not in cols and "run_scenarios" in names:
            query = (f'SELECT t.*, s.scenario FROM "{what}" AS t '
                     f"LEFT JOIN run_scenarios AS s ON s.run_id = t.run_id")
            column = "t.run_id"
        else:
            query = f'SELECT * FROM "{what}"'
            column = "run_id"
        if run_id is not None:
            if "run_id" not in cols:
                raise BadInput(f"{what!r} has no run_id column, so --run does not apply")
            check_run_exists(con, run_id)
            query += f" WHERE {column} = $run_id"
            params["run_id"] = run_id
        return query, params
    if run_id is not None:
        raise BadInput("--run applies to a table or view name, not to a query (filter in the query)")
    return what, {}


def write_csv(batches, out_path: str | os.PathLike) -> int:
    """Write frames (an iterable) to ``out_path`` atomically in the export format; return rows."""
    out = Path(out_path)
    tmp = out.with_name(f".{out.name}.{os.getpid()}.tmp")
    rows = 0
    try:
        with open(tmp, "w", encoding="utf-8", newline="") as fh:
            header = True
            for frame in batches:
                to_csv(file_frame(frame), fh, header=header)
                header = False
                rows += len(frame)
        os.replace(tmp, out)
    finally:
        if tmp.exists():
            tmp.unlink()
    return rows


def export_csv(db_path, what: str, out_path, run_id: int | None = None) -> int:
    """Export a table, view or query from the store to CSV; return the number of rows."""
    out = Path(out_path)
    if not out.parent.exists():
        raise BadInput(f"the folder for {out} does not exist")
    with store.reader(db_path) as con:
        if run_id is not None and _IDENT.match(what.strip().rstrip(";")):
            check_run_exists(con, run_id, db_path)
        query, params = resolve_query(con, what, run_id)
        try:
            relation = con.sql(query, params=params or None)
            if relation is None:
                raise BadInput("export needs a query that returns rows (SELECT …)")
            columns = list(relation.columns)
            reader = relation.to_arrow_reader(_BATCH_ROWS)
        except duckdb.Error as exc:
            raise BadInput(f"the query failed: {query_error(exc)}") from None

        def batches():
            produced = False
            for batch in reader:
                produced = True
                yield batch.to_pandas()
            if not produced:
                yield pd.DataFrame(columns=columns)

        return write_csv(batches(), out)


def _known_text_columns() -> set[str]:
    from fieldlimits.schemas import results

    return {c.name for cols in results.TABLES.values() for c in cols if c.sql_type == "VARCHAR"}


def read_export(path: str | os.PathLike, text_columns=None, keep_caution: bool = False) -> pd.DataFrame:
    """Read a CSV written by :func:`export_csv` (restores quoted cells; drops ``caution``).

    ``text_columns`` are read as text, never as numbers (a runway designator ``09`` stays
    ``09``); by default the text columns of the result tables (:mod:`schemas.results`) and
    ``scenario``. Files of the earlier format (a ``#`` caution line first) are read too.
    """
    with open(path, encoding="utf-8") as fh:
        first = fh.readline()
        header = fh.readline() if first.startswith("#") else first
    skip = 1 if first.startswith("#") else 0
    names = pd.read_csv(io.StringIO(header), nrows=0).columns.tolist()
    text = (_known_text_columns() | {SCENARIO_COLUMN, CAUTION_COLUMN}
            if text_columns is None else set(text_columns) | {CAUTION_COLUMN})
    frame = pd.read_csv(path, skiprows=skip, dtype={c: str for c in names if c in text})
    for col in frame.columns:
        if _is_text(frame[col]):
            frame[col] = frame[col].map(restore, na_action="ignore")
    if not keep_caution:
        frame = frame.drop(columns=[CAUTION_COLUMN], errors="ignore")
    return frame
