"""Validation of an input folder against the table definitions in :mod:`schemas.tables`.

:func:`validate_folder` reads every table of a folder (``<table>.csv`` or
``<table>.parquet``) and returns the list of every problem found; it never raises for bad
data. :func:`schemas.load.load_folder` runs the same checks and raises :class:`InputError`
when any of them is an error.

Row numbers
-----------
``Problem.row`` is the 1-based data row: row 1 is the first row below the header. In a CSV
file opened in a spreadsheet, data row N is on sheet line N + 1 (the header is line 1); the
message says both. Blank lines in a CSV file count as rows, so numbers match the file.

Heuristics for unit mistakes (stated so a user can judge them)
---------------------------------------------------------------
* Elevation above 5 000 m that would be −500 … 5 000 m if read as feet: "looks like feet".
  An elevation between 4 500 and 5 000 m gives a warning (higher than any airfield in
  regular service).
* A climate row above 60 °C that would be −60 … 60 °C if read as Fahrenheit: "looks like
  °F"; and an airfield whose twelve monthly means are all ≥ 30 with an annual mean above
  40 gives a warning (no airfield has such a climate in °C; in °F it is a mild one).
  Values 200 … 340 look like kelvin.
* QNH 25 … 33 looks like inches of mercury, 85 … 110 like kilopascals.
* A share (wet days) above 1 but ≤ 100 looks like a percentage.
* A mass below 300 kg on an aircraft row that is plausible × 1000 looks like tonnes.
* Wind-rose frequencies whose airfield-month sums are 100 ± 1 are percentages: converted
  to shares with a warning.
"""

from __future__ import annotations

import codecs
import csv
import difflib
import io
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from schemas.tables import FILE_SUFFIXES, TABLES, TableSpec
from schemas.typeclasses import fill_class_defaults, shown_values

MAX_ROWS_PER_CHECK = 50
"""At most this many rows are listed for one check of one column; the rest are counted."""

_MISSING = {"", "nan", "na", "n/a", "null", "none", "#n/a"}
_DECIMAL_COMMA = re.compile(r"^[+-]?\d+,\d+$")


@dataclass
class Problem:
    """One problem found in the input tables.

    Attributes
    ----------
    severity : str
        ``'error'`` (the run cannot proceed) or ``'warning'``.
    file : str
        File name (``runways.csv``) or, for a missing file, the expected name.
    row : int or None
        1-based data row (row 1 is the first row below the header; sheet line row + 1).
    column : str or None
        Column name.
    value : str or None
        The offending value as text.
    expected : str or None
        What was expected.
    message : str
        What is wrong and how to fix it.
    """

    severity: str
    file: str
    row: int | None
    column: str | None
    value: str | None
    expected: str | None
    message: str

    def __str__(self) -> str:
        where = self.file
        if self.row is not None:
            if self.file.endswith(".csv"):
                where += f", row {self.row} (line {self.row + 1} of the file)"
            else:
                where += f", row {self.row}"
        if self.column:
            where += f", column '{self.column}'"
        text = f"{self.severity.upper()} {where}: {self.message}"
        extra = []
        if self.value is not None:
            extra.append(f"found {self.value!r}")
        if self.expected:
            extra.append(f"expected {self.expected}")
        if extra:
            text += " (" + "; ".join(extra) + ")"
        return text


class InputError(ValueError):
    """The input tables have errors; ``problems`` lists all of them (and the warnings)."""

    def __init__(self, problems: list[Problem]):
        self.problems = list(problems)
        errors = [p for p in self.problems if p.severity == "error"]
        shown = "\n".join(f"  {p}" for p in errors[:40])
        more = f"\n  ... and {len(errors) - 40} more errors" if len(errors) > 40 else ""
        super().__init__(
            f"{len(errors)} error(s) in the input tables; fix them and run again:\n{shown}{more}"
        )

    @property
    def errors(self) -> list[Problem]:
        return [p for p in self.problems if p.severity == "error"]


@dataclass
class FolderCheck:
    """Result of checking a folder: typed frames (user units) and problems."""

    frames: dict[str, pd.DataFrame] = field(default_factory=dict)
    files: dict[str, Path] = field(default_factory=dict)
    problems: list[Problem] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return not any(p.severity == "error" for p in self.problems)


def validate_folder(path) -> list[Problem]:
    """Check every input table in a folder and return all problems found.

    Parameters
    ----------
    path : str or Path
        Folder holding ``airfields``, ``runways``, ``climate_monthly``, ``wind_rose``,
        ``aircraft_types`` and optionally ``routes``, each as ``.csv`` (UTF-8) or ``.parquet``.

    Returns
    -------
    list of Problem
        Errors and warnings, in table order; empty when everything is fine. Never raises
        for bad data (a missing folder is reported as a problem too).
    """
    return check_folder(path).problems


def check_folder(path) -> FolderCheck:
    """Read and check a folder; return typed frames in user units and the problems."""
    folder = Path(path)
    out = FolderCheck()
    if not folder.is_dir():
        out.problems.append(Problem("error", str(folder), None, None, None,
                                    "a folder of input tables",
                                    "input folder not found"))
        return out
    for name, spec in TABLES.items():
        located = _locate(folder, spec, out.problems)
        if located is None:
            continue
        out.files[name] = located
        raw = _read(located, out.problems)
        if raw is None:
            continue
        frame = _typed_frame(raw, spec, located.name, out.problems)
        del raw
        if frame is None:
            continue
        out.frames[name] = frame
    _cross_checks(out)
    return out


# ---------------------------------------------------------------------------------------
# reading

def _locate(folder: Path, spec: TableSpec, problems: list[Problem]) -> Path | None:
    found = [folder / f"{spec.name}{s}" for s in FILE_SUFFIXES if (folder / f"{spec.name}{s}").is_file()]
    if len(found) > 1:
        problems.append(Problem(
            "error", found[0].name, None, None, None, "one file per table",
            f"both {found[0].name} and {found[1].name} exist; keep only one of them"))
        return None
    if found:
        return found[0]
    if not spec.required_file:
        return None
    near = [p.name for p in sorted(folder.iterdir())
            if p.is_file() and (p.stem.lower() in (spec.name, spec.name.rstrip("s"))
                                or p.name.lower() in (f"{spec.name}.csv", f"{spec.name}.parquet"))]
    hint = f"; found {', '.join(near)}: rename it to {spec.name}.csv" if near else ""
    problems.append(Problem(
        "error", f"{spec.name}.csv", None, None, None,
        f"{spec.name}.csv or {spec.name}.parquet",
        f"required table '{spec.name}' is missing from {folder}{hint}"))
    return None


def _read(path: Path, problems: list[Problem]) -> pd.DataFrame | None:
    if path.suffix == ".parquet":
        return _read_parquet(path, problems)
    return _read_csv(path, problems)


def _read_parquet(path: Path, problems: list[Problem]) -> pd.DataFrame | None:
    try:
        df = pd.read_parquet(path)
    except Exception as exc:  # any reader failure is a problem for the user, not a crash
        problems.append(Problem("error", path.name, None, None, None, "a Parquet file",
                                f"cannot read the file as Parquet ({type(exc).__name__}: {exc})"))
        return None
    if df.shape[0] == 0:
        problems.append(Problem("error", path.name, None, None, None, "at least one data row",
                                "the file has no data rows"))
        return None
    df = df.reset_index(drop=True)
    df.columns = [str(c).strip() for c in df.columns]
    return df


def _read_csv(path: Path, problems: list[Problem]) -> pd.DataFrame | None:
    name = path.name
    data = path.read_bytes()
    if not data.strip():
        problems.append(Problem("error", name, None, None, None, "a header line and data rows",
                                "the file is empty"))
        return None
    magic = {b"PK\x03\x04": "an Excel workbook or other zip archive",
             b"PAR1": "a Parquet file", b"\xd0\xcf\x11\xe0": "an old Excel workbook"}
    for head, what in magic.items():
        if data.startswith(head):
            problems.append(Problem("error", name, None, None, None, "comma-separated UTF-8 text",
                                    f"the file is {what}, not CSV text; export it as "
                                    "'CSV UTF-8 (comma delimited)'"))
            return None
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        problems.append(Problem("error", name, None, None, None, "UTF-8 text",
                                "the file is encoded as UTF-16; save it as 'CSV UTF-8'"))
        return None
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        try:
            data.decode("cp1252")
            guess = "it looks like Windows-1252 / Latin-1"
        except UnicodeDecodeError:
            guess = "the encoding is unknown"
        problems.append(Problem(
            "error", name, line - 1 if line > 1 else None, None,
            f"byte 0x{data[exc.start]:02x}", "UTF-8 text",
            f"the file is not UTF-8 (first invalid byte on line {line}; {guess}); "
            "save it as 'CSV UTF-8'"))
        return None
    if "\x00" in text:
        problems.append(Problem("error", name, None, None, None, "CSV text",
                                "the file contains NUL bytes: it is binary, not CSV text"))
        return None
    first = text.split("\n", 1)[0].rstrip("\r")
    if "," not in first and (";" in first or "\t" in first):
        sep = "';'" if ";" in first else "tabs"
        problems.append(Problem("error", name, None, None, first[:80], "comma-separated columns",
                                f"the columns are separated by {sep}; save the file with commas"))
        return None
    try:
        header = next(csv.reader([first]))
    except csv.Error as exc:
        problems.append(Problem("error", name, None, None, first[:80], "a CSV header line",
                                f"the header line is not valid CSV ({exc})"))
        return None
    names = [h.strip() for h in header]
    spec = TABLES.get(path.stem)
    df = None
    if spec is not None and len(set(names)) == len(names):
        # neither the decoded text nor the bytes are held while parsing (the file is read
        # again by the parser); decoded again only when the slow path needs them
        text = data = None
        df = _read_csv_typed(path, names, spec)
        if df is None:
            text = path.read_bytes().decode("utf-8-sig")
    del data
    try:
        if df is None:
            df = pd.read_csv(io.StringIO(text), dtype=str, keep_default_na=False,
                             na_filter=False, skip_blank_lines=False, engine="c")
    except pd.errors.EmptyDataError:
        problems.append(Problem("error", name, None, None, None, "a header line and data rows",
                                "the file is empty"))
        return None
    except (pd.errors.ParserError, csv.Error, ValueError) as exc:
        _locate_csv_error(text, name, len(header), problems, exc)
        return None
    if len(df.columns) != len(header):  # pragma: no cover - defensive
        header = list(df.columns)
    df.columns = names
    # blank lines stay as rows so numbers match the file; drop them now (index keeps numbers)
    blank = (df.isna() | (df == "")).all(axis=1)
    df = df[~blank]
    if df.shape[0] == 0:
        problems.append(Problem("error", name, None, None, None, "at least one data row",
                                "the file has a header but no data rows"))
        return None
    return df


_NA_VALUES = sorted({v for m in _MISSING for v in (m, m.upper(), m.capitalize())}
                    | {"NaN", "N/A", "#N/A"})


def _read_csv_typed(text: str | bytes | Path, names: list[str], spec: TableSpec) -> pd.DataFrame | None:
    """Fast path: parse numeric columns as numbers directly; None when any cell is not one.

    The slower text path then finds and reports each bad cell. ``text`` may be the file's
    UTF-8 bytes (preferred for large files: ``io.StringIO`` holds 4 bytes per character).
    """
    known = {c.name: c for c in spec.columns}
    dtypes = {i: (float if n in known and known[n].dtype != "str" else str)
              for i, n in enumerate(names)}
    try:
        if isinstance(text, Path):
            source = text
        else:
            source = io.BytesIO(text if isinstance(text, bytes) else text.encode("utf-8"))
        df = pd.read_csv(source, header=0, names=list(range(len(names))),
                         dtype=dtypes, keep_default_na=False, na_values=_NA_VALUES,
                         skip_blank_lines=False, engine="c", encoding="utf-8-sig")
    except (ValueError, pd.errors.ParserError, csv.Error):
        return None
    if df.shape[1] != len(names):
        return None
    return df


def _locate_csv_error(text, name, n_header, problems, exc) -> None:
    """Find the lines whose field count differs from the header (only on the error path)."""
    found = 0
    try:
        for i, fields in enumerate(csv.reader(io.StringIO(text), strict=True)):
            if i == 0 or not fields:
                continue
            if len(fields) != n_header:
                found += 1
                if found <= MAX_ROWS_PER_CHECK:
                    problems.append(Problem(
                        "error", name, i, None, f"{len(fields)} fields",
                        f"{n_header} fields like the header",
                        "row has a different number of fields than the header "
                        "(a stray comma or an unquoted comma in a name?)"))
    except csv.Error as err:
        problems.append(Problem("error", name, None, None, None, "valid CSV",
                                f"the file is not valid CSV ({err}); an unclosed quote?"))
        return
    if found == 0:
        problems.append(Problem("error", name, None, None, None, "valid CSV",
                                f"the file is not valid CSV ({exc})"))
    elif found > MAX_ROWS_PER_CHECK:
        problems.append(Problem("error", name, None, None, None, None,
                                f"... and {found - MAX_ROWS_PER_CHECK} more rows with the "
                                "wrong number of fields"))


# ---------------------------------------------------------------------------------------
# columns and cells

def _rows(index) -> np.ndarray:
    return np.asarray(index, dtype=np.int64) + 1


def _report(problems, severity, file, frame_index, mask, column, values, expected, message,
            hint=None) -> None:
    """Add one problem per masked row (at most MAX_ROWS_PER_CHECK, then a summary)."""
    mask = np.asarray(mask, dtype=bool)
    if not mask.any():
        return
    rows = _rows(frame_index)[mask]
    vals = np.asarray(values)[mask].astype(object)
    for r, v in zip(rows[:MAX_ROWS_PER_CHECK], vals[:MAX_ROWS_PER_CHECK]):
        msg = message
        if hint is not None:
            h = hint(v)
            if h:
                msg = f"{message}; {h}"
        problems.append(Problem(severity, file, int(r), column, _text(v), expected, msg))
    if rows.size > MAX_ROWS_PER_CHECK:
        more = rows[MAX_ROWS_PER_CHECK:]
        problems.append(Problem(
            severity, file, None, column, None, expected,
            f"... and {more.size} more rows with the same problem "
            f"(rows {', '.join(map(str, more[:10]))}{', …' if more.size > 10 else ''})"))


def _text(v) -> str | None:
    if v is None:
        return ""
    if isinstance(v, float):
        if np.isnan(v):
            return ""
        return f"{v:g}" if abs(v) < 1e15 else repr(v)
    return str(v)


def _as_text(series: pd.Series) -> pd.Series:
    """Text values with surrounding spaces removed; missing cells as ''."""
    if series.dtype == object or pd.api.types.is_string_dtype(series):
        s = series.astype(object).where(series.notna(), "")
        if pd.api.types.infer_dtype(s, skipna=False) != "string":
            s = s.map(lambda v: v if isinstance(v, str) else _scalar_text(v))
        return s.str.strip()
    if pd.api.types.is_float_dtype(series):
        return series.map(lambda v: "" if pd.isna(v) else _scalar_text(v))
    return series.map(lambda v: "" if pd.isna(v) else str(v)).str.strip()


def _scalar_text(v) -> str:
    if isinstance(v, float) and v.is_integer():
        return str(int(v))
    return str(v)


def _typed_frame(raw: pd.DataFrame, spec: TableSpec, file: str,
                 problems: list[Problem]) -> pd.DataFrame | None:
    cols = list(raw.columns)
    seen: set[str] = set()
    keep = []
    for i, c in enumerate(cols):
        if c in seen:
            problems.append(Problem("error", file, None, c, None, "each column once",
                                    f"column '{c}' appears more than once in the header; "
                                    "keep one"))
            continue
        seen.add(c)
        keep.append(i)
    raw = raw.iloc[:, keep]
    known = set(spec.names)
    for c in raw.columns:
        if c in known:
            continue
        if c.startswith("Unnamed:") or c == "":
            if (_as_text(raw[c]) == "").all():
                continue
            problems.append(Problem("warning", file, None, c or "(blank)", None, None,
                                    "a column without a header holds values; it is ignored"))
            continue
        guess = difflib.get_close_matches(c, spec.names, n=1, cutoff=0.6)
        hint = f"; did you mean '{guess[0]}'?" if guess else ""
        if c.lower().endswith("_ft"):
            hint += " Give lengths in metres (ft × 0.3048) in the '_m' column."
        if c.lower().endswith("_f"):
            hint += " Give temperatures in °C ((°F − 32) × 5/9) in the '_c' column."
        problems.append(Problem("warning", file, None, c, None,
                                ", ".join(spec.names), f"unknown column, ignored{hint}"))
    missing = [c for c in spec.columns if c.required and c.name not in raw.columns]
    for c in missing:
        problems.append(Problem("error", file, None, c.name, None, c.description,
                                f"required column '{c.name}' is missing"))
    if missing:
        return None

    out = pd.DataFrame(index=raw.index)
    for col in spec.columns:
        if col.name in raw.columns:
            series = raw[col.name]
        else:
            series = pd.Series([None] * len(raw), index=raw.index, dtype=object)
        out[col.name] = _convert_column(series, col, file, problems)
    return out


def _convert_column(series: pd.Series, col, file, problems) -> pd.Series:
    idx = series.index
    if col.dtype == "str":
        # work on the distinct values (an id column repeats a few thousand values)
        codes, uniq = pd.factorize(series if pd.api.types.is_string_dtype(series)
                                   else series.astype(object), use_na_sentinel=False)
        utext = _as_text(pd.Series(uniq, dtype=object))
        ublank = utext.str.lower().isin(_MISSING).to_numpy()
        text = pd.Series(utext.to_numpy()[codes], index=idx, dtype=object)
        blank = ublank[codes]
        if col.required:
            _report(problems, "error", file, idx, blank, col.name, text, col.description,
                    "required value is blank or NaN")
        ok = ~blank
        if col.allowed is not None:
            bad = ok & ~utext.isin(col.allowed).to_numpy()[codes]
            _report(problems, "error", file, idx, bad, col.name, text, col.range_text(),
                    f"unknown value for {col.name}",
                    hint=lambda v: _allowed_hint(v, col.allowed))
        if col.pattern is not None:
            bad = ok & ~utext.str.match(col.pattern).to_numpy(dtype=bool)[codes]
            _report(problems, "error", file, idx, bad, col.name, text,
                    "letters, digits, '-', '_' or '.', no spaces",
                    "not a valid identifier")
        result = text.where(ok, None)
        if col.default is not None:
            result = result.where(ok, col.default)
        return result

    if pd.api.types.is_bool_dtype(series):
        values = pd.Series(np.nan, index=idx)
        text = series.astype(str)
        _report(problems, "error", file, idx, np.ones(len(series), bool), col.name, text,
                "a number", "true/false value where a number is expected")
        return values
    if pd.api.types.is_numeric_dtype(series):
        values = series.astype(float)
        text = values
        failed = values.isna().to_numpy()
        blank = failed
        badtype = np.zeros(len(series), bool)
    else:
        text = _as_text(series)
        values = pd.to_numeric(text, errors="coerce").astype(float)
        failed = values.isna().to_numpy()
        blank = np.zeros(len(series), bool)
        if failed.any():
            blank[failed] = text[failed].str.lower().isin(_MISSING).to_numpy()
        badtype = failed & ~blank
    inf = np.isinf(values.to_numpy())
    badtype = badtype | inf
    values = values.where(~inf, np.nan)
    if badtype.any():
        _report(problems, "error", file, idx, badtype, col.name, text,
                "a whole number" if col.dtype == "int" else "a number",
                "not a number", hint=_number_hint)
    if col.required:
        _report(problems, "error", file, idx, blank, col.name, text, col.description,
                "required value is blank or NaN")
    v = values.to_numpy()
    present = ~np.isnan(v)
    if col.dtype == "int":
        frac = present & (np.abs(v - np.round(v)) > 1e-9)
        _report(problems, "error", file, idx, frac, col.name, v, "a whole number",
                "not a whole number")
    bad_range = np.zeros(len(v), bool)
    with np.errstate(invalid="ignore"):
        if col.min is not None:
            bad_range |= present & (v < col.min)
        if col.max is not None:
            bad_range |= present & (v > col.max)
    if bad_range.any():
        _report(problems, "error", file, idx, bad_range, col.name, v, col.range_text(),
                "value out of range", hint=_RANGE_HINTS.get(col.name))
    if col.default is not None:
        values = values.where(present | badtype, float(col.default))
    return values


def _allowed_hint(v, allowed) -> str | None:
    low = str(v).strip().lower()
    if low in allowed:
        return f"write it in lower case: '{low}'"
    guess = difflib.get_close_matches(low, allowed, n=1, cutoff=0.5)
    return f"did you mean '{guess[0]}'?" if guess else None


def _number_hint(v) -> str | None:
    s = str(v).strip()
    if re.match(r"^[+-]?\d{1,3}(,\d{3})+$", s):
        return "remove the thousands separator (or, if it is a decimal comma, use a point)"
    if _DECIMAL_COMMA.match(s):
        return "use a point as the decimal separator"
    if s.lower() in ("inf", "-inf", "infinity"):
        return "must be finite"
    if re.match(r"^[+-]?[\d.]+\s*[A-Za-z°%]+$", s):
        return "give the number only; the unit is in the column name"
    return None


def _feet_hint(v) -> str | None:
    if 5000 < v * 1.0 <= 5000 / 0.3048:
        return f"looks like feet: {v:g} ft = {v * 0.3048:.0f} m"
    return None


def _fahrenheit_hint(v) -> str | None:
    if 200 <= v <= 340:
        return f"looks like kelvin: {v:g} K = {v - 273.15:.1f} °C"
    if 60 < v <= 140:
        return f"looks like °F: {v:g} °F = {(v - 32) * 5 / 9:.1f} °C"
    return None


def _qnh_hint(v) -> str | None:
    if 25 <= v <= 33:
        return f"looks like inches of mercury: {v:g} inHg = {v * 33.8639:.1f} hPa"
    if 85 <= v <= 110:
        return f"looks like kilopascals: {v:g} kPa = {v * 10:.1f} hPa"
    return None


def _share_hint(v) -> str | None:
    if 1 < v <= 100:
        return f"looks like a percentage: give {v / 100:g}"
    return None


def _tonnes_hint(v) -> str | None:
    if 0 < v < 300 and v * 1000 >= 300:
        return f"looks like tonnes: {v:g} t = {v * 1000:.0f} kg"
    return None


def _longitude_hint(v) -> str | None:
    if 180 < v <= 360:
        return f"use −180 … 180: {v:g} = {v - 360:g}"
    return None


def _temperature_span_hint(v) -> str | None:
    if 0 < v <= 36:
        return f"in °F? a spread of {v:g} °F is {v * 5 / 9:.1f} °C"
    return None


_RANGE_HINTS = {
    "elevation_m": _feet_hint,
    "mean_daily_max_c": _fahrenheit_hint,
    "p50_daily_max_c": _fahrenheit_hint,
    "p85_daily_max_c": _fahrenheit_hint,
    "p95_daily_max_c": _fahrenheit_hint,
    "flat_rate_oat_c": _fahrenheit_hint,
    "qnh_hpa": _qnh_hint,
    "wet_day_share": _share_hint,
    "longitude_deg": _longitude_hint,
    "mtow_kg": _tonnes_hint,
    "oew_kg": _tonnes_hint,
    "max_landing_mass_kg": _tonnes_hint,
    "tora_m": _feet_hint,
    "toda_m": _feet_hint,
    "asda_m": _feet_hint,
    "field_length_m": _feet_hint,
    "pressure_altitude_m": _feet_hint,
    "oat_c": _fahrenheit_hint,
}


# ---------------------------------------------------------------------------------------
# table and cross-table checks

def _fname(check: FolderCheck, table: str) -> str:
    p = check.files.get(table)
    return p.name if p is not None else f"{table}.csv"


def _cross_checks(check: FolderCheck) -> None:
    f = check.frames
    pr = check.problems
    for name, df in f.items():
        _duplicate_keys(df, TABLES[name], _fname(check, name), pr)
    if "runways" in f:
        _runway_checks(f["runways"], _fname(check, "runways"), pr)
    if "airfields" in f:
        _airfield_checks(f["airfields"], _fname(check, "airfields"), pr)
    if "climate_monthly" in f:
        _climate_checks(f["climate_monthly"], _fname(check, "climate_monthly"), pr)
    if "wind_rose" in f:
        f["wind_rose"] = _wind_rose_checks(f["wind_rose"], _fname(check, "wind_rose"), pr)
    if "aircraft_types" in f:
        _aircraft_checks(f["aircraft_types"], _fname(check, "aircraft_types"), pr)
    if "routes" in f:
        _route_checks(f["routes"], _fname(check, "routes"), pr)
    if "reference_points" in f:
        _reference_point_checks(f["reference_points"], _fname(check, "reference_points"), pr)
    if "obstacles" in f:
        _obstacle_checks(f["obstacles"], _fname(check, "obstacles"), pr)
    for name, df in f.items():
        for fk in TABLES[name].foreign_keys:
            ref = f.get(fk.ref_table)
            if ref is None:
                continue
            if len(fk.columns) > 1:
                _composite_reference(df, fk, ref, _fname(check, name), _fname(check, fk.ref_table), pr)
                continue
            col, refcol = fk.columns[0], fk.ref_columns[0]
            vals = df[col]
            bad = vals.notna().to_numpy() & ~vals.isin(set(ref[refcol].dropna())).to_numpy()
            _report(pr, "error", _fname(check, name), df.index, bad, col, vals,
                    f"an {refcol} listed in {_fname(check, fk.ref_table)}",
                    f"refers to an unknown {fk.ref_table.rstrip('s').replace('_', ' ')}",
                    hint=lambda v, r=ref[refcol].dropna().tolist():
                        _suggest(v, r))
    if "airfields" in f:
        af = f["airfields"]
        ids = af["airfield_id"].dropna()
        for table in ("climate_monthly", "wind_rose"):
            if table in f:
                _months_complete(af, f[table], table, _fname(check, table),
                                 _fname(check, "airfields"), pr)
        if "runways" in f:
            has = ids.isin(set(f["runways"]["airfield_id"].dropna())).to_numpy()
            _report(pr, "warning", _fname(check, "airfields"), ids.index, ~has, "airfield_id",
                    ids, "at least one row in runways",
                    "airfield has no runway: it gets no results")


def _composite_reference(df, fk, ref, file, ref_file, pr) -> None:
    """Rows whose key pair (airfield, runway) is not in the referenced table; rows whose
    first column is itself unknown are left to that column's own reference check."""
    first, last = fk.columns[0], fk.columns[-1]
    known_first = set(ref[fk.ref_columns[0]].dropna())
    pairs = pd.MultiIndex.from_frame(ref[list(fk.ref_columns)].dropna())
    mine = df[list(fk.columns)]
    filled = mine.notna().all(axis=1).to_numpy()
    bad = (filled & mine[first].isin(known_first).to_numpy()
           & ~pd.MultiIndex.from_frame(mine.astype(object)).isin(pairs))
    if not bad.any():
        return
    what = (f"refers to an unknown {fk.ref_table.rstrip('s').replace('_', ' ')} of that "
            f"{first.replace('_id', '')}")
    by_first = ref.groupby(fk.ref_columns[0])[fk.ref_columns[-1]].agg(list)
    owners = mine[first].to_numpy(object)
    values = mine[last].to_numpy(object)
    at = np.flatnonzero(bad)
    for i in at[:MAX_ROWS_PER_CHECK]:  # each with the runways its airfield has
        own = [str(v) for v in by_first.get(owners[i], [])]
        hint = _suggest(values[i], own)
        _report(pr, "error", file, df.index[i:i + 1], [True], last, values[i:i + 1],
                f"a {last} of {owners[i]} in {ref_file}: "
                + ", ".join(own[:12]) + (" …" if len(own) > 12 else ""),
                what + (f"; {hint}" if hint else ""))
    rest = np.zeros(bad.size, dtype=bool)
    rest[at[MAX_ROWS_PER_CHECK:]] = True
    _report(pr, "error", file, df.index, rest, last, values,
            f"a {last} of the same {first} in {ref_file}", what)


def _obstacle_checks(df, file, pr) -> None:
    from schemas import departure

    d = df["distance_from_toda_end_m"].to_numpy()
    with np.errstate(invalid="ignore"):
        _report(pr, "error", file, df.index, d <= 0, "distance_from_toda_end_m", d,
                "> 0: the ground distance from the END of TODA along the departure path",
                "obstacle does not lie past the end of TODA (give its distance from the end of "
                "TODA, not from the start of the takeoff run; obstacles on the runway or the "
                "clearway belong to the declared distances)")
        off = df["lateral_offset_m"].to_numpy()
        outside = (d > 0) & ~departure.in_departure_area(d, off)
    _report(pr, "warning", file, df.index, outside, "lateral_offset_m", off,
            f"inside the departure area: |offset| ≤ {departure.area_text()}",
            "obstacle outside the departure area: it is left out of the run (check its "
            "lateral offset)")
    from physics.flightpath import OBSTACLE_CLEARANCE_M, PATH_END_HEIGHT_M

    top = PATH_END_HEIGHT_M - OBSTACLE_CLEARANCE_M
    h = df["height_m"].to_numpy()
    with np.errstate(invalid="ignore"):
        high = h > top
    _report(pr, "warning", file, df.index, high, "height_m", h,
            f"≤ {top:.0f} m: the takeoff flight path ends at 1 500 ft above the runway end, less "
            "the 35 ft margin",
            "obstacle above the end of the takeoff flight path: where the net path reaches it "
            "before 1 500 ft no mass clears it, beyond that it is not checked (the en-route "
            "climb is not modelled); is the height above the runway end, in metres?")


def _suggest(v, candidates) -> str | None:
    guess = difflib.get_close_matches(str(v), candidates, n=1, cutoff=0.75)
    return f"did you mean '{guess[0]}'?" if guess else None


def _duplicate_keys(df, spec: TableSpec, file, pr) -> None:
    key = list(spec.key)
    valid = df[[k for k in key if spec.column(k).required]].notna().all(axis=1)
    sub = df if valid.all() else df[valid]
    if sub.empty:
        return
    dup = sub.duplicated(key, keep="first").to_numpy()
    if not dup.any():
        return
    first = pd.Series(sub.index, index=sub.index).groupby(
        [sub[k] for k in key], dropna=False).transform("min")
    rows = _rows(sub.index)[dup]
    firsts = (first.to_numpy() + 1)[dup]
    texts = [", ".join(_text(v) or "(blank)" for v in row)
             for row in sub[key][dup].head(MAX_ROWS_PER_CHECK).itertuples(index=False)]
    for r, fr, t in list(zip(rows, firsts, texts))[:MAX_ROWS_PER_CHECK]:
        pr.append(Problem("error", file, int(r), key[-1], t,
                          f"a unique ({', '.join(key)})",
                          f"duplicate key: the same ({', '.join(key)}) is on row {int(fr)}"))
    if rows.size > MAX_ROWS_PER_CHECK:
        pr.append(Problem("error", file, None, key[-1], None, None,
                          f"... and {rows.size - MAX_ROWS_PER_CHECK} more duplicate keys"))


def _airfield_checks(df, file, pr) -> None:
    e = df["elevation_m"].to_numpy()
    with np.errstate(invalid="ignore"):
        high = (e > 4500) & (e <= 5000)
    _report(pr, "warning", file, df.index, high, "elevation_m", e, "metres",
            "elevation above 4 500 m is higher than any airfield in regular service; "
            "is it in feet?")


def _runway_checks(df, file, pr) -> None:
    tora, toda, asda = (df[c].to_numpy() for c in ("tora_m", "toda_m", "asda_m"))
    with np.errstate(invalid="ignore"):
        _report(pr, "error", file, df.index, toda < tora, "toda_m", toda,
                "toda_m ≥ tora_m", "TODA shorter than TORA (TODA = TORA + clearway)")
        _report(pr, "error", file, df.index, asda < tora, "asda_m", asda,
                "asda_m ≥ tora_m", "ASDA shorter than TORA (ASDA = TORA + stopway)")
    rid = df["runway_id"].astype(object)
    m = rid.astype(str).str.extract(r"^(\d{1,2})[LCR]?$")[0]
    number = pd.to_numeric(m, errors="coerce").to_numpy()
    heading = df["heading_true_deg"].to_numpy()
    with np.errstate(invalid="ignore"):
        diff = np.abs((number * 10.0 - heading + 180.0) % 360.0 - 180.0)
        bad = (number >= 1) & (number <= 36) & (diff > 35)
    _report(pr, "warning", file, df.index, bad, "heading_true_deg", heading,
            "within 35° of the designator × 10°",
            "true heading far from the runway designator: check the heading "
            "(true, of this takeoff direction)")


def _climate_checks(df, file, pr) -> None:
    cols = ["p50_daily_max_c", "p85_daily_max_c", "p95_daily_max_c"]
    for lo, hi in ((cols[0], cols[1]), (cols[1], cols[2]), (cols[0], cols[2])):
        a, b = df[lo].to_numpy(), df[hi].to_numpy()
        with np.errstate(invalid="ignore"):
            bad = a > b
        _report(pr, "error", file, df.index, bad, hi, b, f"{hi} ≥ {lo}",
                "percentiles must rise (p50 ≤ p85 ≤ p95)")
    t = df["mean_daily_max_c"]
    g = t.groupby(df["airfield_id"])
    stats = pd.DataFrame({"min": g.min(), "mean": g.mean(), "max": g.max()})
    fahr_range = stats.index[(stats["max"] > 60) & (stats["max"] <= 140) & (stats["min"] > -76)]
    fahr_warm = stats.index[(stats["min"] >= 30) & (stats["mean"] > 40) & (stats["max"] <= 60)]
    first_row = pd.Series(df.index, index=df.index).groupby(df["airfield_id"]).min() + 1
    for afid in list(fahr_range)[:MAX_ROWS_PER_CHECK]:
        pr.append(Problem("error", file, int(first_row[afid]), "mean_daily_max_c", str(afid),
                          "°C", f"the temperatures of airfield '{afid}' look like °F: "
                          "convert with (°F − 32) × 5/9"))
    for afid in list(fahr_warm)[:MAX_ROWS_PER_CHECK]:
        pr.append(Problem("warning", file, int(first_row[afid]), "mean_daily_max_c", str(afid),
                          "°C", f"every month of airfield '{afid}' is at least 30 with an annual "
                          f"mean of {stats.loc[afid, 'mean']:.1f}: are these °F?"))


def _months_complete(af, df, table, file, af_file, pr) -> None:
    months = df[["airfield_id", "month"]].dropna()
    months = months[(months["month"] >= 1) & (months["month"] <= 12)].drop_duplicates()
    count = months.groupby("airfield_id")["month"].size()
    ids = af["airfield_id"]
    n_have = ids.map(count).fillna(0).to_numpy()
    bad = ids.notna().to_numpy() & (n_have < 12)
    n = 0
    for i, afid, have in zip(af.index[bad], ids[bad], n_have[bad]):
        n += 1
        if n > MAX_ROWS_PER_CHECK:
            continue
        if have == 0:
            pr.append(Problem("error", file, None, "airfield_id", str(afid),
                              "12 months for every airfield",
                              f"airfield '{afid}' (row {i + 1} of {af_file}) has no rows"))
        else:
            got = set(months.loc[months["airfield_id"] == afid, "month"].astype(int))
            miss = sorted(set(range(1, 13)) - got)
            pr.append(Problem("error", file, None, "month", str(afid),
                              "months 1 … 12 for every airfield",
                              f"airfield '{afid}' is missing month(s) "
                              f"{', '.join(map(str, miss))}"))
    if n > MAX_ROWS_PER_CHECK:
        pr.append(Problem("error", file, None, "month", None, None,
                          f"... and {n - MAX_ROWS_PER_CHECK} more airfields with missing months"))


def _wind_rose_checks(df, file, pr) -> pd.DataFrame:
    # works on column arrays and integer group codes: no copy of the (large) frame
    d, w = df["direction_deg"].to_numpy(), df["sector_width_deg"].to_numpy()
    lo, hi = df["speed_low_mps"].to_numpy(), df["speed_high_mps"].to_numpy()
    calm = np.isnan(d)
    idx = df.index
    n = len(df)
    _report(pr, "error", file, idx, calm & ~np.isnan(w), "direction_deg", d,
            "a sector centre (the row has a sector width)",
            "direction blank but sector width given (a calm row leaves both blank)")
    _report(pr, "error", file, idx, ~calm & np.isnan(w), "sector_width_deg", w,
            "a width such as 22.5 or 30",
            "sector width blank on a row with a direction")
    with np.errstate(invalid="ignore"):
        _report(pr, "error", file, idx, hi <= lo, "speed_high_mps", hi,
                "speed_high_mps > speed_low_mps", "speed class upper bound not above lower bound")
        _report(pr, "warning", file, idx, calm & (lo > 0), "speed_low_mps", lo, "0",
                "calm row should start at 0 m/s")
        n_sect = 360.0 / w
        _report(pr, "error", file, idx, ~np.isnan(w) & (np.abs(n_sect - np.round(n_sect)) > 1e-6),
                "sector_width_deg", w, "a width that divides 360° (e.g. 10, 22.5, 30, 45)",
                "sector width does not divide the circle")
        del n_sect
    # frequency sums per airfield-month (percent detection); groups as one integer code
    am = _group_code(df["airfield_id"], df["month"])
    sums = df["frequency"].groupby(am).transform("sum").to_numpy()
    pos = np.arange(n, dtype=np.int64)
    first = _first_position(am, pos)  # position of each row's group's first row
    valid_grp = df["airfield_id"].notna().to_numpy() & df["month"].notna().to_numpy()
    share_ok = np.abs(sums - 1.0) <= 0.01
    pct = np.abs(sums - 100.0) <= 1.0
    freq = df["frequency"].to_numpy().copy()
    freq[pct] = freq[pct] / 100.0
    if (pct & valid_grp).any():
        n_pct = len(set(zip(df["airfield_id"][pct], df["month"][pct])))
        pr.append(Problem("warning", file, None, "frequency", None, "shares summing to 1",
                          f"frequencies of {n_pct} airfield-month(s) sum to 100: read as "
                          "percentages and converted to shares"))
    with np.errstate(invalid="ignore"):
        _report(pr, "error", file, idx, (freq > 1.0) & ~pct, "frequency", freq,
                "a share 0 … 1 (or percentages summing to 100)", "frequency above 1")
    bad_sum = valid_grp & ~share_ok & ~pct & (pos == first)
    del share_ok, first
    if bad_sum.any():
        sum_text = np.empty(n, dtype=object)
        sum_text[bad_sum] = [f"{v:.4g}" for v in sums[bad_sum]]
    else:
        sum_text = sums
    _report(pr, "error", file, idx, bad_sum, "frequency", sum_text,
            "1 ± 0.01 (or 100 ± 1 %)",
            "frequencies of this airfield and month do not sum to 1 (the row is the "
            "first of the airfield-month)")
    del sums, sum_text, bad_sum, pct
    _sector_coverage(df, np.flatnonzero(~calm & valid_grp), am, file, pr)
    _speed_classes(df, np.flatnonzero(valid_grp), am, file, pr)
    del am, pos
    out = df.copy(deep=False)  # the other columns stay shared (copy-on-write)
    out["frequency"] = freq
    return out


def _first_position(code: np.ndarray, pos: np.ndarray) -> np.ndarray:
    """For each element, the smallest ``pos`` among the elements with the same ``code``."""
    if code.size == 0:
        return pos.copy()
    fp = np.full(int(code.max()) + 1, np.iinfo(np.int64).max, dtype=np.int64)
    np.minimum.at(fp, code, pos)
    return fp[code]


def _group_code(*cols) -> np.ndarray:
    """One int64 code per distinct combination of the columns (NaN/None get their own)."""
    code = np.zeros(len(cols[0]), dtype=np.int64)
    for c in cols:
        f, uniq = pd.factorize(c, use_na_sentinel=False)
        code = code * (len(uniq) + 1) + f
    return pd.factorize(code)[0].astype(np.int64)


_BLOCK_ROWS = 1 << 20
"""Rows of whole airfield-months checked together: the temporaries stay this size."""


def _group_blocks(p: np.ndarray, am_all: np.ndarray):
    """Blocks of whole groups of rows ``p`` (ascending positions) by the group code.

    Yields ``(rows, local, where)``: the block's positions (grouped by code, ascending
    within a group), a dense 0-based group code per row, and the rows' places in ``p``.
    """
    a = am_all[p]
    if a.size and np.all(a[1:] >= a[:-1]):
        order = None  # already grouped (the usual file layout): no sort needed
        rows_all, a_sorted = p, a
    else:
        order = np.argsort(a, kind="stable")
        rows_all, a_sorted = p[order], a[order]
    del a
    b0 = 0
    n = rows_all.size
    while b0 < n:
        b1 = min(b0 + _BLOCK_ROWS, n)
        if b1 < n:  # extend to the end of the group
            b1 = int(np.searchsorted(a_sorted, a_sorted[b1 - 1], side="right"))
        seg = a_sorted[b0:b1]
        local = np.cumsum(np.r_[0, seg[1:] != seg[:-1]]).astype(np.int64)
        where = np.arange(b0, b1) if order is None else order[b0:b1]
        yield rows_all[b0:b1], local, where
        b0 = b1


def _sector_coverage(df, p, am_all, file, pr) -> None:
    """Sector checks on rows ``p`` (positions in ``df``) of the non-calm, keyed rows."""
    cols = {c: df[c].to_numpy() for c in ("sector_width_deg", "direction_deg",
                                           "speed_low_mps", "speed_high_mps")}
    keep = np.ones(p.size, dtype=bool)
    for v in cols.values():
        keep &= ~np.isnan(v[p])
    p = p[keep]
    del keep
    if p.size == 0:
        return
    nidx = df.index[p]
    w_all, d_all = cols["sector_width_deg"], cols["direction_deg"]
    lo_all, hi_all = cols["speed_low_mps"], cols["speed_high_mps"]
    width_bad = np.zeros(p.size, dtype=bool)
    off_grid = np.zeros(p.size, dtype=bool)
    dup = np.zeros(p.size, dtype=bool)
    short = np.zeros(p.size, dtype=bool)
    for rows, am, where in _group_blocks(p, am_all):
        w = w_all[rows]
        ng = int(am[-1]) + 1
        wmin = np.full(ng, np.inf)
        wmax = np.full(ng, -np.inf)
        np.minimum.at(wmin, am, w)
        np.maximum.at(wmax, am, w)
        firstw = w[_first_position(am, np.arange(rows.size, dtype=np.int64))]
        width_bad[where] = (wmin != wmax)[am] & (w != firstw)
        d = d_all[rows] % 360.0
        d0 = np.full(ng, np.inf)
        np.minimum.at(d0, am, d)
        k = (d - d0[am]) / w
        og = np.abs(k - np.round(k)) > 1e-6
        off_grid[where] = og
        kk = np.round(k).astype(np.int64)
        cls = _group_code(am, lo_all[rows], hi_all[rows])
        ck = _group_code(cls, kk)
        dup[where] = (_first_position(ck, rows) != rows) & ~og
        count = np.bincount(cls)[cls]
        short[where] = count < np.round(360.0 / w)
    _report(pr, "error", file, nidx, width_bad,
            "sector_width_deg", w_all[p], "one sector width per airfield and month",
            "sector width differs from the first row of the same airfield and month")
    _report(pr, "error", file, nidx, off_grid, "direction_deg", d_all[p],
            "sector centres a whole number of sector widths apart",
            "direction is not on the sector grid of its airfield and month: sectors overlap")
    _report(pr, "error", file, nidx, dup, "direction_deg", d_all[p],
            "each sector once per speed class",
            "sector appears twice in the same speed class: sectors overlap")
    if short.any():
        sub = df.iloc[p[short]]
        groups = sub.groupby(["airfield_id", "month", "speed_low_mps", "speed_high_mps"],
                             sort=False)
        n = 0
        for (a, m, slo, shi), g in groups:
            n += 1
            if n > MAX_ROWS_PER_CHECK:
                continue
            wid = g["sector_width_deg"].iloc[0]
            base = g["direction_deg"].min() % wid
            full = {round((base + j * wid) % 360.0, 6) for j in range(int(round(360 / wid)))}
            have = {round(x % 360.0, 6) for x in g["direction_deg"]}
            miss = sorted(full - have)
            pr.append(Problem(
                "error", file, int(g.index.min()) + 1, "direction_deg",
                None, f"{int(round(360 / wid))} sectors of {wid:g}° in every speed class",
                f"airfield '{a}' month {int(m)} speed class {slo:g}–{shi:g} m/s misses "
                f"sector(s) {', '.join(f'{x:g}' for x in miss[:12])}"
                f"{' …' if len(miss) > 12 else ''} (the row is the class's first)"))
        if n > MAX_ROWS_PER_CHECK:
            pr.append(Problem("error", file, None, "direction_deg", None, None,
                              f"... and {n - MAX_ROWS_PER_CHECK} more speed classes with "
                              "missing sectors"))


def _speed_classes(df, p, am_all, file, pr) -> None:
    """Speed-class checks on rows ``p`` (positions in ``df``) with an airfield and month."""
    lo_all, hi_all = df["speed_low_mps"].to_numpy(), df["speed_high_mps"].to_numpy()
    p = p[~np.isnan(lo_all[p]) & ~np.isnan(hi_all[p])]
    calm = np.isnan(df["direction_deg"].to_numpy()[p])
    # first row of each (airfield, month, speed class) among the non-calm rows
    q = p[~calm]
    if q.size == 0:
        return
    parts = []
    for rows, am, _ in _group_blocks(q, am_all):
        cls = _group_code(am, lo_all[rows], hi_all[rows])
        parts.append(rows[_first_position(cls, rows) == rows])
    firsts = np.sort(np.concatenate(parts))
    del parts
    classes = (df.iloc[firsts][["airfield_id", "month", "speed_low_mps", "speed_high_mps"]]
               .sort_values(["airfield_id", "month", "speed_low_mps", "speed_high_mps"]))
    prev_hi = classes.groupby(["airfield_id", "month"])["speed_high_mps"].shift()
    lo = classes["speed_low_mps"].to_numpy()
    with np.errstate(invalid="ignore"):
        overlap = lo < prev_hi.to_numpy() - 1e-9
        gap = lo > prev_hi.to_numpy() + 1e-9
    _report(pr, "error", file, classes.index, overlap, "speed_low_mps", lo,
            "speed classes that do not overlap",
            "speed class overlaps the class below it in the same airfield and month")
    _report(pr, "warning", file, classes.index, gap, "speed_low_mps", lo,
            "contiguous speed classes",
            "gap between this speed class and the one below it")
    lowest = classes.groupby(["airfield_id", "month"])["speed_low_mps"].min()
    calms = df.iloc[p[calm]]
    if not calms.empty:
        keyidx = pd.MultiIndex.from_arrays([calms["airfield_id"], calms["month"]])
        low_cls = lowest.reindex(keyidx).to_numpy()
        with np.errstate(invalid="ignore"):
            bad = calms["speed_high_mps"].to_numpy() > low_cls + 1e-9
        _report(pr, "warning", file, calms.index, bad, "speed_high_mps",
                calms["speed_high_mps"], "calm threshold ≤ the lowest speed class",
                "calm threshold overlaps the lowest speed class")


def _aircraft_checks(df, file, pr) -> None:
    # blank coefficients take their class defaults first (schemas.typeclasses): the checks see
    # the values a run uses, and a message on such a cell says where its value comes from
    df, defaulted = fill_class_defaults(df)
    g = {c: df[c].to_numpy() for c in df.columns if c not in ("aircraft_type_id", "name",
                                                              "thrust_model", "type_class")}
    idx = df.index
    with np.errstate(invalid="ignore"):
        _report(pr, "error", file, idx, g["oew_kg"] >= g["mtow_kg"], "oew_kg", g["oew_kg"],
                "oew_kg < mtow_kg", "empty mass not below MTOW")
        zfw = g["oew_kg"] + g["max_payload_kg"]
        _report(pr, "error", file, idx, zfw > g["mtow_kg"], "max_payload_kg",
                g["max_payload_kg"], "oew_kg + max_payload_kg ≤ mtow_kg",
                "empty mass plus maximum payload exceeds MTOW")
        _report(pr, "error", file, idx, g["max_landing_mass_kg"] > g["mtow_kg"],
                "max_landing_mass_kg", g["max_landing_mass_kg"], "≤ mtow_kg",
                "maximum landing mass above MTOW")
        _report(pr, "error", file, idx, g["max_landing_mass_kg"] <= g["oew_kg"],
                "max_landing_mass_kg", g["max_landing_mass_kg"], "> oew_kg",
                "maximum landing mass not above the empty mass")
        _report(pr, "warning", file, idx, zfw > g["max_landing_mass_kg"], "max_payload_kg",
                g["max_payload_kg"], "oew_kg + max_payload_kg ≤ max_landing_mass_kg",
                "a full payload could never land")
        _report(pr, "warning", file, idx, g["oew_kg"] + g["max_fuel_kg"] > g["mtow_kg"],
                "max_fuel_kg", g["max_fuel_kg"], "oew_kg + max_fuel_kg ≤ mtow_kg",
                "full tanks with no payload exceed MTOW")
        _report(pr, "error", file, idx, g["vr_over_vs"] > g["vlof_over_vs"], "vlof_over_vs",
                shown_values(df, defaulted, "vlof_over_vs", "vr_over_vs"),
                "≥ vr_over_vs", "lift-off speed below rotation speed")
        _report(pr, "error", file, idx, g["vlof_over_vs"] > g["v2_over_vs"], "v2_over_vs",
                shown_values(df, defaulted, "v2_over_vs", "vlof_over_vs"),
                "≥ vlof_over_vs", "V2 below lift-off speed")
        _report(pr, "error", file, idx, g["cl_ground_roll"] >= g["cl_max_takeoff"],
                "cl_ground_roll", shown_values(df, defaulted, "cl_ground_roll", "cl_max_takeoff"),
                "< cl_max_takeoff",
                "ground-roll lift coefficient not below the maximum")
        multi = g["engine_count"] >= 2
        _report(pr, "error", file, idx, multi & ~(g["vmcg_kt"] > 0), "vmcg_kt", g["vmcg_kt"],
                "> 0 for multi-engine types", "multi-engine type without a ground minimum "
                "control speed")
    model = df["thrust_model"].to_numpy()
    fan, prop = model == "turbofan", model == "propeller"
    jet = fan | (model == "quadratic")
    _report(pr, "error", file, idx, fan & ~(g["bypass_ratio"] > 0), "bypass_ratio",
            g["bypass_ratio"], "> 0 for the turbofan model", "turbofan type needs a bypass ratio")
    _report(pr, "error", file, idx, prop & ~(g["shaft_power_per_engine_kw"] > 0),
            "shaft_power_per_engine_kw", g["shaft_power_per_engine_kw"],
            "> 0 for the propeller model", "propeller type needs its shaft power")
    _report(pr, "error", file, idx, prop & ~(g["propeller_efficiency"] > 0),
            "propeller_efficiency", g["propeller_efficiency"], "> 0 for the propeller model",
            "propeller type needs a propeller efficiency")
    _report(pr, "error", file, idx, prop & np.isnan(g["cruise_psfc_kg_per_kwh"]),
            "cruise_psfc_kg_per_kwh", g["cruise_psfc_kg_per_kwh"],
            "a value for propeller types", "propeller type needs its cruise fuel consumption")
    _report(pr, "error", file, idx, jet & np.isnan(g["cruise_tsfc_g_per_kn_s"]),
            "cruise_tsfc_g_per_kn_s", g["cruise_tsfc_g_per_kn_s"],
            "a value for jet types", "jet type needs its cruise fuel consumption")


def _reference_point_checks(df, file, pr) -> None:
    kind, length = df["kind"].to_numpy(), df["field_length_m"].to_numpy()
    _report(pr, "error", file, df.index, (kind == "field_length") & np.isnan(length),
            "field_length_m", length, "the published takeoff field length",
            "field_length point without its field length")
    _report(pr, "error", file, df.index, (kind == "climb_limited_mass") & ~np.isnan(length),
            "field_length_m", length, "blank (the climb-limited mass goes in mass_kg)",
            "climb_limited_mass point with a field length")


def _route_checks(df, file, pr) -> None:
    same = (df["origin_id"] == df["destination_id"]).to_numpy() & df["origin_id"].notna().to_numpy()
    _report(pr, "error", file, df.index, same, "destination_id", df["destination_id"],
            "a destination other than the origin", "route starts and ends at the same airfield")
    ok = df["route_id"].notna()
    sub = df[ok]
    for col in ("origin_id", "destination_id"):
        n = sub.groupby("route_id")[col].transform("nunique").to_numpy()
        firstv = sub.groupby("route_id")[col].transform("first")
        bad = (n > 1) & (sub[col] != firstv).to_numpy()
        _report(pr, "error", file, sub.index, bad, col, sub[col],
                "the same value on every row of the route",
                f"rows of the same route_id disagree on {col}")
