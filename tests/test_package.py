"""The code ships as one package, ``fieldlimits`` (README, "Command reference"; DEVELOPERS.md,
"One package, four folders")."""

import json
import os
import subprocess
import sys
import sysconfig
import tomllib
from importlib import metadata
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
FOLDERS = ("physics", "pipeline", "schemas", "demo_network")


def _pyproject():
    return tomllib.loads((ROOT / "pyproject.toml").read_text())


def test_every_source_package_is_shipped_under_fieldlimits():
    """Each folder with an ``__init__.py`` below the four top-level folders is listed as
    ``fieldlimits.<folder>…`` in pyproject.toml, and nothing else is."""
    setup = _pyproject()["tool"]["setuptools"]
    found = {"fieldlimits"}
    for top in FOLDERS:
        for init in (ROOT / top).rglob("__init__.py"):
            rel = init.parent.relative_to(ROOT)
            found.add("fieldlimits." + ".".join(rel.parts))
    assert set(setup["packages"]) == found
    assert {k.split(".")[0] for k in setup["package-dir"]} == {"fieldlimits"}
    assert _pyproject()["project"]["scripts"]["fieldlimits"] == "fieldlimits.pipeline.cli:main"


def _installed_files():
    # The installed copy in site-packages (an in-tree build leaves fieldlimits.egg-info at the
    # repository root, which is on the path when tests run there).
    site = [sysconfig.get_paths()["purelib"], sysconfig.get_paths()["platlib"]]
    dists = list(metadata.distributions(name="fieldlimits", path=site))
    if not dists:
        pytest.skip("fieldlimits is not installed")
    dist = dists[0]
    direct = dist.read_text("direct_url.json")
    if direct and json.loads(direct).get("dir_info", {}).get("editable"):
        pytest.skip("an editable install has no files of its own to check")
    return dist, [str(f) for f in dist.files or ()]


def test_the_installed_distribution_adds_only_the_fieldlimits_package():
    """What ``pip install .`` put into site-packages (the RECORD): one top-level package, its
    metadata and the console script; no top-level physics, pipeline, schemas or demo_network."""
    dist, files = _installed_files()
    tops = {f.split("/")[0] for f in files if not f.startswith("..")}
    assert tops == {"fieldlimits", f"fieldlimits-{dist.version}.dist-info"}
    for folder in FOLDERS:
        assert any(f.startswith(f"fieldlimits/{folder}/__init__.py") for f in files)
    assert any(f.startswith("fieldlimits/pipeline/sql/") and f.endswith(".sql") for f in files)
    assert any(f.startswith("fieldlimits/demo_network/data/") and f.endswith(".csv") for f in files)


def test_python_dash_m_fieldlimits_runs_the_command_outside_the_checkout(tmp_path):
    """From a folder that is not the repository, ``python -m fieldlimits`` is the command and
    the bare names do not import (in a checkout they are only the source folders)."""
    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
    done = subprocess.run([sys.executable, "-m", "fieldlimits", "--help"], cwd=tmp_path,
                          capture_output=True, text=True, env=env, timeout=120)
    assert done.returncode == 0, done.stderr
    assert done.stdout.startswith("usage: fieldlimits")
    assert "planning estimates only" in done.stdout.lower()
    markers = {"physics": "weightlimit.py", "pipeline": "flow.py", "schemas": "caution.py",
               "demo_network": "synthetic.py"}
    probe = ("import importlib.util as u, pathlib, json;"
             f"m = {markers!r};"
             "s = {n: u.find_spec(n) for n in m};"
             "print(json.dumps(sorted(n for n, p in s.items() if p and p.origin and "
             "(pathlib.Path(p.origin).parent / m[n]).exists())))")
    ours = subprocess.run([sys.executable, "-c", probe], cwd=tmp_path, capture_output=True,
                          text=True, env=env, timeout=60)
    assert ours.returncode == 0, ours.stderr
    assert json.loads(ours.stdout) == [], "fieldlimits' folders import as top-level names"
