"""Read and validate an input folder through :mod:`schemas`; hashes and provenance.

All checking is :mod:`schemas`' job; this module only turns its answer into what the
pipeline needs: the validated SI tables, which file each came from, a SHA-256 per table and
one over all of them, or a :class:`~pipeline.errors.BadInput` listing every problem.
"""

from __future__ import annotations

import hashlib
import os
from dataclasses import dataclass
from pathlib import Path

import pandas as pd

from pipeline.errors import BadInput

SUFFIXES = (".csv", ".parquet")


@dataclass
class Inputs:
    """The validated input tables of one folder."""

    folder: Path
    tables: dict[str, pd.DataFrame]
    files: dict[str, str | None]
    hashes: dict[str, str]

    @property
    def input_hash(self) -> str:
        h = hashlib.sha256()
        for name in sorted(self.hashes):
            h.update(f"{name}={self.hashes[name]};".encode())
        return h.hexdigest()


def frame_sha256(frame: pd.DataFrame) -> str:
    """SHA-256 of a table's content (columns, dtypes and values, row order included)."""
    try:
        from schemas import hashing

        func = getattr(hashing, "frame_sha256", None) or getattr(hashing, "table_hash", None)
        if func is not None:
            return str(func(frame))
    except ImportError:
        pass
    h = hashlib.sha256()
    h.update(repr([(str(c), str(t)) for c, t in frame.dtypes.items()]).encode())
    h.update(pd.util.hash_pandas_object(frame, index=False).to_numpy().tobytes())
    return h.hexdigest()


def _problem_text(problems) -> str:
    lines = [str(p) for p in problems]
    head = f"the input has {len(lines)} problem{'s' if len(lines) != 1 else ''} to fix:"
    return "\n".join([head] + [f"  - {line}" for line in lines])


def _errors_only(problems):
    """Problems that block a run (warnings, if schemas marks them, do not)."""
    out = []
    for p in problems:
        level = getattr(p, "severity", None) or getattr(p, "level", None) or "error"
        if str(level).lower() not in ("warning", "warn", "info"):
            out.append(p)
    return out


def check_folder(folder: str | os.PathLike) -> list:
    """Every problem in an input folder (errors and warnings), via :mod:`schemas.validate`."""
    from schemas.validate import validate_folder

    path = Path(folder)
    if not path.is_dir():
        raise BadInput(f"input folder {path} does not exist or is not a folder")
    return list(validate_folder(path))


def load_inputs(folder: str | os.PathLike) -> Inputs:
    """Validate and load an input folder; raise :class:`BadInput` listing every error."""
    from schemas.load import load_folder
    from schemas.validate import InputError

    path = Path(folder).resolve()
    problems = _errors_only(check_folder(path))
    if problems:
        raise BadInput(_problem_text(problems))
    try:
        tables = dict(load_folder(path))
    except InputError as exc:
        problems = getattr(exc, "problems", None)
        raise BadInput(_problem_text(problems) if problems else str(exc)) from None
    files = {}
    for name in tables:
        found = [path / f"{name}{s}" for s in SUFFIXES if (path / f"{name}{s}").exists()]
        files[name] = str(found[0]) if found else None
    hashes = {name: frame_sha256(frame) for name, frame in tables.items()}
    return Inputs(folder=path, tables=tables, files=files, hashes=hashes)
