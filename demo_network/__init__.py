"""The bundled, invented demo network and a generator for synthetic networks.

``demo_path()`` is the folder holding the demo tables (installed with the package, so it
works from any folder). See ``NOTE.md``: all of it is invented.
"""

from __future__ import annotations

from pathlib import Path

_HERE = Path(__file__).resolve().parent


def demo_path() -> Path:
    """Folder with the bundled demo tables (``airfields.csv``, ``runways.csv``, ...)."""
    return _HERE / "data"


__all__ = ["demo_path"]
