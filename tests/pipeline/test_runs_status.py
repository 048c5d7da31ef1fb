"""``fieldlimits runs``: a run still marked running is shown as live or dead (issue 20, point 6).

Same machine: the process id and its start time (``/proc/<pid>/stat`` field 22, proc(5));
another machine: the heartbeat file beside the database and its stated age threshold. The
command only reads; the next registered run records dead runs as interrupted.
"""

from __future__ import annotations

import hashlib
import io
import json
import os
import signal
import socket
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pandas as pd
import pytest

from fieldlimits.pipeline import cli, store
from fieldlimits.schemas.caution import CAUTION

OTHER_HOST = "another-planning-box"  # a host name that is not this machine's


def _record(**kw) -> store.RunRecord:
    base = dict(input_dir="/nowhere", parameters={"temperature_offset_k": 1.5, "conditions": ["dry"],
                                                   "reliability_levels": [0.85]},
                temperature_offset_k=1.5, input_hash="h", input_hashes={"airfields": "h"},
                code_version="test", airfields=1, cases=96, chunks=1)
    base.update(kw)
    return store.RunRecord(**base)


def _insert_run(db, host: str | None, pid: int | None) -> int:
    """A running run recorded by some other process (host and pid as given)."""
    with store.writer(db) as con:
        run_id = int(con.execute(store.sql("next_run_id")).fetchall()[0][0])
        store.run_sql(con, store.sql("insert_run"), {
            "run_id": run_id, "started_at": store.utcnow(), "input_dir": "/nowhere",
            "parameters": "{}", "temperature_offset_k": 0.0, "input_hash": "h", "input_hashes": "{}",
            "code_version": "test", "airfields": 1, "cases": 96, "chunks": 1, "reused_cases": 0,
            "reused_from_run_id": None, "reuse_key": None, "host": host, "pid": pid})
    return run_id


def _write_beat(db, run_id: int, host: str, pid: int, age_s: float, **extra) -> None:
    path = store.heartbeat_path(db, run_id)
    path.parent.mkdir(exist_ok=True)
    path.write_text(json.dumps({"run_id": run_id, "host": host, "pid": pid,
                                "beat_at": time.time() - age_s, **extra}))


def _runs(capsys, db, *args) -> str:
    capsys.readouterr()
    assert cli.main(["runs", "--db", str(db), *args]) == 0
    return capsys.readouterr().out


def _status_cell(out: str, run_id: int) -> str:
    """The status column of one run's line in the table."""
    for line in out.splitlines():
        cells = [c.strip() for c in line.strip().split("  ") if c.strip()]
        if cells and cells[0] == str(run_id):
            return cells[1]
    raise AssertionError(f"run {run_id} not listed:\n{out}")


def _status(db, run_id: int) -> tuple[str, str | None]:
    with store.reader(db) as con:
        return tuple(con.execute("SELECT status, error FROM runs WHERE run_id = $r", {"r": run_id}).fetchall()[0])


def _sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def test_a_killed_run_shows_as_dead_until_the_next_run_records_it_interrupted(tmp_path, capsys):
    db = tmp_path / "s.duckdb"
    # a real run process: registers with its heartbeat, then is killed (no chance to record anything)
    script = textwrap.dedent(f"""
        import os, signal, sys
        sys.path.insert(0, {str(Path(__file__).parent)!r})
        from fieldlimits.pipeline import store
        from test_runs_status import _record
        run_id = store.register_run({str(db)!r}, _record(), heartbeat=True)
        print(run_id, os.getpid(), flush=True)
        os.kill(os.getpid(), signal.SIGKILL)
        """)
    done = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, timeout=120)
    assert done.returncode == -signal.SIGKILL, done.stderr
    run_id, pid = (int(x) for x in done.stdout.split())
    beat = store.read_heartbeat(db, run_id)  # left behind: the killed process could not remove it
    assert beat["pid"] == pid and beat["host"] == socket.gethostname()

    out = _runs(capsys, db)
    assert _status_cell(out, run_id) == "running (dead)"
    assert f"run {run_id} dead: process {pid} on this machine" in out
    assert "has ended" in out
    assert "records dead and presumed dead runs as" in out and "interrupted" in out
    assert "temperature +1.5 K dry rel 0.85" in out  # the scenario in brief, as run_scenarios names it
    assert _status(db, run_id)[0] == "running"  # the listing changed nothing

    store.register_run(db, _record())
    status, error = _status(db, run_id)
    assert status == "interrupted" and f"process {pid}" in error
    assert not store.heartbeat_path(db, run_id).exists()
    assert _status_cell(_runs(capsys, db), run_id) == "interrupted"


def test_a_run_of_a_process_that_has_exited_shows_as_dead(tmp_path, capsys):
    db = tmp_path / "s.duckdb"
    gone = int(subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"],
                              capture_output=True, text=True).stdout)
    run_id = _insert_run(db, socket.gethostname(), gone)
    assert _status_cell(_runs(capsys, db), run_id) == "running (dead)"


def test_a_reused_process_id_does_not_make_a_dead_run_live(tmp_path, capsys):
    """The recorded process id is alive again, but a process started at another time holds it."""
    db = tmp_path / "s.duckdb"
    me = os.getpid()
    started = store._proc_stat(me)
    if started is None:
        pytest.skip("no /proc on this system: only the process id can be checked")
    run_id = _insert_run(db, socket.gethostname(), me)
    _write_beat(db, run_id, socket.gethostname(), me, age_s=2.0, process_started=started[1] - 100,
                boot_id=store._boot_id())
    out = _runs(capsys, db)
    assert _status_cell(out, run_id) == "running (dead)"
    assert "now belongs to a process started at another time" in out
    store.register_run(db, _record())
    assert _status(db, run_id)[0] == "interrupted"


def test_a_run_of_this_process_with_a_fresh_heartbeat_is_live(tmp_path, capsys, monkeypatch):
    db = tmp_path / "s.duckdb"
    monkeypatch.setattr(store, "HEARTBEAT_EVERY_S", 0.05)
    run_id = store.register_run(db, _record(), heartbeat=True)
    try:
        first = store.read_heartbeat(db, run_id)
        assert first["pid"] == os.getpid() and first["process_started"] is not None
        deadline = time.monotonic() + 30
        while store.read_heartbeat(db, run_id)["beat_at"] == first["beat_at"]:  # refreshed by its thread
            assert time.monotonic() < deadline, "the heartbeat was not refreshed"
            time.sleep(0.02)
        out = _runs(capsys, db)
        assert _status_cell(out, run_id) == "running (live)"
        assert "process id and start time" in out
        store.register_run(db, _record())  # the next run leaves a live run alone
        assert _status(db, run_id)[0] == "running"
        frame = store.list_runs(db)
        assert frame.loc[frame.run_id == run_id, "state"].item() == "live"
    finally:
        store.stop_heartbeat(db, run_id)
    assert not store.heartbeat_dir(db).exists()  # its file gone, and the empty folder with it


def test_another_machines_run_is_judged_by_its_heartbeat(tmp_path, capsys):
    db = tmp_path / "s.duckdb"
    old = _insert_run(db, OTHER_HOST, 4242)
    fresh = _insert_run(db, OTHER_HOST, 4243)
    silent = _insert_run(db, OTHER_HOST, 4244)
    nameless = _insert_run(db, None, None)
    _write_beat(db, old, OTHER_HOST, 4242, age_s=600.0)
    _write_beat(db, fresh, OTHER_HOST, 4243, age_s=1.0)
    out = _runs(capsys, db)
    assert _status_cell(out, old) == "running (presumed dead)"
    assert f"no heartbeat for 600 s (more than {store.HEARTBEAT_STALE_S:.0f} s)" in out
    assert _status_cell(out, fresh) == "running (live)"
    assert _status_cell(out, silent) == "running (unknown)"
    assert _status_cell(out, nameless) == "running (unknown)"

    store.register_run(db, _record())
    assert _status(db, old)[0] == "interrupted"
    assert not store.heartbeat_path(db, old).exists()
    for run_id in (fresh, silent, nameless):
        assert _status(db, run_id)[0] == "running"


def test_the_stale_threshold_is_the_stated_one():
    """Our own threshold: at most HEARTBEAT_STALE_S old is live, older is presumed dead."""
    now = 1.0e9
    beat = {"run_id": 1, "host": OTHER_HOST, "pid": 7}
    just = store.run_liveness(OTHER_HOST, 7, {**beat, "beat_at": now - store.HEARTBEAT_STALE_S + 1}, now)
    past = store.run_liveness(OTHER_HOST, 7, {**beat, "beat_at": now - store.HEARTBEAT_STALE_S - 1}, now)
    assert (just.state, past.state) == (store.LIVE, store.PRESUMED_DEAD)
    # a heartbeat file of another process says nothing about this run
    assert store.run_liveness(OTHER_HOST, 8, {**beat, "beat_at": now}, now).state == store.UNKNOWN


def test_listing_runs_writes_nothing(tmp_path, capsys):
    db = tmp_path / "s.duckdb"
    gone = int(subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"],
                              capture_output=True, text=True).stdout)
    dead = _insert_run(db, socket.gethostname(), gone)
    stale = _insert_run(db, OTHER_HOST, 4242)
    _write_beat(db, stale, OTHER_HOST, 4242, age_s=600.0)
    before = (_sha256(db), _sha256(store.heartbeat_path(db, stale)))
    for fmt in ("table", "csv", "json"):
        _runs(capsys, db, "--format", fmt)
    assert (_sha256(db), _sha256(store.heartbeat_path(db, stale))) == before
    assert _status(db, dead)[0] == _status(db, stale)[0] == "running"
    listed = json.loads(_runs(capsys, db, "--format", "json"))
    assert {r["run_id"]: r["state"] for r in listed} == {dead: "dead", stale: "presumed dead"}
    csv = pd.read_csv(io.StringIO(_runs(capsys, db, "--format", "csv")))
    assert set(csv["run_id"]) == {dead, stale}
    assert (csv["caution"] == CAUTION).all()  # the caution on every row, default reader


def test_busy_database_falls_back_to_the_heartbeat_files(tmp_path, capsys, monkeypatch):
    db = tmp_path / "s.duckdb"
    run_id = _insert_run(db, OTHER_HOST, 4242)
    _write_beat(db, run_id, OTHER_HOST, 4242, age_s=1.0)
    holder = subprocess.Popen([sys.executable, "-c", textwrap.dedent(f"""
        import duckdb, time
        con = duckdb.connect({str(db)!r})
        print("locked", flush=True)
        time.sleep(60)
        """)], stdout=subprocess.PIPE, text=True)
    monkeypatch.setattr(store, "READER_WAIT_S", 0.5)
    try:
        assert holder.stdout.readline().strip() == "locked"
        out = _runs(capsys, db)
    finally:
        holder.kill()
        holder.wait()
    assert "being written by a fieldlimits run" in out
    assert f"run {run_id} running (live)" in out


def test_help_states_the_heartbeat_figures_in_use():
    from fieldlimits.pipeline.commands import runs

    assert f"every {store.HEARTBEAT_EVERY_S:.0f} s" in runs.DESCRIPTION
    assert f"more than {store.HEARTBEAT_STALE_S:.0f} s old" in runs.DESCRIPTION


def test_limit_and_empty_store(tmp_path, capsys):
    db = tmp_path / "s.duckdb"
    with store.writer(db):
        pass
    assert "no runs stored" in _runs(capsys, db)
    ids = [store.register_run(db, _record()) for _ in range(3)]
    out = _runs(capsys, db, "--limit", "2")
    assert str(ids[0]) not in [line.split()[0] for line in out.splitlines()[1:] if line.strip()]
    assert cli.main(["runs", "--db", str(db), "--limit", "-1"]) == 2


def test_a_run_in_progress_is_live_and_leaves_no_heartbeat(tmp_path, demo_dir):
    """During a real run (plain functions) the listing says live; afterwards no file is left."""
    from fieldlimits.pipeline.steps import RunParams, run_local

    pytest.importorskip("fieldlimits.physics.weightlimit")
    db = tmp_path / "r.duckdb"
    seen = []

    def progress(done, total, seconds):
        seen.append(store.list_runs(db)[["status", "state"]].iloc[0].tolist())

    run_local(demo_dir, db, RunParams(reliability_levels=()), progress=progress)
    assert seen and seen[0] == ["running", "live"]
    assert not store.heartbeat_dir(db).exists()
    assert store.list_runs(db)["state"].tolist() == ["complete"]
