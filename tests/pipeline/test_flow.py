"""The Prefect flow, under Prefect's test harness entered once per session.

The harness costs ~16 s to enter (PLATFORM-NOTES), so one session fixture enters it and runs
the flow twice: with the default thread-pool task runner, and with the chunk tasks on a
temporary local Dask cluster of two worker processes (issue 8). Both must equal the
plain-function run row for row.
"""

from __future__ import annotations

import importlib.util

import pandas as pd
import pytest

from pipeline import store
from tests.pipeline.conftest import needs_physics

pytestmark = needs_physics

HAVE_DASK = importlib.util.find_spec("prefect_dask") is not None
QUERY = ("SELECT * EXCLUDE (run_id) FROM latest_results_direction ORDER BY airfield_id, runway_id, "
         "aircraft_type_id, month, condition, basis, reliability")


@pytest.fixture(scope="session")
def prefect_runs(tmp_path_factory, demo_dir):
    from prefect.testing.utilities import prefect_test_harness

    from pipeline.flow import run_with_prefect
    from pipeline.steps import RunParams

    params = RunParams(chunk_size=4000, reliability_levels=())
    folder = tmp_path_factory.mktemp("flow")
    out = {}
    with prefect_test_harness(server_startup_timeout=120):
        out["threads"] = (folder / "threads.duckdb",
                          run_with_prefect(demo_dir, folder / "threads.duckdb", params))
        if HAVE_DASK:
            out["dask"] = (folder / "dask.duckdb",
                           run_with_prefect(demo_dir, folder / "dask.duckdb", params, cluster="local", workers=2))
    return out


def _rows(db):
    with store.reader(db) as con:
        return con.sql(QUERY).df(), con.sql("SELECT status, chunks FROM latest_run").fetchall()[0]


def test_flow_run_equals_local_run_row_for_row(prefect_runs, demo_run):
    db, summary = prefect_runs["threads"]
    a, (status, n_chunks) = _rows(db)
    b, _ = _rows(demo_run[0])
    assert status == "complete" and n_chunks == summary.chunks > 2
    pd.testing.assert_frame_equal(a, b)


@pytest.mark.skipif(not HAVE_DASK, reason="prefect-dask not installed (pip install '.[dask]')")
def test_dask_cluster_run_equals_local_run_row_for_row(prefect_runs, demo_run):
    db, summary = prefect_runs["dask"]
    a, (status, n_chunks) = _rows(db)
    b, _ = _rows(demo_run[0])
    assert status == "complete" and n_chunks == summary.chunks > 2
    pd.testing.assert_frame_equal(a, b)
