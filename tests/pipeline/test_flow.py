"""The Prefect flow, under Prefect's test harness entered once per session.

The harness costs ~16 s to enter (PLATFORM-NOTES), so one session fixture enters it and runs
the flow twice: with the default thread-pool task runner, and with the chunk tasks on a
temporary local Dask cluster of two worker processes (issue 8). Both must equal the
plain-function run row for row. The first run is also read back as Prefect's UI shows it
(flow run name, log, summary artifact; issue 18).
"""

from __future__ import annotations

import importlib.util

import pandas as pd
import pytest

from fieldlimits.pipeline import store
from tests.pipeline.conftest import flow_run_log_messages, needs_physics

pytestmark = needs_physics

HAVE_DASK = importlib.util.find_spec("distributed") is not None
QUERY = ("SELECT * EXCLUDE (run_id) FROM latest_results_direction ORDER BY airfield_id, runway_id, "
         "aircraft_type_id, month, condition, basis, reliability")


@pytest.fixture(scope="session")
def prefect_runs(tmp_path_factory, demo_dir):
    from prefect.testing.utilities import prefect_test_harness

    from fieldlimits.pipeline.flow import run_with_prefect
    from fieldlimits.pipeline.steps import RunParams

    from prefect.settings import PREFECT_LOGGING_TO_API_ENABLED, temporary_settings

    params = RunParams(chunk_size=4000, reliability_levels=())
    folder = tmp_path_factory.mktemp("flow")
    out = {}
    with prefect_test_harness(server_startup_timeout=120):
        # logs reach the API as with a server of the user's own (pipeline.settings)
        with temporary_settings(updates={PREFECT_LOGGING_TO_API_ENABLED: True}):
            out["threads"] = (folder / "threads.duckdb",
                              run_with_prefect(demo_dir, folder / "threads.duckdb", params))
            out["ui"] = _what_the_ui_shows()
        if HAVE_DASK:
            out["dask"] = (folder / "dask.duckdb",
                           run_with_prefect(demo_dir, folder / "dask.duckdb", params, cluster="local", workers=2))
    return out


def _what_the_ui_shows() -> dict:
    """The last flow run as Prefect's UI shows it: name, log messages, summary artifact."""
    import time

    from prefect.client.orchestration import get_client
    from prefect.client.schemas.filters import ArtifactFilter, ArtifactFilterKey
    from prefect.client.schemas.sorting import FlowRunSort
    from prefect.logging.handlers import APILogWorker

    from fieldlimits.pipeline.flow import SUMMARY_ARTIFACT

    APILogWorker.drain_all(timeout=10)
    with get_client(sync_client=True) as client:
        run = client.read_flow_runs(sort=FlowRunSort.START_TIME_DESC, limit=1)[0]
        messages = []
        for _ in range(50):  # the log worker ships in batches
            messages = flow_run_log_messages(client, run.id)
            if any("complete:" in m for m in messages):
                break
            time.sleep(0.2)
        artifacts = client.read_artifacts(
            artifact_filter=ArtifactFilter(key=ArtifactFilterKey(any_=[SUMMARY_ARTIFACT])))
    return {"name": run.name, "messages": messages,
            "artifacts": [(a.type, a.data, a.flow_run_id == run.id) for a in artifacts]}


def test_prefect_shows_the_run_as_its_users_expect(prefect_runs):
    """Flow run named after the network and scenario, the run's messages in its log (what the
    UI of a server shows), the summary as an artifact (issue 18)."""
    _, summary = prefect_runs["threads"]
    ui = prefect_runs["ui"]
    assert ui["name"] == "demo network · baseline"
    assert any(m.startswith(f"run {summary.run_id} registered: baseline") for m in ui["messages"])
    assert any(m.startswith(f"storing run {summary.run_id} in ") for m in ui["messages"])
    assert any(m.startswith(f"run {summary.run_id} complete:") for m in ui["messages"])
    mine = [a for a in ui["artifacts"] if a[2]]
    assert len(mine) == 1 and mine[0][0] == "markdown"
    assert f"run {summary.run_id} complete:" in mine[0][1] and "Planning estimates only" in mine[0][1]


def _rows(db):
    with store.reader(db) as con:
        return con.sql(QUERY).df(), con.sql("SELECT status, chunks FROM latest_run").fetchall()[0]


def test_flow_run_equals_local_run_row_for_row(prefect_runs, demo_run):
    db, summary = prefect_runs["threads"]
    a, (status, n_chunks) = _rows(db)
    b, _ = _rows(demo_run[0])
    assert status == "complete" and n_chunks == summary.chunks > 2
    pd.testing.assert_frame_equal(a, b)


@pytest.mark.skipif(not HAVE_DASK, reason="distributed not installed (pip install '.[dask]')")
def test_dask_cluster_run_equals_local_run_row_for_row(prefect_runs, demo_run):
    db, summary = prefect_runs["dask"]
    a, (status, n_chunks) = _rows(db)
    b, _ = _rows(demo_run[0])
    assert status == "complete" and n_chunks == summary.chunks > 2
    pd.testing.assert_frame_equal(a, b)



@pytest.mark.skipif(not HAVE_DASK, reason="distributed not installed (pip install '.[dask]')")
def test_cluster_without_prefect_equals_local_run_row_for_row(demo_dir, demo_run, tmp_path):
    # `--no-prefect --cluster local`: the chunks on a temporary Dask cluster, no Prefect at all.
    from tests.pipeline.conftest import cli

    db = tmp_path / "dask-plain.duckdb"
    done = cli("run", demo_dir, "--db", db, "--no-prefect", "--cluster", "local", "--workers", "2",
               "--reliability", "none", "--chunk-size", "4000", "--quiet", timeout=600)
    assert done.returncode == 0, done.stderr[-2000:]
    a, (status, n_chunks) = _rows(db)
    b, _ = _rows(demo_run[0])
    assert status == "complete" and n_chunks > 2
    pd.testing.assert_frame_equal(a, b)

def test_logs_go_to_a_server_the_user_points_at():
    """With the temporary server nobody reads the logs (no shipping); a server of the user's
    own shows them in its UI (issue 18)."""
    from fieldlimits.pipeline import settings

    alone = settings.apply_offline_defaults({})
    assert alone["PREFECT_LOGGING_TO_API_ENABLED"] == "false"
    served = settings.apply_offline_defaults({"PREFECT_API_URL": "http://127.0.0.1:4200/api"})
    assert "PREFECT_LOGGING_TO_API_ENABLED" not in served  # Prefect's own default: ship them
    assert served["DO_NOT_TRACK"] == "1" and served["PREFECT_SERVER_ANALYTICS_ENABLED"] == "false"
