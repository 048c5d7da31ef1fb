"""Fixtures for the pipeline tests.

One demo-network run without Prefect is shared by the module tests (``demo_run``); the one
Prefect run of the session lives in ``test_flow.py`` (``prefect_test_harness`` costs ~16 s
to enter, so it is used once).
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]


def _physics_ready() -> bool:
    try:
        import fieldlimits.physics.weightlimit  # noqa: F401
    except ImportError:
        return False
    return True


needs_physics = pytest.mark.skipif(not _physics_ready(), reason="fieldlimits.physics.weightlimit not available yet")


def flow_run_log_messages(client, run_id) -> list[str]:
    """Every log message of a flow run in time order (a sync Prefect client): the server
    returns at most a page of logs per call."""
    from prefect.client.schemas.filters import LogFilter, LogFilterFlowRunId
    from prefect.client.schemas.sorting import LogSort

    messages, offset = [], 0
    while True:
        page = client.read_logs(log_filter=LogFilter(flow_run_id=LogFilterFlowRunId(any_=[run_id])),
                                limit=200, offset=offset, sort=LogSort.TIMESTAMP_ASC)
        messages += [entry.message for entry in page]
        offset += len(page)
        if len(page) < 200:
            return messages


@pytest.fixture(scope="session")
def demo_dir() -> Path:
    from fieldlimits.demo_network import demo_path

    return Path(demo_path())


@pytest.fixture(scope="session")
def demo_run(tmp_path_factory, demo_dir):
    """A DuckDB file with one complete demo run (plain functions, no Prefect, design day)."""
    if not _physics_ready():
        pytest.skip("fieldlimits.physics.weightlimit not available yet")
    from fieldlimits.pipeline.steps import RunParams, run_local

    db = tmp_path_factory.mktemp("demo") / "demo.duckdb"
    # design-day rows only: the reliability producer has its own tests (tests/pipeline/test_reliability*)
    summary = run_local(demo_dir, db, RunParams(reliability_levels=()), progress=lambda *a: None)
    return db, summary


@pytest.fixture
def demo_db_copy(tmp_path, demo_run) -> Path:
    """A private copy of the demo database, for tests that write to it."""
    db, _ = demo_run
    copy = tmp_path / "copy.duckdb"
    shutil.copyfile(db, copy)
    return copy


def cli(*args, cwd=None, env=None, timeout=300) -> subprocess.CompletedProcess:
    """Run ``python -m fieldlimits ARGS`` in a subprocess from the repository root."""
    full_env = {**os.environ, **(env or {})}
    full_env["PYTHONPATH"] = str(REPO) + os.pathsep + full_env.get("PYTHONPATH", "")
    return subprocess.run([sys.executable, "-m", "fieldlimits", *map(str, args)],
                          cwd=cwd or REPO, env=full_env, capture_output=True, text=True, timeout=timeout)
