"""CSV export of a stored table, view or query, safe to open in a spreadsheet.

File format (chosen so one file carries its own caution):

* line 1 is a comment: ``# `` followed by the caution text (:data:`schemas.caution.CAUTION`);
* line 2 is the header; the rest are rows, comma separated, UTF-8, ``NULL`` as an empty cell;
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
import pandas as pd

from pipeline import store
from pipeline.errors import BadInput
from schemas.caution import CAUTION

FORMULA_PREFIXES = ("=", "+", "-", "@", "\t", "\r")
_QUOTE = "'"
_BATCH_ROWS = 100_000
_IDENT = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")


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


def neutralise_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """Copy of ``frame`` with every text cell passed through :func:`neutralise`."""
    out = frame.copy()
    for col in out.columns:
        if out[col].dtype == object or pd.api.types.is_string_dtype(out[col]):
            out[col] = out[col].map(neutralise, na_action="ignore")
    return out


def resolve_query(con, what: str, run_id: int | None = None) -> tuple[str, dict]:
    """Turn a table/view name or a SELECT statement into (query, bound parameters)."""
    what = what.strip().rstrip(";")
    if _IDENT.match(what):
        names = {r[0] for r in con.execute(
            "SELECT table_name FROM information_schema.tables").fetchall()}
        if what not in names:
            raise BadInput(
                f"no table or view named {what!r} in the database; known: {', '.join(sorted(names))}")
        query = f'SELECT * FROM "{what}"'
        params: dict = {}
        if run_id is not None:
            cols = {r[0] for r in con.execute(f'DESCRIBE "{what}"').fetchall()}
            if "run_id" not in cols:
                raise BadInput(f"{what!r} has no run_id column, so --run does not apply")
            query += " WHERE run_id = $run_id"
            params["run_id"] = run_id
        return query, params
    if run_id is not None:
        raise BadInput("--run applies to a table or view name, not to a query (filter in the query)")
    return what, {}


def write_csv(batches, out_path: str | os.PathLike) -> int:
    """Write frames (an iterable) to ``out_path`` atomically, caution first; return rows."""
    out = Path(out_path)
    tmp = out.with_name(f".{out.name}.{os.getpid()}.tmp")
    rows = 0
    try:
        with open(tmp, "w", encoding="utf-8", newline="") as fh:
            fh.write(f"# {CAUTION}\n")
            header = True
            for frame in batches:
                neutralise_frame(frame).to_csv(fh, index=False, header=header, lineterminator="\n")
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
        query, params = resolve_query(con, what, run_id)
        try:
            relation = con.sql(query, params=params or None)
            if relation is None:
                raise BadInput("export needs a query that returns rows (SELECT …)")
            columns = list(relation.columns)
            reader = relation.to_arrow_reader(_BATCH_ROWS)
        except duckdb.Error as exc:
            raise BadInput(f"the query failed: {exc}") from None

        def batches():
            produced = False
            for batch in reader:
                produced = True
                yield batch.to_pandas()
            if not produced:
                yield pd.DataFrame(columns=columns)

        return write_csv(batches(), out)


def _known_text_columns() -> set[str]:
    from schemas import results

    return {c.name for cols in results.TABLES.values() for c in cols if c.sql_type == "VARCHAR"}


def read_export(path: str | os.PathLike, text_columns=None) -> pd.DataFrame:
    """Read a CSV written by :func:`export_csv` (skips the caution, restores quoted cells).

    ``text_columns`` are read as text, never as numbers (a runway designator ``09`` stays
    ``09``); by default the text columns of the result tables (:mod:`schemas.results`).
    """
    with open(path, encoding="utf-8") as fh:
        first = fh.readline()
        header = fh.readline() if first.startswith("#") else first
    skip = 1 if first.startswith("#") else 0
    names = pd.read_csv(io.StringIO(header), nrows=0).columns.tolist()
    text = _known_text_columns() if text_columns is None else set(text_columns)
    frame = pd.read_csv(path, skiprows=skip, dtype={c: str for c in names if c in text})
    for col in frame.columns:
        if frame[col].dtype == object or pd.api.types.is_string_dtype(frame[col]):
            frame[col] = frame[col].map(restore, na_action="ignore")
    return frame
