"""Read and validate an input folder through :mod:`schemas`; hashes and provenance.

All checking is :mod:`schemas`' job; this module only turns its answer into what the
pipeline needs: the validated SI tables, which file each came from, a SHA-256 per table and
one over all of them, or a :class:`~pipeline.errors.BadInput` listing every problem.
"""

from __future__ import annotations

import hashlib
import os
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from fieldlimits.pipeline.errors import BadInput

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


def load_inputs(folder: str | os.PathLike) -> Inputs:
    """Validate and load an input folder; raise :class:`BadInput` listing every error."""
    from fieldlimits.schemas import hashing
    from fieldlimits.schemas.load import load_folder
    from fieldlimits.schemas.validate import InputError

    path = Path(folder).resolve()
    try:
        tables = load_folder(path)
    except InputError as exc:
        raise BadInput(problem_text(exc.problems)) from None
    si = {name: tables[name] for name in tables}
    user = dict(tables.user) if getattr(tables, "user", None) else si
    files = {name: str(tables.files[name]) if name in getattr(tables, "files", {}) else None
             for name in si}
    return Inputs(folder=path, tables=si, user_tables=user, files=files,
                  hashes=hashing.table_hashes(tables), warnings=list(getattr(tables, "warnings", [])))
