"""The fieldlimits command line, run as a subprocess."""

from __future__ import annotations

import hashlib
import io
import json

import pandas as pd
import pytest

from fieldlimits.schemas.caution import CAUTION
from tests.pipeline.conftest import cli, needs_physics

COMMANDS = ("run", "check", "sql", "export", "serve", "generate")


def _sha(path) -> str:
    return hashlib.sha256(open(path, "rb").read()).hexdigest()


def test_every_help_shows_the_caution():
    top = cli("--help")
    assert top.returncode == 0 and CAUTION in " ".join(top.stdout.split())
    for name in COMMANDS:
        out = cli(name, "--help")
        assert out.returncode == 0, out.stderr
        assert CAUTION in " ".join(out.stdout.split()), name


def test_check_lists_every_problem_and_exits_2(tmp_path, demo_dir):
    import shutil

    bad = tmp_path / "bad"
    shutil.copytree(demo_dir, bad)
    runways = (bad / "runways.csv").read_text().splitlines()
    header = runways[0].split(",")
    row = runways[1].split(",")
    row[header.index("tora_m")] = "lots"
    row2 = runways[2].split(",")
    row2[header.index("surface")] = "lava"
    (bad / "runways.csv").write_text("\n".join([runways[0], ",".join(row), ",".join(row2)] + runways[3:]) + "\n")
    out = cli("check", bad)
    assert out.returncode == 2
    assert "tora_m" in out.stdout and "surface" in out.stdout  # both problems listed
    assert "Traceback" not in out.stdout + out.stderr


def test_check_on_the_demo_is_ok(demo_dir):
    out = cli("check", demo_dir)
    assert out.returncode == 0, out.stdout + out.stderr
    assert out.stdout.strip().splitlines()[-1].startswith("ok:")


@needs_physics
def test_run_on_bad_input_exits_2_and_leaves_the_database_unchanged(tmp_path, demo_db_copy):
    before = _sha(demo_db_copy)
    (tmp_path / "empty").mkdir()
    out = cli("run", tmp_path / "empty", "--db", demo_db_copy, "--no-prefect")
    assert out.returncode == 2
    assert "error" in out.stderr and "Traceback" not in out.stderr
    assert _sha(demo_db_copy) == before


@needs_physics
def test_run_no_prefect_prints_progress_and_summary(tmp_path, demo_dir):
    db = tmp_path / "cli.duckdb"
    out = cli("run", demo_dir, "--db", db, "--no-prefect", "--chunk-size", "4000", "--reliability", "none")
    assert out.returncode == 0, out.stderr
    assert "chunks" in out.stderr and "/" in out.stderr  # progress: chunks done / total
    assert "run 1 complete" in out.stdout and "airfields" in out.stdout and "cases" in out.stdout
    assert "below MTOW" in out.stdout


@needs_physics
def test_sql_formats_and_cannot_modify(demo_db_copy):
    before = _sha(demo_db_copy)
    out = cli("sql", "SELECT count(*) AS n FROM latest_results_airfield", "--db", demo_db_copy, "--format", "json")
    assert out.returncode == 0, out.stderr
    assert json.loads(out.stdout)[0]["n"] > 0
    csv = cli("sql", "SELECT run_id, status FROM runs", "--db", demo_db_copy, "--format", "csv")
    assert csv.stdout.splitlines()[0] == "run_id,status,caution"  # a plain header first
    parsed = pd.read_csv(io.StringIO(csv.stdout))  # default settings (issue 18)
    assert parsed["run_id"].tolist() == [1] and (parsed["caution"] == CAUTION).all()
    for statement in ("DELETE FROM runs", "DROP TABLE results_direction",
                      "UPDATE runs SET status = 'x'", "CREATE TABLE t AS SELECT 1"):
        out = cli("sql", statement, "--db", demo_db_copy)
        assert out.returncode == 2, statement
        assert "read-only" in out.stderr and "Traceback" not in out.stderr
    assert _sha(demo_db_copy) == before


@needs_physics
def test_export_via_cli(tmp_path, demo_db_copy):
    from fieldlimits.pipeline.export import read_export

    out_csv = tmp_path / "airfield.csv"
    out = cli("export", "latest_results_airfield", "-o", out_csv, "--db", demo_db_copy)
    assert out.returncode == 0, out.stderr
    frame = read_export(out_csv)
    assert len(frame) > 0 and "tow_limit_kg" in frame.columns
    plain = pd.read_csv(out_csv)  # default settings: the header is the header
    assert list(plain.columns[:3]) == ["run_id", "scenario", "airfield_id"]
    assert (plain["caution"] == CAUTION).all() and (plain["scenario"] == "baseline").all()
    missing = cli("export", "results_airfield", "--run", "99", "-o", tmp_path / "x.csv", "--db", demo_db_copy)
    assert missing.returncode == 2 and not (tmp_path / "x.csv").exists()
    assert "run 99 does not exist" in missing.stderr and "stored runs: 1" in missing.stderr


@needs_physics
def test_sql_errors_keep_duckdbs_hints(demo_db_copy):
    """DuckDB's own help reaches the user: the table or column it would have matched."""
    out = cli("sql", "SELECT * FROM latest_results_airfeld", "--db", demo_db_copy)
    assert out.returncode == 2 and "Traceback" not in out.stderr
    assert 'Did you mean "latest_results_airfield"' in out.stderr
    out = cli("sql", "SELECT tow_limit FROM latest_results_airfield", "--db", demo_db_copy)
    assert out.returncode == 2 and "Candidate bindings" in out.stderr and "tow_limit_kg" in out.stderr


@needs_physics
def test_sql_piped_into_head_prints_no_traceback(demo_db_copy):
    """``fieldlimits sql … | head -1``: the reader going away is no error worth a traceback."""
    import subprocess
    import sys

    from tests.pipeline.conftest import REPO

    env = {**__import__("os").environ, "PYTHONPATH": str(REPO)}
    proc = subprocess.Popen(
        f"{sys.executable} -m fieldlimits sql \"SELECT * FROM latest_results_direction\" "
        f"--db {demo_db_copy} --format csv | head -1", shell=True, cwd=REPO, env=env,
        stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    out, err = proc.communicate(timeout=120)
    assert out.startswith("run_id,")
    assert err == ""  # no traceback, no "Exception ignored" line


def test_missing_database_is_one_clear_message(tmp_path):
    out = cli("sql", "SELECT 1", "--db", tmp_path / "none.duckdb")
    assert out.returncode == 2
    assert out.stderr.strip().startswith("fieldlimits: error: no database at")
    assert len(out.stderr.strip().splitlines()) == 1


@pytest.mark.parametrize("option, value, expected", [
    ("--reliability", "1.5", "strictly between 0 and 1"),
    ("--reliability", "50,85", "percentages? write 0.5,0.85"),
    ("--reliability", "0.5,0.5", "lists a level twice"),
    ("--reliability", "lots", "comma-separated numbers"),
    ("--temperature-offset", "nan", "--temperature-offset"),
    ("--temperature-offset", "45", "between -30 and +30"),
    ("--conditions", "dry,icy", "--conditions must be some of dry, wet"),
    ("--chunk-size", "0", "--chunk-size"),
    ("--workers", "0", "--workers must be at least 1"),
])
def test_run_options_are_checked_before_any_work(tmp_path, option, value, expected):
    """A wrong option stops at the door with exit 2 and says what to write; no database
    is created and nothing is computed (issue 18)."""
    db = tmp_path / "never.duckdb"
    out = cli("run", "--db", db, "--no-prefect", option, value)
    assert out.returncode == 2, out.stderr
    assert expected in out.stderr and "Traceback" not in out.stderr
    assert len(out.stderr.strip().splitlines()) == 1
    assert not db.exists()


def test_serve_checks_the_cron_and_offers_the_run_options():
    out = cli("serve", "--cron", "61 * * * *", env={"PREFECT_API_URL": "http://127.0.0.1:9/api"})
    assert out.returncode == 2
    assert "not a valid cron schedule" in out.stderr and "minute (0-59)" in out.stderr
    assert "validation error" not in out.stderr.lower() and "pydantic" not in out.stderr
    bad = cli("serve", "--cron", "0 3 * * 1", "--reliability", "1.5")
    assert bad.returncode == 2 and "strictly between 0 and 1" in bad.stderr
    run_help = cli("run", "--help").stdout
    serve_help = cli("serve", "--help").stdout
    run_options = {w for w in run_help.split() if w.startswith("--")} - {"--no-prefect", "--quiet",
                                                                         "--help"}
    assert run_options <= {w for w in serve_help.split() if w.startswith("--")}


def test_serve_without_a_server_says_how(tmp_path):
    out = cli("serve", "--cron", "0 3 * * 1", env={"PREFECT_API_URL": ""})
    assert out.returncode == 2
    assert "prefect server start" in out.stderr and "PREFECT_API_URL" in out.stderr


def test_generate_writes_a_network_that_checks(tmp_path):
    out = cli("generate", tmp_path / "syn", "--airfields", "5", "--seed", "3")
    assert out.returncode == 0, out.stderr
    assert cli("check", tmp_path / "syn").returncode == 0
