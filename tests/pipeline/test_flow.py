"""The Prefect flow, once per session under Prefect's test harness.

The harness costs ~16 s to enter (PLATFORM-NOTES), so this module runs the flow a single
time and checks the result equals the plain-function run row for row.
"""

from __future__ import annotations

import pandas as pd
import pytest

from pipeline import store
from tests.pipeline.conftest import needs_physics

pytestmark = needs_physics


@pytest.fixture(scope="session")
def prefect_run(tmp_path_factory, demo_dir):
    from prefect.testing.utilities import prefect_test_harness

    from pipeline.flow import run_with_prefect
    from pipeline.steps import RunParams

    db = tmp_path_factory.mktemp("flow") / "flow.duckdb"
    with prefect_test_harness(server_startup_timeout=120):
        summary = run_with_prefect(demo_dir, db, RunParams(chunk_size=4000, reliability_levels=()))
    return db, summary


def test_flow_run_equals_local_run_row_for_row(prefect_run, demo_run):
    flow_db, flow_summary = prefect_run
    local_db, _ = demo_run
    query = ("SELECT * EXCLUDE (run_id) FROM latest_results_direction ORDER BY airfield_id, runway_id, "
             "aircraft_type_id, month, condition, basis, reliability")
    with store.reader(flow_db) as con:
        a = con.sql(query).df()
        status = con.sql("SELECT status, chunks FROM latest_run").fetchall()[0]
    with store.reader(local_db) as con:
        b = con.sql(query).df()
    assert status[0] == "complete" and status[1] == flow_summary.chunks > 2
    pd.testing.assert_frame_equal(a, b)
