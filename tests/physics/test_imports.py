"""physics/ imports only numpy, scipy, a few standard-library modules and fieldlimits.physics.*
(DEVELOPERS.md); Numba only in physics/compiled.py, whose ``kernel`` decorator every compiled
kernel uses."""

import ast
import pathlib

PHYSICS = pathlib.Path(__file__).resolve().parents[2] / "physics"
ALLOWED = {"numpy", "scipy", "dataclasses", "math", "typing", "enum", "physics", "__future__"}
ALLOWED_IN = {"compiled.py": {"numba", "threading"}}  # the one module that imports the compiler


def _top(name: str) -> str:
    """The part of a module name the rule is about: ``fieldlimits.physics.x`` counts as
    ``physics``; any other ``fieldlimits.…`` (pipeline, schemas) as itself."""
    parts = name.split(".")
    if parts[0] == "fieldlimits" and len(parts) > 1:
        return parts[1] if parts[1] == "physics" else ".".join(parts[:2])
    return parts[0]


def _imports(path):
    tree = ast.parse(path.read_text(), filename=str(path))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield _top(alias.name), node.lineno
        elif isinstance(node, ast.ImportFrom):
            if node.level:  # relative import stays inside physics
                yield "physics", node.lineno
            else:
                yield _top(node.module), node.lineno


def test_physics_imports_only_allowed_modules():
    files = sorted(PHYSICS.rglob("*.py"))
    assert len(files) >= 5
    bad = [
        f"{p.relative_to(PHYSICS.parent)}:{line}: import {mod}"
        for p in files
        for mod, line in _imports(p)
        if mod not in ALLOWED | ALLOWED_IN.get(p.name, set())
    ]
    assert not bad, "forbidden imports in physics/:\n" + "\n".join(bad)


def test_import_checker_catches_a_forbidden_import(tmp_path):
    p = tmp_path / "x.py"
    p.write_text("import pandas\nfrom os import path\nimport numpy as np\n"
                 "from fieldlimits.pipeline import steps\nfrom fieldlimits.physics.wind import x\n")
    assert [m for m, _ in _imports(p)] == ["pandas", "os", "numpy", "fieldlimits.pipeline", "physics"]


def test_numba_is_loaded_by_the_first_kernel_call_not_by_an_import():
    """Importing the physics and the pipeline does not load the compiler (a main process whose
    chunks run in worker processes never carries it); the first kernel call does, and then a
    kernel is a Numba dispatcher in its module and gives the same values as before."""
    import subprocess
    import sys

    code = (
        "import sys\n"
        "from fieldlimits.pipeline import steps, flow, landing, routes, store, reliability\n"
        "from fieldlimits.physics import solvinggrid, reliabilitylevels, groundrun\n"
        "print('numba' in sys.modules)\n"
        "import numpy as np\n"
        "out = solvinggrid.interpolate_headwind([[0.0, 10.0]], [0.0, 2.0], [0.5, 1.5])\n"
        "print('numba' in sys.modules, type(solvinggrid._interpolate_headwind_kernel).__module__.split('.')[0])\n"
        "print(out.ravel().tolist())\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                         cwd=str(PHYSICS.parent)).stdout.split("\n")
    assert out[0] == "False"
    assert out[1] == "True numba"
    assert out[2] == "[2.5, 7.5]"  # m(h) = 5 h on the nodes 0 and 2 m/s
