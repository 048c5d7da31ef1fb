"""fieldlimits: takeoff-weight limits and route payloads for an airline network.

The installed package holds ``fieldlimits.physics``, ``fieldlimits.pipeline``,
``fieldlimits.schemas`` and ``fieldlimits.demo_network``. In the repository those four live
as top-level folders (the layout is fixed); the wheel maps them under this package
(``pyproject.toml``, ``[tool.setuptools.package-dir]``). Run from a checkout without
installing, this package finds them beside itself (below), so tests and
``python -m fieldlimits`` from the repository root use the source tree.

Planning estimates only: the aircraft flight manual, the operator's approved performance
methods and local regulations govern.
"""

from pathlib import Path as _Path

_here = _Path(__file__).resolve().parent
if not (_here / "physics").is_dir() and (_here.parent / "physics" / "__init__.py").is_file() \
        and (_here.parent / "pyproject.toml").is_file():
    # A checkout: the subpackages are the repository's top-level folders.
    __path__.append(str(_here.parent))  # noqa: F821  (the package's own search path)
del _Path, _here
