"""Stopping a run: Ctrl-C and kill leave no server process, no work folder, and an honest record.

These run ``fieldlimits run`` in a subprocess with Prefect (the temporary server is what could
be orphaned), on the demo network in small chunks so that the signal lands mid-run. A stop
must end the command: the timeouts below only keep a broken stop from hanging the suite.
"""

from __future__ import annotations

import os
import re
import signal
import subprocess
import sys
import time

import pytest

from fieldlimits.pipeline import store
from tests.pipeline.conftest import REPO, needs_physics

pytestmark = needs_physics


def _start(tmp_path, db, *extra):
    env = {**os.environ, "PYTHONPATH": str(REPO) + os.pathsep + os.environ.get("PYTHONPATH", ""),
           "PREFECT_HOME": str(tmp_path / "prefect-home")}
    env.pop("PREFECT_API_URL", None)
    err = open(tmp_path / "stderr.txt", "w+")
    proc = subprocess.Popen([sys.executable, "-m", "fieldlimits", "run", "--db", str(db),
                             "--chunk-size", "500", "--reliability", "none", *extra],
                            cwd=tmp_path, env=env, stdout=subprocess.PIPE, stderr=err, text=True)
    return proc, err


def _wait_for(err, pattern: str, proc, timeout_s: float = 300.0) -> str:
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        err.seek(0)
        text = err.read()
        if re.search(pattern, text):
            return text
        if proc.poll() is not None:
            pytest.fail(f"the run ended before {pattern!r}: {text}")
        time.sleep(0.2)
    proc.kill()
    pytest.fail(f"no {pattern!r} within {timeout_s} s")


def _server_alive(port: str) -> bool:
    found = subprocess.run(["ps", "-eo", "args"], capture_output=True, text=True).stdout
    return any("uvicorn" in line and f"--port {port}" in line for line in found.splitlines())


def _status(db, run_id):
    with store.reader(db) as con:
        return con.execute("SELECT status, error FROM runs WHERE run_id = $r", {"r": run_id}).fetchall()[0]


def test_ctrl_c_stops_records_and_leaves_nothing_behind(tmp_path):
    db = tmp_path / "stop.duckdb"
    proc, err = _start(tmp_path, db)
    text = _wait_for(err, r"chunks \d+/\d+", proc)
    port = re.search(r"127\.0\.0\.1:(\d+)/api", text).group(1)
    proc.send_signal(signal.SIGINT)
    out, _ = proc.communicate(timeout=60)
    err.seek(0)
    lines = err.read().strip().splitlines()
    assert proc.returncode == 130
    assert lines[-1] == ("fieldlimits: stopped (Ctrl-C): run 1 recorded as interrupted; none of "
                         "its results were stored")
    assert "Traceback" not in "\n".join(lines) and out == ""
    assert _status(db, 1) == ("interrupted", "stopped by the user (Ctrl-C)")
    assert not (tmp_path / "stop.duckdb.work").exists()
    assert not store.heartbeat_dir(db).exists()
    assert not _server_alive(port)


def test_a_killed_run_leaves_no_server_and_the_next_run_tidies_up(tmp_path):
    db = tmp_path / "kill.duckdb"
    proc, err = _start(tmp_path, db)
    text = _wait_for(err, r"chunks \d+/\d+", proc)
    port = re.search(r"127\.0\.0\.1:(\d+)/api", text).group(1)
    proc.kill()  # SIGKILL: nothing in the process runs any more
    proc.wait(timeout=30)
    deadline = time.monotonic() + 30
    while _server_alive(port) and time.monotonic() < deadline:
        time.sleep(0.2)
    assert not _server_alive(port)  # the kernel stopped it with its parent
    assert (tmp_path / "kill.duckdb.work" / "run-000001").is_dir()  # nobody left to remove it
    from fieldlimits.pipeline.steps import RunParams, run_local
    from fieldlimits.demo_network import demo_path

    run_local(demo_path(), db, RunParams(reliability_levels=(), conditions=("dry",)),
              progress=lambda *a: None)
    assert _status(db, 1)[0] == "interrupted"
    assert not (tmp_path / "kill.duckdb.work").exists()  # removed with the dead run's record


def _sleep_and_return(seconds: float) -> float:
    time.sleep(seconds)
    return seconds


def test_a_stopped_command_takes_its_worker_processes_with_it(monkeypatch, tmp_path):
    """A stop ends the command with ``os._exit``, which skips the pools' shut-down at exit: the
    worker processes (the chunks' pool and a landing pool) are stopped first, a chunk in
    progress abandoned. Without that they waited for work forever, about 0.5 GB each, after
    every stopped run on a network large enough for worker processes."""
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    from fieldlimits.pipeline import chunks

    monkeypatch.setenv("FIELDLIMITS_CHUNK_PROCESSES", "2")
    monkeypatch.setattr(chunks, "PROCESS_MIN_CASES", 0)
    (tmp_path / "cases.json").write_text('{"cases_per_chunk": [1]}')
    chunks.shutdown_pool()
    pool = chunks._process_pool(tmp_path)
    other = ProcessPoolExecutor(max_workers=1, mp_context=multiprocessing.get_context("spawn"))
    chunks.track_pool(other)
    busy = [pool.submit(_sleep_and_return, 60.0), pool.submit(_sleep_and_return, 60.0),
            other.submit(_sleep_and_return, 60.0)]
    time.sleep(1.0)
    procs = [*pool._processes.values(), *other._processes.values()]
    assert len(procs) >= 2 and all(p.is_alive() for p in procs)  # started on submit
    t0 = time.monotonic()
    chunks.terminate_pools()
    for p in procs:
        p.join(timeout=10)
    assert not any(p.is_alive() for p in procs) and time.monotonic() - t0 < 10
    assert chunks._POOL is None and chunks._OTHER_POOLS == set()
    assert all(f.cancelled() or f.exception(timeout=30) is not None for f in busy)  # abandoned
