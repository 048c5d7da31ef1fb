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

Text cells
----------
Text columns (identifiers, names) keep the text as written: ``NA``, ``null``, ``None`` or
``nan`` are identifiers like any other; only an empty cell is blank. In number columns
those spellings (and ``N/A``, ``#N/A``) mean blank.

Large tables
------------
:func:`check_folder` reads and checks the wind rose in blocks of whole airfield-months;
with ``frames=False`` (the ``check`` command) it keeps only the table's row count and
month coverage, so memory stays bounded whatever the size of the network, as long as each
airfield-month's rows are together in the file (any file sorted by airfield and month, as
``generate`` writes it; a stray row of another airfield inside one is fine); otherwise
that table is checked whole. Each check lists at most
:data:`MAX_ROWS_PER_CHECK` rows over all blocks and counts the rest, in the same order
whatever the block size.

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
import errno
import os
import re
import stat
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable

import numpy as np
import pandas as pd

from fieldlimits.schemas.tables import FILE_SUFFIXES, TABLES, TableSpec
from fieldlimits.schemas.typeclasses import fill_class_defaults, shown_values

MAX_ROWS_PER_CHECK = 50
"""At most this many rows are listed for one check of one column; the rest are counted."""

VALUE_CHARS = 60
"""A value longer than this (plus a little) is shown cut: its start and its length."""

_MISSING = {"", "nan", "na", "n/a", "null", "none", "#n/a"}
"""Spellings of a blank cell in a number column (any case). Text columns keep them."""
_DECIMAL_COMMA = re.compile(r"^[+-]?\d+,\d+$")
ID_RULE = ("a letter or digit first, then letters, digits, '-', '_' or '.'; no spaces")
"""What :data:`schemas.tables.ID_PATTERN` allows, in words."""

Progress = Callable[[int, int, str], None]
"""``progress(done, total, file)``: bytes of the table files read so far, of all of them."""


def shorten(text: str, limit: int = VALUE_CHARS) -> str:
    """``text``, or its first ``limit`` characters and its length when much longer."""
    text = str(text)
    if len(text) <= limit + 20:
        return text
    return f"{text[:limit]}… ({len(text)} characters)"


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
        The offending value as text (a long one cut, see :func:`shorten`).
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

    def __post_init__(self):
        if self.value is not None:
            self.value = shorten(self.value)

    def __str__(self) -> str:
        where = self.file
        if self.row is not None:
            if self.file.endswith(".csv"):
                where += f", row {self.row} (line {self.row + 1} of the file)"
            else:
                where += f", row {self.row}"
        if self.column:
            where += f", column '{shorten(self.column)}'"
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
    """Result of checking a folder: typed frames (user units), row counts and problems.

    ``frames`` lacks a table that could not be read, or that was checked in blocks
    (``check_folder(frames=False)``); ``rows`` has the data rows of every table read.
    """

    frames: dict[str, pd.DataFrame] = field(default_factory=dict)
    files: dict[str, Path] = field(default_factory=dict)
    problems: list[Problem] = field(default_factory=list)
    rows: dict[str, int] = field(default_factory=dict)

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
        Errors and warnings, file by file, then those across tables (months missing,
        airfields without runways); empty when everything is fine. Never raises for bad
        data (a missing or unreadable folder or file is reported as a problem too).
    """
    return check_folder(path, frames=False).problems


#: Tables read and checked in blocks of whole groups (the group columns whose rows a block
#: keeps together): the one that grows to tens of millions of rows.
STREAMED = {"wind_rose": ("airfield_id", "month")}

_READ_ROWS = 1 << 20
"""Rows read at a time when a table is checked in blocks."""

_WAITING_BLOCKS = 4
"""A table waits at most this many blocks (plus 65 536 rows) for a group to end, then it
is checked whole."""


class BlockSink:
    """Receives the checked blocks of a :data:`STREAMED` table (``check_folder(sink=…)``).

    ``start(name)`` opens each reading of the table (a table read again, whole or as text,
    starts over: what the sink kept of the earlier reading is void); ``block(name, frame)``
    gets each checked block of whole groups in file order (user units, as checked).
    """

    def start(self, name: str) -> None:  # pragma: no cover - interface
        raise NotImplementedError

    def block(self, name: str, frame: pd.DataFrame) -> None:  # pragma: no cover - interface
        raise NotImplementedError


def check_folder(path, *, frames: bool = True, progress: Progress | None = None,
                 sink: BlockSink | None = None) -> FolderCheck:
    """Read and check a folder; return typed frames in user units and the problems.

    Parameters
    ----------
    path : str or Path
        The input folder.
    frames : bool
        True keeps every table's typed frame (what :func:`schemas.load.load_folder`
        needs). False keeps, of the tables of :data:`STREAMED`, only their row counts and
        month coverage: the same problems, in bounded memory. Either way those tables are
        read and checked in blocks of whole groups.
    progress : callable or None
        Called as ``progress(done, total, file)`` (bytes of the table files) after each
        block and table.
    sink : BlockSink or None
        Given, the tables of :data:`STREAMED` are handed to it block by block as they are
        checked and not kept in ``frames`` (bounded memory for a run that writes them out).
    """
    folder = Path(path)
    out = FolderCheck()
    trouble = _folder_trouble(folder)
    if trouble:
        out.problems.append(Problem("error", str(folder), None, None, None,
                                    "a folder of input tables", trouble))
        return out
    for name, spec in TABLES.items():
        located = _locate(folder, spec, out.problems)
        if located is not None:
            out.files[name] = located
    meter = _Meter(progress, out.files)
    coverage: dict[str, pd.DataFrame] = {}
    for name, located in out.files.items():
        streamed = name in STREAMED
        _check_table(name, located, out, coverage, meter,
                     keep=not streamed or (frames and sink is None),
                     sink=sink if streamed else None)
        meter.finished(located)
    _completeness(out, coverage)
    from fieldlimits.schemas import plausibility  # feet for metres inside the ranges: warnings

    plausibility.check(out.frames, {n: p.name for n, p in out.files.items()}, out.problems)
    return out


class _Meter:
    """Bytes read of all table files, for the progress callback."""

    def __init__(self, progress: Progress | None, files: dict[str, Path]):
        self.progress = progress
        self.sizes = {}
        for p in files.values():
            try:
                self.sizes[p] = p.stat().st_size
            except OSError:
                self.sizes[p] = 0
        self.total = sum(self.sizes.values())
        self.done = 0

    def at(self, path: Path, position: int) -> None:
        if self.progress is not None:
            self.progress(self.done + min(position, self.sizes.get(path, 0)), self.total,
                          path.name)

    def finished(self, path: Path) -> None:
        self.done += self.sizes.get(path, 0)
        if self.progress is not None:
            self.progress(self.done, self.total, path.name)


# ---------------------------------------------------------------------------------------
# finding the files

def _folder_trouble(folder: Path) -> str | None:
    """What keeps the input folder from being read, or None."""
    try:
        st = os.stat(folder)
    except OSError as exc:
        if exc.errno == errno.ELOOP:
            return (f"input folder {folder} is a symbolic link that loops back on itself; "
                    "point it at the folder of input tables")
        if os.path.islink(folder):
            return (f"input folder {folder} is a symbolic link to {os.readlink(folder)}, "
                    "which does not exist")
        if exc.errno == errno.ENOENT:
            return "input folder not found"
        return f"input folder {folder} cannot be read ({exc.strerror})"
    if not stat.S_ISDIR(st.st_mode):
        return f"{folder} is a file, not a folder: give the folder that holds the tables"
    try:
        os.listdir(folder)
    except OSError as exc:
        return f"input folder {folder} cannot be listed ({exc.strerror})"
    return None


def _file_trouble(path: Path) -> str | None:
    """What keeps an existing directory entry from being read as a table file, or None."""
    name = path.name
    try:
        st = os.stat(path)  # follows symbolic links
    except OSError as exc:
        if exc.errno == errno.ELOOP:
            return (f"{name} is a symbolic link that loops (it leads back to itself, "
                    "directly or through other links): replace it with the table file or "
                    "a link to it")
        if os.path.islink(path) and exc.errno in (errno.ENOENT, errno.ENOTDIR):
            return (f"{name} is a symbolic link to {os.readlink(path)}, which does not "
                    "exist: point it at the table file or replace it with the file")
        if exc.errno in (errno.EACCES, errno.EPERM):
            return f"{name} cannot be reached: permission denied"
        return f"{name} cannot be read ({exc.strerror})"
    if stat.S_ISDIR(st.st_mode):
        return f"{name} is a folder, not a file: put the table itself under this name"
    if not stat.S_ISREG(st.st_mode):
        return (f"{name} is not a regular file (a pipe, socket or device): put the table "
                "itself under this name")
    try:
        os.close(os.open(path, os.O_RDONLY))
    except OSError as exc:
        if exc.errno in (errno.EACCES, errno.EPERM):
            return (f"{name} cannot be read: permission denied; make it readable for this "
                    "user (e.g. chmod a+r)")
        return f"{name} cannot be opened ({exc.strerror})"
    return None


def _locate(folder: Path, spec: TableSpec, problems: list[Problem]) -> Path | None:
    entries = [folder / f"{spec.name}{s}" for s in FILE_SUFFIXES]
    found = [p for p in entries if os.path.lexists(p)]
    if len(found) > 1:
        problems.append(Problem(
            "error", found[0].name, None, None, None, "one file per table",
            f"both {found[0].name} and {found[1].name} exist; keep only one of them"))
        return None
    if found:
        trouble = _file_trouble(found[0])
        if trouble is None:
            return found[0]
        problems.append(Problem("error", found[0].name, None, None, None,
                                f"a readable {found[0].suffix[1:].upper()} file",
                                trouble))
        return None
    try:
        files = [p for p in sorted(folder.iterdir()) if p.is_file()]
    except OSError:
        files = []
    taken = {f"{t}{s}" for t in TABLES for s in FILE_SUFFIXES}
    near = [p for p in files  # a misspelt name: wind_roses.csv, Runway.csv, route.parquet
            if p.name not in taken and p.suffix.lower() in FILE_SUFFIXES
            and difflib.get_close_matches(p.stem.lower(), [spec.name], n=1, cutoff=0.8)]
    hint = (f"; found {', '.join(p.name for p in near)}: rename it to "
            f"{spec.name}{near[0].suffix.lower()}" if near else "")
    if not spec.required_file:
        if near:
            problems.append(Problem(
                "warning", near[0].name, None, None, None, f"{spec.name}.csv or {spec.name}.parquet",
                f"not read: is it the optional table '{spec.name}'? rename it to "
                f"{spec.name}{near[0].suffix.lower()}"))
        return None
    problems.append(Problem(
        "error", f"{spec.name}.csv", None, None, None,
        f"{spec.name}.csv or {spec.name}.parquet",
        f"required table '{spec.name}' is missing from {folder}{hint}"))
    return None


# ---------------------------------------------------------------------------------------
# problems gathered over the blocks of a table

class _Listing:
    """The problems of one check: the first rows listed, the others counted."""

    __slots__ = ("problems", "more", "more_rows", "summary")

    def __init__(self, summary):
        self.problems: list[Problem] = []
        self.more = 0
        self.more_rows: list[int] = []
        self.summary = summary

    @property
    def room(self) -> int:
        return max(0, MAX_ROWS_PER_CHECK - len(self.problems))

    def count(self, rows) -> None:
        """Count rows beyond the listed ones (the first ten are named in the summary)."""
        rows = np.asarray(rows, dtype=np.int64)
        self.more += int(rows.size)
        if len(self.more_rows) < 10:
            self.more_rows.extend(int(r) for r in rows[:10 - len(self.more_rows)])

    def close(self) -> list[Problem]:
        if self.more and self.summary is not None:
            return [*self.problems, self.summary(self.more, self.more_rows)]
        return self.problems


class _Problems:
    """The problems of one table, gathered check by check over its blocks.

    Each check (severity, file, column, message, expected) keeps its own listing; the
    listings come out in the order the checks first ran. Every check runs on every block,
    with or without findings, so that order is the order of the code and does not depend
    on the block size.
    """

    def __init__(self):
        self._checks: dict = {}

    def listing(self, key, summary=None) -> _Listing:
        found = self._checks.get(key)
        if found is None:
            found = self._checks[key] = _Listing(summary)
        return found

    def append(self, problem: Problem) -> None:
        """A problem of its own (a file or header problem)."""
        self.listing(("single", len(self._checks))).problems.append(problem)

    def extend(self, problems) -> None:
        for p in problems:
            self.append(p)

    def close(self) -> list[Problem]:
        out = []
        for listing in self._checks.values():
            out.extend(listing.close())
        return out


def _rows_summary(severity, file, column, expected):
    def summary(more, rows):
        return Problem(severity, file, None, column, None, expected,
                       f"... and {more} more rows with the same problem "
                       f"(rows {', '.join(map(str, rows))}{', …' if more > 10 else ''})")
    return summary


# ---------------------------------------------------------------------------------------
# reading

class _Unreadable(Exception):
    """The table cannot be used. Raised with a list of problems, those replace what the
    blocks read so far found (a file that cannot be parsed gets only those, as when it is
    read whole); raised bare, the problems are already reported."""


class _NotNumbers(Exception):
    """A number column holds text: read the file again as text to name each bad cell."""


class _NotGrouped(Exception):
    """The rows of some group are not together: the table is checked whole."""


@dataclass
class _Header:
    names: list[str]            # column names, in file order (duplicates included)
    keep: list[int]             # positions of the columns used (first of each name)
    blank: list[str]            # kept columns without a header name


def _check_table(name: str, path: Path, out: FolderCheck, coverage: dict, meter: _Meter,
                 keep: bool, sink: BlockSink | None = None) -> None:
    """Read, convert and check one table; its problems go to ``out.problems``."""
    pre = _Problems()  # problems of the file as a whole, found once
    names = None
    if path.suffix != ".parquet":
        try:
            names = _csv_header(path, pre)
        except _Unreadable:
            out.problems.extend(pre.close())
            return
    blocks = name in STREAMED
    text = False
    while True:
        pr = _Problems()
        if sink is not None:
            sink.start(name)
        try:
            frame, rows, months = _check_table_pass(name, path, names, out, pr, meter,
                                                    blocks, keep, text, sink)
        except _NotNumbers:
            text = True
            continue
        except _NotGrouped:
            blocks = False
            continue
        except _Unreadable as exc:
            if exc.args:
                pr = _Problems()
                pr.extend(exc.args[0])
            frame = rows = months = None
        break
    out.problems.extend(pre.close())
    out.problems.extend(pr.close())
    if rows is None:
        return
    out.rows[name] = rows
    if frame is not None and keep:
        out.frames[name] = frame
    if months is not None:
        coverage[name] = months


def _check_table_pass(name, path, names, out, pr, meter, blocks, keep, text, sink=None):
    """One reading of a table: ``(frame or None, data rows, month coverage or None)``.

    Raises :class:`_NotNumbers` or :class:`_NotGrouped` to ask for another reading (as
    text, or whole), :class:`_Unreadable` when the file cannot be used.
    """
    spec = TABLES[name]
    file = path.name
    size = _READ_ROWS if blocks else None
    if path.suffix == ".parquet":
        names, raw_blocks = _parquet_blocks(path, pr, size, meter)
        empty = "the file has no data rows"
    else:
        raw_blocks = _csv_blocks(path, names, spec, size, text, meter)
        empty = "the file has a header but no data rows"
    groups = _Groups(STREAMED[name]) if blocks else None
    header = None
    typed_blocks, coverage = [], []
    rows = 0
    for raw in raw_blocks:
        if header is None:
            if len(raw) == 0:
                continue
            header = _header_checks(names, spec, file, pr)
        raw = raw.iloc[:, header.keep]
        raw.columns = [names[i] for i in header.keep]
        rows += len(raw)
        typed = _typed_block(raw, spec, file, pr, header)
        del raw
        if groups is None:
            typed_blocks.append(typed)
            continue
        whole = groups.add(typed)
        del typed
        if whole is not None:
            checked, months = _checked_block(name, whole, file, out, pr)
            coverage.append(months)
            if keep:
                typed_blocks.append(checked)
            elif sink is not None:
                sink.block(name, checked)
            del checked
    if header is None:
        pr.append(Problem("error", file, None, None, None, "at least one data row", empty))
        raise _Unreadable
    if groups is not None:
        rest = groups.rest()
        if rest is not None:
            checked, months = _checked_block(name, rest, file, out, pr)
            coverage.append(months)
            if keep:
                typed_blocks.append(checked)
            elif sink is not None:
                sink.block(name, checked)
            del checked
        months = pd.concat(coverage, ignore_index=True).drop_duplicates()
        return (_join_blocks(typed_blocks) if keep else None), rows, months
    frame = typed_blocks[0] if len(typed_blocks) == 1 else pd.concat(typed_blocks)
    del typed_blocks
    frame = _table_checks(name, frame, file, out, pr)
    months = _month_pairs(frame) if name in _MONTHLY else None
    if sink is not None and not keep:  # a streamed table read whole: one block
        sink.block(name, frame)
        return None, rows, months
    return frame, rows, months


_MONTHLY = ("climate_monthly", "wind_rose")


def _checked_block(name, df, file, out, pr):
    """Check a block of whole groups; return it (as checked) and its month coverage."""
    df = _table_checks(name, df, file, out, pr)
    return df, _month_pairs(df)


def _join_blocks(parts: list[pd.DataFrame]) -> pd.DataFrame:
    """One frame of blocks, column by column (each block's column freed once copied)."""
    if len(parts) == 1:
        return parts[0]
    out = pd.DataFrame(index=pd.Index(np.concatenate([p.index.to_numpy() for p in parts])))
    for c in list(parts[0].columns):
        dtype = parts[0][c].dtype
        out[c] = pd.Series(np.concatenate([p[c].to_numpy() for p in parts]), index=out.index,
                           dtype=dtype, copy=False)
        for p in parts:
            del p[c]
    return out


class _Groups:
    """Cuts typed blocks, read in file order, into blocks of whole groups.

    A group is one value of the group columns (an airfield-month); rows with a blank group
    column belong to none. A block ends where no group before the cut has rows after it
    (a stray row of another group inside a group is fine); what follows the last such cut
    waits for the next block. Raises :class:`_NotGrouped` when a group's rows turn out to
    be in two blocks, or when no cut is found in :data:`_WAITING_BLOCKS` blocks.
    """

    def __init__(self, columns: tuple[str, str]):
        self.columns = columns
        self.pending: pd.DataFrame | None = None
        self.ids: dict = {}
        self.closed: set[int] = set()

    def _keys(self, df: pd.DataFrame):
        """Positions of the rows in a group and one int key per such row."""
        ident, month = (df[c] for c in self.columns)
        m = month.to_numpy(dtype=float)
        valid = ident.notna().to_numpy() & ~np.isnan(m)
        pos = np.flatnonzero(valid)
        codes, uniq = pd.factorize(ident.iloc[pos])
        ids = self.ids
        gid = np.fromiter((ids.setdefault(u, len(ids)) for u in uniq), dtype=np.int64,
                          count=len(uniq))
        m = m[pos]
        whole = (m >= 1) & (m <= 12) & (m == np.round(m))
        # months outside 1 … 12 share code 13: a mix-up only makes the check read whole
        mcode = np.where(whole, m, 13).astype(np.int64)
        return pos, gid[codes] * 16 + mcode

    def _close(self, keys: np.ndarray) -> None:
        done = set(np.unique(keys).tolist())
        if not self.closed.isdisjoint(done):
            raise _NotGrouped
        self.closed |= done

    def add(self, typed: pd.DataFrame) -> pd.DataFrame | None:
        df = typed if self.pending is None else pd.concat([self.pending, typed])
        pos, keys = self._keys(df)
        if keys.size == 0:
            self.pending = None
            return df
        code, uniq = pd.factorize(keys)
        last = np.full(uniq.size, -1, dtype=np.int64)
        np.maximum.at(last, code, np.arange(code.size, dtype=np.int64))
        reach = np.maximum.accumulate(last[code])  # last row of any group begun so far
        # a cut before keyed row s keeps every group whole when reach[s - 1] == s - 1
        cuts = np.flatnonzero(reach[:-1] == np.arange(code.size - 1)) + 1
        if cuts.size == 0:
            if len(df) > _WAITING_BLOCKS * _READ_ROWS + 65536:
                raise _NotGrouped
            self.pending = df
            return None
        s = int(cuts[-1])
        self._close(keys[:s])
        cut = int(pos[s])
        self.pending = df.iloc[cut:]
        return df.iloc[:cut]

    def rest(self) -> pd.DataFrame | None:
        df, self.pending = self.pending, None
        if df is None or len(df) == 0:
            return None
        pos, keys = self._keys(df)
        self._close(keys)
        return df


def _header_checks(names: list[str], spec: TableSpec, file: str, pr: _Problems) -> _Header:
    """Duplicate, unknown and missing columns; raises :class:`_Unreadable` when a required
    column is missing."""
    seen: set[str] = set()
    keep = []
    for i, c in enumerate(names):
        if c in seen:
            pr.append(Problem("error", file, None, c, None, "each column once",
                              f"column '{shorten(c)}' appears more than once in the header; "
                              "keep one"))
            continue
        seen.add(c)
        keep.append(i)
    known = set(spec.names)
    blank = []
    for i in keep:
        c = names[i]
        if c in known:
            continue
        if c.startswith("Unnamed:") or c == "":
            blank.append(c)
            pr.listing(("blank column", c))  # its place in the listing; filled if it holds values
            continue
        guess = difflib.get_close_matches(c, spec.names, n=1, cutoff=0.6)
        hint = f"; did you mean '{guess[0]}'?" if guess else ""
        if c.lower().endswith("_ft"):
            hint += " Give lengths in metres (ft × 0.3048) in the '_m' column."
        if c.lower().endswith("_f"):
            hint += " Give temperatures in °C ((°F − 32) × 5/9) in the '_c' column."
        pr.append(Problem("warning", file, None, c, None,
                          ", ".join(spec.names), f"unknown column, ignored{hint}"))
    present = {names[i] for i in keep}
    missing = [c for c in spec.columns if c.required and c.name not in present]
    for c in missing:
        pr.append(Problem("error", file, None, c.name, None, c.description,
                          f"required column '{c.name}' is missing"))
    if missing:
        raise _Unreadable
    return _Header(names, keep, blank)


def _typed_block(raw: pd.DataFrame, spec: TableSpec, file: str, pr: _Problems,
                 header: _Header) -> pd.DataFrame:
    """The table's columns, converted (user units), of one block of raw rows."""
    for c in header.blank:
        listing = pr.listing(("blank column", c))
        if not listing.problems and (_as_text(raw[c]) != "").any():
            listing.problems.append(Problem(
                "warning", file, None, c or "(blank)", None, None,
                "a column without a header holds values; it is ignored"))
    out = pd.DataFrame(index=raw.index)  # column by column: no 2-D copy of a large block
    for col in spec.columns:
        if col.name in raw.columns:
            series = raw[col.name]
        else:
            series = pd.Series([None] * len(raw), index=raw.index, dtype=object)
        out[col.name] = _convert_column(series, col, file, pr)
    return out


def _parquet_blocks(path: Path, pr: _Problems, size: int | None, meter: _Meter):
    """Column names and a generator of raw blocks (all of them at once when size is None)."""
    import pyarrow.parquet as pq

    try:
        pf = pq.ParquetFile(path)
        schema = pf.schema_arrow
        index_cols = (schema.pandas_metadata or {}).get("index_columns", [])
        names = [n for n in schema.names if n not in index_cols]
        n_rows = pf.metadata.num_rows
    except Exception as exc:  # any reader failure is a problem for the user, not a crash
        pr.append(_parquet_problem(path, exc))
        raise _Unreadable from None

    def blocks():
        start = 0
        try:
            if size is None:
                parts = [pf.read(columns=names)]
            else:
                parts = pf.iter_batches(batch_size=size, columns=names)
            for part in parts:
                df = part.to_pandas()
                df.columns = list(range(len(names)))
                df.index = pd.RangeIndex(start, start + len(df))
                start += len(df)
                yield df
                meter.at(path, int(meter.sizes.get(path, 0) * start / max(n_rows, 1)))
        except Exception as exc:
            raise _Unreadable([_parquet_problem(path, exc)]) from None

    return [str(n).strip() for n in names], blocks()


def _parquet_problem(path: Path, exc: Exception) -> Problem:
    return Problem("error", path.name, None, None, None, "a Parquet file",
                   f"cannot read the file as Parquet ({type(exc).__name__}: "
                   f"{shorten(exc, 200)})")


_SCAN_BYTES = 1 << 24
_MAGIC = {b"PK\x03\x04": "an Excel workbook or other zip archive",
          b"PAR1": "a Parquet file", b"\xd0\xcf\x11\xe0": "an old Excel workbook"}


def _csv_header(path: Path, pr: _Problems) -> list[str]:
    """Check that a file is comma-separated UTF-8 text; return its header's column names.

    Reads the file once in pieces of :data:`_SCAN_BYTES` (never the whole file at once).
    Raises :class:`_Unreadable` after reporting what is wrong.
    """
    name = path.name

    def fail(message, expected, value=None, row=None):
        pr.append(Problem("error", name, row, None, value, expected, message))
        raise _Unreadable

    try:
        with open(path, "rb") as fh:
            piece = fh.read(_SCAN_BYTES)
            first = piece
            for head, what in _MAGIC.items():
                if piece.startswith(head):
                    fail(f"the file is {what}, not CSV text; export it as "
                         "'CSV UTF-8 (comma delimited)'", "comma-separated UTF-8 text")
            if piece.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
                fail("the file is encoded as UTF-16; save it as 'CSV UTF-8'", "UTF-8 text")
            decoder = codecs.getincrementaldecoder("utf-8")()
            if piece.startswith(codecs.BOM_UTF8):
                piece = piece[len(codecs.BOM_UTF8):]
            lines = 0
            blank = True
            while piece:
                if blank and piece.strip():
                    blank = False
                if piece.find(b"\x00") >= 0:
                    fail("the file contains NUL bytes: it is binary, not CSV text", "CSV text")
                held = decoder.getstate()[0]
                if held or not piece.isascii():
                    try:
                        decoder.decode(piece)
                    except UnicodeDecodeError as exc:
                        _encoding_problem(name, held + piece, exc.start, lines, pr)
                        raise _Unreadable from None
                lines += piece.count(b"\n")
                piece = fh.read(_SCAN_BYTES)
            try:
                decoder.decode(b"", final=True)
            except UnicodeDecodeError as exc:
                _encoding_problem(name, decoder.getstate()[0], exc.start, lines, pr)
                raise _Unreadable from None
    except OSError as exc:
        fail(f"the file cannot be read ({exc.strerror or exc})", "a readable file")
    if blank:
        fail("the file is empty", "a header line and data rows")
    text = first.split(b"\n", 1)[0].decode("utf-8-sig", errors="replace").rstrip("\r")
    if "," not in text and (";" in text or "\t" in text):
        sep = "';'" if ";" in text else "tabs"
        fail(f"the columns are separated by {sep}; save the file with commas",
             "comma-separated columns", value=text[:80])
    try:
        header = next(csv.reader([text]))
    except (csv.Error, StopIteration) as exc:
        fail(f"the header line is not valid CSV ({exc})", "a CSV header line", value=text[:80])
    return [h.strip() for h in header]


def _encoding_problem(name, data: bytes, start: int, lines_before: int, pr) -> None:
    line = lines_before + data[:start].count(b"\n") + 1
    try:
        data.decode("cp1252")
        guess = "it looks like Windows-1252 / Latin-1"
    except UnicodeDecodeError:
        guess = "the encoding is unknown"
    pr.append(Problem(
        "error", name, line - 1 if line > 1 else None, None,
        f"byte 0x{data[start]:02x}" if start < len(data) else "a cut-off character",
        "UTF-8 text",
        f"the file is not UTF-8 (first invalid byte on line {line}; {guess}); "
        "save it as 'CSV UTF-8'"))


_NA_VALUES = sorted({v for m in _MISSING for v in (m, m.upper(), m.capitalize())}
                    | {"NaN", "N/A", "#N/A"})


def _csv_blocks(path: Path, names: list[str], spec: TableSpec, size: int | None, text: bool,
                meter: _Meter):
    """Raw blocks of a CSV file (index: 0-based data row), blank lines dropped.

    Numbers are parsed as numbers directly (``text=False``) and text columns kept as
    written; a number column holding text raises :class:`_NotNumbers` so that the file is
    read again as text, where each bad cell is found and named.
    """
    known = {c.name: c for c in spec.columns}
    numeric = [i for i, n in enumerate(names) if n in known and known[n].dtype != "str"]
    kw = dict(header=0, names=list(range(len(names))), skip_blank_lines=False,
              engine="c", encoding="utf-8-sig")
    if text:
        kw.update(dtype=str, keep_default_na=False, na_filter=False)
    else:
        kw.update(dtype={i: (float if i in numeric else str) for i in range(len(names))},
                  keep_default_na=False, na_values={i: _NA_VALUES for i in numeric})
    try:
        if size is None:
            parts = [pd.read_csv(path, **kw)]
            fh = None
        else:
            fh = open(path, "rb")
            parts = pd.read_csv(fh, chunksize=size, **kw)
        try:
            for df in parts:
                if df.shape[1] != len(names):  # pragma: no cover - defensive
                    raise pd.errors.ParserError("field count differs from the header")
                blank = (df.isna() | (df == "")).all(axis=1).to_numpy()
                if blank.any():
                    df = df[~blank]
                yield df
                if fh is not None:
                    meter.at(path, fh.tell())
        finally:
            if fh is not None:
                fh.close()
    except (pd.errors.ParserError, csv.Error) as exc:
        raise _Unreadable(_csv_error(path, len(names), exc)) from None
    except pd.errors.EmptyDataError:
        return
    except ValueError as exc:
        if not text:
            raise _NotNumbers from None
        raise _Unreadable(_csv_error(path, len(names), exc)) from None
    except OSError as exc:
        raise _Unreadable([Problem("error", path.name, None, None, None, "a readable file",
                                   f"the file cannot be read ({exc.strerror or exc})")]
                          ) from None


def _csv_error(path: Path, n_header: int, exc) -> list[Problem]:
    found: list[Problem] = []
    _locate_csv_error(path, n_header, found, exc)
    return found


def _locate_csv_error(path: Path, n_header, problems, exc) -> None:
    """Find the lines whose field count differs from the header (only on the error path)."""
    name = path.name
    found = 0
    try:
        with open(path, encoding="utf-8-sig", newline="") as fh:
            for i, fields in enumerate(csv.reader(fh, strict=True)):
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
                                f"the file is not valid CSV ({shorten(exc, 200)})"))
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
    """List the masked rows (at most MAX_ROWS_PER_CHECK per check, the rest counted).

    ``problems`` is the table's :class:`_Problems` (the listing goes on over its blocks)
    or a plain list (this call is the whole check: summary at once).
    """
    if not isinstance(problems, _Problems):
        one = _Problems()
        _report(one, severity, file, frame_index, mask, column, values, expected, message,
                hint)
        problems.extend(one.close())
        return
    listing = problems.listing((severity, file, column, message, expected),
                               _rows_summary(severity, file, column, expected))
    mask = np.asarray(mask, dtype=bool)
    if not mask.any():
        return
    at = np.flatnonzero(mask)
    rows = _rows(frame_index)[at]
    room = listing.room
    shown = at[:room]
    vals = np.asarray(values.iloc[shown] if isinstance(values, pd.Series)
                      else np.asarray(values)[shown], dtype=object)
    for r, v in zip(rows[:room], vals):
        msg = message
        if hint is not None:
            h = hint(v)
            if h:
                msg = f"{message}; {h}"
        listing.problems.append(Problem(severity, file, int(r), column, _text(v), expected,
                                        msg))
    if rows.size > room:
        listing.count(rows[room:])


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


def _convert_column(series: pd.Series, col, file, problems) -> pd.Series:
    idx = series.index
    if col.dtype == "str":
        # work on the distinct values (an id column repeats a few thousand values)
        codes, uniq = pd.factorize(series if pd.api.types.is_string_dtype(series)
                                   else series.astype(object), use_na_sentinel=False)
        utext = _as_text(pd.Series(uniq, dtype=object))
        ublank = (utext == "").to_numpy()  # 'NA', 'null', 'None' are text like any other
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
                    ID_RULE,
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


_TABLE_CHECKS = {}  # table name -> its checks across columns (filled below)


def _table_checks(name: str, df: pd.DataFrame, file: str, check: FolderCheck,
                  pr) -> pd.DataFrame:
    """Keys, the table's own rules and its references, on the whole table or on a block
    of whole groups; returns the frame (the wind rose with shares for percentages)."""
    _duplicate_keys(df, TABLES[name], file, pr)
    rule = _TABLE_CHECKS.get(name)
    if rule is not None:
        checked = rule(df, file, pr)
        if checked is not None:
            df = checked
    for fk in TABLES[name].foreign_keys:
        ref = check.frames.get(fk.ref_table)
        if ref is None:
            continue
        if len(fk.columns) > 1:
            _composite_reference(df, fk, ref, file, _fname(check, fk.ref_table), pr)
            continue
        col, refcol = fk.columns[0], fk.ref_columns[0]
        vals = df[col]
        known = ref[refcol].dropna()
        bad = vals.notna().to_numpy() & ~vals.isin(set(known)).to_numpy()
        _report(pr, "error", file, df.index, bad, col, vals,
                f"an {refcol} listed in {_fname(check, fk.ref_table)}",
                f"refers to an unknown {fk.ref_table.rstrip('s').replace('_', ' ')}",
                hint=lambda v, r=known: _suggest(v, r.tolist()))
    return df


def _month_pairs(df: pd.DataFrame) -> pd.DataFrame:
    """The distinct (airfield_id, month) pairs with a month 1 … 12."""
    months = df[["airfield_id", "month"]].dropna()
    return months[(months["month"] >= 1) & (months["month"] <= 12)].drop_duplicates()


def _completeness(check: FolderCheck, coverage: dict) -> None:
    """Checks across tables: every airfield's twelve months, and a runway."""
    f = check.frames
    pr = check.problems
    if "airfields" not in f:
        return
    af = f["airfields"]
    for table in ("climate_monthly", "wind_rose"):
        if table in coverage:
            _months_complete(af, coverage[table], table, _fname(check, table),
                             _fname(check, "airfields"), pr)
    if "runways" in f:
        ids = af["airfield_id"].dropna()
        has = ids.isin(set(f["runways"]["airfield_id"].dropna())).to_numpy()
        _report(pr, "warning", _fname(check, "airfields"), ids.index, ~has, "airfield_id",
                ids, "at least one row in runways",
                "airfield has no runway: it gets no results")


def _suggest(v, candidates) -> str | None:
    guess = difflib.get_close_matches(str(v), candidates, n=1, cutoff=0.75)
    return f"did you mean '{shorten(guess[0])}'?" if guess else None


def _duplicate_keys(df, spec: TableSpec, file, pr) -> None:
    key = list(spec.key)
    if not isinstance(pr, _Problems):
        one = _Problems()
        _duplicate_keys(df, spec, file, one)
        pr.extend(one.close())
        return
    listing = pr.listing(("duplicate key", file), lambda more, rows: Problem(
        "error", file, None, key[-1], None, None, f"... and {more} more duplicate keys"))
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
    room = listing.room
    texts = [", ".join(_text(v) or "(blank)" for v in row)
             for row in sub[key][dup].head(room).itertuples(index=False)]
    for r, fr, t in zip(rows[:room], firsts[:room], texts):
        listing.problems.append(Problem("error", file, int(r), key[-1], t,
                                        f"a unique ({', '.join(key)})",
                                        f"duplicate key: the same ({', '.join(key)}) is on "
                                        f"row {int(fr)}"))
    if rows.size > room:
        listing.count(rows[room:])


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
                          "°C", f"the temperatures of airfield '{shorten(afid)}' look like "
                          "°F: convert with (°F − 32) × 5/9"))
    for afid in list(fahr_warm)[:MAX_ROWS_PER_CHECK]:
        pr.append(Problem("warning", file, int(first_row[afid]), "mean_daily_max_c", str(afid),
                          "°C", f"every month of airfield '{shorten(afid)}' is at least 30 "
                          f"with an annual mean of {stats.loc[afid, 'mean']:.1f}: are these °F?"))


def _months_complete(af, months, table, file, af_file, pr) -> None:
    """``months``: the table's distinct (airfield_id, month) pairs (:func:`_month_pairs`)."""
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
                              f"airfield '{shorten(afid)}' (row {i + 1} of {af_file}) has "
                              "no rows"))
        else:
            got = set(months.loc[months["airfield_id"] == afid, "month"].astype(int))
            miss = sorted(set(range(1, 13)) - got)
            pr.append(Problem("error", file, None, "month", str(afid),
                              "months 1 … 12 for every airfield",
                              f"airfield '{shorten(afid)}' is missing month(s) "
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
    # rows without an airfield or month belong to no airfield-month: never percentages
    pct = valid_grp & (np.abs(sums - 100.0) <= 1.0)
    freq = df["frequency"].to_numpy().copy()
    freq[pct] = freq[pct] / 100.0
    counted = pr.listing(("percentages", file), lambda more, rows: Problem(
        "warning", file, None, "frequency", None, "shares summing to 1",
        f"frequencies of {more} airfield-month(s) sum to 100: read as percentages and "
        "converted to shares"))
    if pct.any():
        counted.more += int(np.unique(am[pct]).size)
    with np.errstate(invalid="ignore"):
        _report(pr, "error", file, idx, (freq > 1.0) & ~pct & valid_grp, "frequency", freq,
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
    listing = pr.listing(("missing sectors", file), lambda more, rows: Problem(
        "error", file, None, "direction_deg", None, None,
        f"... and {more} more speed classes with missing sectors"))
    if short.any():
        sub = df.iloc[p[short]]
        groups = sub.groupby(["airfield_id", "month", "speed_low_mps", "speed_high_mps"],
                             sort=False)
        room = listing.room
        if groups.ngroups > room:
            listing.more += groups.ngroups - room
        for n, ((a, m, slo, shi), g) in enumerate(groups):
            if n >= room:
                break
            wid = g["sector_width_deg"].iloc[0]
            base = g["direction_deg"].min() % wid
            full = {round((base + j * wid) % 360.0, 6) for j in range(int(round(360 / wid)))}
            have = {round(x % 360.0, 6) for x in g["direction_deg"]}
            miss = sorted(full - have)
            listing.problems.append(Problem(
                "error", file, int(g.index.min()) + 1, "direction_deg",
                None, f"{int(round(360 / wid))} sectors of {wid:g}° in every speed class",
                f"airfield '{shorten(a)}' month {int(m)} speed class {slo:g}–{shi:g} m/s "
                f"misses sector(s) {', '.join(f'{x:g}' for x in miss[:12])}"
                f"{' …' if len(miss) > 12 else ''} (the row is the class's first)"))


def _speed_classes(df, p, am_all, file, pr) -> None:
    """Speed-class checks on rows ``p`` (positions in ``df``) with an airfield and month."""
    lo_all, hi_all = df["speed_low_mps"].to_numpy(), df["speed_high_mps"].to_numpy()
    p = p[~np.isnan(lo_all[p]) & ~np.isnan(hi_all[p])]
    calm = np.isnan(df["direction_deg"].to_numpy()[p])
    # first row of each (airfield, month, speed class) among the non-calm rows
    q = p[~calm]
    parts = [np.empty(0, dtype=np.int64)]
    for rows, am, _ in _group_blocks(q, am_all):
        cls = _group_code(am, lo_all[rows], hi_all[rows])
        parts.append(rows[_first_position(cls, rows) == rows])
    firsts = np.sort(np.concatenate(parts))
    del parts
    key = ["airfield_id", "month", "speed_low_mps", "speed_high_mps"]
    classes = df.iloc[firsts][key].sort_values(key)
    prev_hi = classes.groupby(["airfield_id", "month"])["speed_high_mps"].shift().to_numpy()
    lo = classes["speed_low_mps"].to_numpy()
    with np.errstate(invalid="ignore"):
        overlap = lo < prev_hi - 1e-9
        gap = lo > prev_hi + 1e-9
    # reported in row order, like every other check (and so whatever the block size)
    order = np.argsort(classes.index.to_numpy(), kind="stable")
    _report(pr, "error", file, classes.index[order], overlap[order], "speed_low_mps",
            lo[order], "speed classes that do not overlap",
            "speed class overlaps the class below it in the same airfield and month")
    _report(pr, "warning", file, classes.index[order], gap[order], "speed_low_mps",
            lo[order], "contiguous speed classes",
            "gap between this speed class and the one below it")
    lowest = classes.groupby(["airfield_id", "month"])["speed_low_mps"].min()
    calms = df.iloc[p[calm]]
    bad = np.zeros(len(calms), dtype=bool)
    if not calms.empty and not lowest.empty:
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
    from fieldlimits.schemas import departure

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
    from fieldlimits.physics.flightpath import OBSTACLE_CLEARANCE_M, PATH_END_HEIGHT_M

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


_TABLE_CHECKS.update(airfields=_airfield_checks, runways=_runway_checks,
                     climate_monthly=_climate_checks, wind_rose=_wind_rose_checks,
                     aircraft_types=_aircraft_checks, routes=_route_checks,
                     reference_points=_reference_point_checks, obstacles=_obstacle_checks)
