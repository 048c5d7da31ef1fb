"""``fieldlimits run`` end to end with Prefect: what the user and Prefect's UI see (issue 18).

One run of the demo network through the command line (reliability levels off, to keep it
short) with log shipping on, as with a server of the user's own. Prefect's temporary server
keeps its database in ``PREFECT_HOME``; a second process opens that database afterwards and
reads the flow run as the UI would show it.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import textwrap

import pytest

from fieldlimits.schemas.caution import CAUTION
from tests.pipeline.conftest import REPO, needs_physics

pytestmark = needs_physics

READ_BACK = textwrap.dedent("""
    import json
    from prefect.client.orchestration import get_client
    from prefect.client.schemas.filters import ArtifactFilter, ArtifactFilterKey
    from tests.pipeline.conftest import flow_run_log_messages
    with get_client(sync_client=True) as client:
        runs = client.read_flow_runs()
        run = runs[0]
        messages = flow_run_log_messages(client, run.id)
        arts = client.read_artifacts(artifact_filter=ArtifactFilter(
            key=ArtifactFilterKey(any_=["fieldlimits-run-summary"])))
    print(json.dumps({"runs": len(runs), "name": run.name, "state": run.state_name,
                      "logs": messages,
                      "artifacts": [a.data for a in arts]}))
""")


@pytest.fixture(scope="module")
def cli_run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("cli-run")
    env = {**os.environ, "PYTHONPATH": str(REPO) + os.pathsep + os.environ.get("PYTHONPATH", ""),
           "PREFECT_HOME": str(folder / "prefect-home"), "PREFECT_LOGGING_TO_API_ENABLED": "true"}
    env.pop("PREFECT_API_URL", None)
    done = subprocess.run([sys.executable, "-m", "fieldlimits", "run", "--db", "run.duckdb",
                           "--reliability", "none"], cwd=folder, env=env, capture_output=True,
                          text=True, timeout=900)
    seen = subprocess.run([sys.executable, "-c", READ_BACK], cwd=folder, env=env,
                          capture_output=True, text=True, timeout=600)
    assert seen.returncode == 0, seen.stderr
    return done, json.loads(seen.stdout.strip().splitlines()[-1])


def test_the_command_line_shows_progress_and_the_true_wall_time(cli_run):
    done, _ = cli_run
    assert done.returncode == 0, done.stderr
    lines = done.stderr.splitlines()
    assert lines[0].startswith("[") and "starting Prefect's temporary server" in lines[0]
    assert any("inputs ok: 36 airfields" in line for line in lines)
    assert any("flow run \"demo network · baseline\"" in line for line in lines)
    assert "Traceback" not in done.stderr
    summary = done.stdout.splitlines()[0]
    assert "s wall time (flow " in summary  # the command's time, and the flow's own
    assert done.stdout.splitlines()[1].startswith("scenario: baseline; conditions dry, wet")


def test_prefect_keeps_the_named_run_its_log_and_its_summary(cli_run):
    _, ui = cli_run
    assert ui["runs"] == 1 and ui["name"] == "demo network · baseline"
    assert ui["state"] == "Completed"
    assert any(m.startswith("run 1 registered: baseline") for m in ui["logs"])
    assert any(m.startswith("storing run 1 in ") for m in ui["logs"])
    assert any(m.startswith("run 1 complete:") for m in ui["logs"])
    assert len(ui["artifacts"]) == 1
    assert "run 1 complete:" in ui["artifacts"][0] and CAUTION in ui["artifacts"][0]
