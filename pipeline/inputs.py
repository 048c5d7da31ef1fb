"""Read and validate an input folder through :mod:`schemas`; hashes and provenance.

All checking is :mod:`schemas`' job; this module only turns its answer into what the
pipeline needs: the validated SI tables, which file each came from, a SHA-256 per table and
one over all of them, or a :class:`~pipeline.errors.BadInput` listing every problem.
"""

from __future__ import annotations

import hashlib
import os
import shutil
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from fieldlimits.pipeline.errors import BadInput
from fieldlimits.schemas.load import TableStream

#: Sub-folders of a spool (and of a run's work folder): user-unit copies of the input
#: tables (what the store reads) and the SI tables (what the chunk tasks read).
SPOOL_USER, SPOOL_SI = "inputs", "tables"

@dataclass
class Inputs:
    """The validated input tables of one folder."""

    folder: Path
    tables: dict[str, pd.DataFrame]          # SI frames (what the physics gets)
    user_tables: dict[str, pd.DataFrame]     # user units (what a run stores as its inputs)
    files: dict[str, str | None]
    hashes: dict[str, str]
    warnings: list = field(default_factory=list)
    released: tuple = ()                     # tables whose frames were dropped (release)
    spool: Path | None = None                # streamed tables' Parquet files (load_inputs)
    group_digests: dict = field(default_factory=dict)  # streamed tables' per-airfield digests

    def release(self, name: str) -> None:
        """Drop table ``name``'s frames (SI and user units) once they are on disk for the run
        (the work folder's Parquet copies); later steps read those."""
        self.tables[name] = None
        self.user_tables[name] = None
        self.released = (*self.released, name)

    @property
    def input_hash(self) -> str:
        h = hashlib.sha256()
        for name in sorted(self.hashes):
            h.update(f"{name}={self.hashes[name]};".encode())
        return h.hexdigest()


def problem_text(problems) -> str:
    """All errors (then warnings) of a check, one per line, with a head line."""
    errors = [p for p in problems if getattr(p, "severity", "error") == "error"]
    warnings = [p for p in problems if getattr(p, "severity", "error") != "error"]
    head = (f"{len(errors)} error{'s' if len(errors) != 1 else ''} in the input tables; "
            "fix them and run again:")
    return "\n".join([head] + [f"  {p}" for p in errors] + [f"  {p}" for p in warnings])


def check_folder(folder: str | os.PathLike) -> list:
    """Every problem in an input folder (errors and warnings), via :mod:`schemas.validate`."""
    return list(check_inputs(folder).problems)


def check_inputs(folder: str | os.PathLike, progress=None):
    """Check an input folder without loading it (``schemas.validate.FolderCheck``: the
    problems and each table's row count); the wind rose is read in blocks, so memory stays
    bounded. ``progress(done, total, file)`` is called as the table files are read."""
    from fieldlimits.schemas.validate import check_folder as check

    return check(Path(folder), frames=False, progress=progress)


def errors_only(problems) -> list:
    return [p for p in problems if getattr(p, "severity", "error") == "error"]


def _same_in_si(name: str) -> bool:
    """The table's SI frame is its user-unit frame (no column renamed or converted)."""
    from fieldlimits.schemas.tables import TABLES

    return all(c.target == c.name and c.si_scale == 1.0 and c.si_offset == 0.0
               for c in TABLES[name].columns)


class _Spool(TableStream):
    """Writes the streamed tables, block by block as they are checked, to Parquet in a spool
    folder (``inputs/<table>.parquet`` in user units, ``tables/<table>.parquet`` in SI: the
    files a run's work folder holds) and hashes them on the way (``schemas.hashing``)."""

    def __init__(self, folder: Path):
        self.folder = folder
        self.writers: dict = {}  # name -> [user writer, SI writer or None]
        self.hashers: dict = {}

    def paths(self, name: str) -> tuple[Path, Path]:
        return (self.folder / SPOOL_USER / f"{name}.parquet",
                self.folder / SPOOL_SI / f"{name}.parquet")

    def start(self, name: str) -> None:
        from fieldlimits.schemas import hashing
        from fieldlimits.schemas.validate import STREAMED

        self._close(name)
        for p in self.paths(name):
            p.parent.mkdir(parents=True, exist_ok=True)
            p.unlink(missing_ok=True)
        self.hashers[name] = hashing.StreamedHashes(name, STREAMED[name])

    def block(self, name: str, user: pd.DataFrame, si: pd.DataFrame) -> None:
        import pyarrow as pa
        import pyarrow.parquet as pq

        w = self.writers.get(name)
        if w is None:
            tu = pa.Table.from_pandas(user, preserve_index=False)
            user_path, si_path = self.paths(name)
            w = self.writers[name] = [pq.ParquetWriter(user_path, tu.schema), None]
            if not _same_in_si(name):
                w[1] = pq.ParquetWriter(si_path, pa.Table.from_pandas(si, preserve_index=False).schema)
        else:
            tu = pa.Table.from_pandas(user, preserve_index=False, schema=w[0].schema)
        w[0].write_table(tu)
        del tu
        if w[1] is not None:
            w[1].write_table(pa.Table.from_pandas(si, preserve_index=False, schema=w[1].schema))
        self.hashers[name].add(user)

    def _close(self, name: str) -> None:
        w = self.writers.pop(name, None)
        if w is not None:
            w[0].close()
            if w[1] is not None:
                w[1].close()

    def finish(self, name: str) -> tuple[str, dict]:
        """Close the table's files; its table hash and per-airfield digests."""
        from fieldlimits.schemas import hashing

        w = self.writers.get(name)
        self._close(name)
        user_path, si_path = self.paths(name)
        if w is not None and w[1] is None:  # SI = user units: one file under both names
            try:
                os.link(user_path, si_path)
            except OSError:
                shutil.copyfile(user_path, si_path)
        h = self.hashers[name]
        if h.ordered and h.groups_ok:
            return h.table_hash(), h.group_digests()
        # blocks out of key order: hash the whole table once from its Parquet copy
        frame = pd.read_parquet(user_path)
        return (hashing.frame_hash(frame, name),
                hashing._group_hashes(frame, name, TABLE_GROUP_KEY))

    def discard(self) -> None:
        for name in list(self.writers):
            self._close(name)
        shutil.rmtree(self.folder, ignore_errors=True)


TABLE_GROUP_KEY = "airfield_id"


def load_inputs(folder: str | os.PathLike, spool: str | os.PathLike | None = None) -> Inputs:
    """Validate and load an input folder; raise :class:`BadInput` listing every error.

    ``spool`` (a folder, created): the large tables (the wind rose) are not held in memory
    but written there block by block as they are checked, as Parquet in user units
    (``inputs/``) and SI (``tables/``); their frames in the result are None (``released``)
    and their hashes are computed on the way. Without it every table is held.
    """
    from fieldlimits.schemas import hashing
    from fieldlimits.schemas.load import load_folder
    from fieldlimits.schemas.tables import TABLES
    from fieldlimits.schemas.validate import InputError

    path = Path(folder).resolve()
    sink = _Spool(Path(spool)) if spool is not None else None
    try:
        tables = load_folder(path, stream=sink)
    except InputError as exc:
        sink and sink.discard()
        raise BadInput(problem_text(exc.problems)) from None
    except BaseException:
        sink and sink.discard()
        raise
    si = {name: tables[name] for name in tables}
    user = dict(tables.user) if getattr(tables, "user", None) else si
    files = {name: str(tables.files[name]) if name in getattr(tables, "files", {}) else None
             for name in si}
    hashes = hashing.table_hashes(tables)
    digests = {}
    streamed = tuple(getattr(tables, "streamed", ()))
    try:
        for name in streamed:
            hashes[name], digests[name] = sink.finish(name)
    except BaseException:
        sink.discard()
        raise
    hashes = {name: hashes[name] for name in TABLES if name in hashes}
    return Inputs(folder=path, tables=si, user_tables=user, files=files, hashes=hashes,
                  warnings=list(getattr(tables, "warnings", [])), released=streamed,
                  spool=Path(spool) if streamed else None, group_digests=digests)
