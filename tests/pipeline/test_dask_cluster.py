"""A run on a Dask cluster of separate processes, as on several machines (issue 19, point 5).

A scheduler and two workers are started with Dask's own command line (``dask scheduler``,
``dask worker``), each worker in a folder of its own (its working directory and
``--local-directory``); the client (``fieldlimits run --cluster tcp://…``) works in a third
folder. No folder is shared: the chunks' inputs and rows travel through Dask. The run must
equal a plain run (``--no-prefect``, no Dask) row for row, the workers must never have
imported Prefect (so they started no Prefect server of their own), and a worker whose code
differs from the client's must fail the run with both code versions named.
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
import time
from pathlib import Path

import pandas as pd
import pytest

from fieldlimits.pipeline import chunks, store
from tests.pipeline.conftest import REPO, cli, needs_physics

distributed = pytest.importorskip("distributed", reason="the dask extra is not installed")

pytestmark = [needs_physics, pytest.mark.slow]

# the helpers below run in the workers, which cannot import this test module: send them whole
import cloudpickle  # noqa: E402  (comes with distributed)

cloudpickle.register_pickle_by_value(sys.modules[__name__])

#: Small chunks so that the demo network makes many chunks for two workers; two reliability
#: levels so that the row producers read the wind rose and climate tables on the workers.
RUN_OPTIONS = ("--chunk-size", "2000", "--reliability", "0.5,0.9", "--quiet")
_PACKAGE_FOLDERS = ("fieldlimits", "physics", "schemas", "pipeline", "demo_network")


class _Cluster:
    """``dask scheduler`` and ``dask worker`` processes, each in its own folder."""

    def __init__(self, root: Path, workers: dict[str, Path]):
        self.root = root
        self.procs: list[subprocess.Popen] = []
        self.logs: list[Path] = []
        scheduler_file = root / "scheduler.json"
        self._start(["scheduler", "--host", "127.0.0.1", "--port", "0", "--no-dashboard",
                     "--scheduler-file", str(scheduler_file)], root / "scheduler", REPO)
        for _ in range(600):
            if scheduler_file.exists() and scheduler_file.stat().st_size:
                break
            self._check_alive()
            time.sleep(0.1)
        self.address = json.loads(scheduler_file.read_text())["address"]
        for name, code_root in workers.items():
            folder = root / name
            self._start(["worker", self.address, "--name", name, "--nthreads", "1",
                         "--local-directory", str(folder / "scratch"), "--no-dashboard",
                         "--host", "127.0.0.1"], folder, code_root)
        self.client = distributed.Client(self.address, timeout="60s")
        self.client.wait_for_workers(len(workers), timeout=120)

    def _start(self, args: list[str], folder: Path, code_root: Path) -> None:
        folder.mkdir(parents=True)
        env = {k: v for k, v in os.environ.items() if k != "PREFECT_API_URL"}
        # the code each process imports: a checkout at code_root (the worker's own copy)
        env["PYTHONPATH"] = str(code_root)
        env[chunks.WORKER_ENV_VARIABLE] = chunks.worker_env_value()  # as the README says
        log = folder.parent / f"{folder.name}.log"
        self.logs.append(log)
        with open(log, "wb") as out:
            self.procs.append(subprocess.Popen([sys.executable, "-m", "dask", *args], cwd=folder,
                                               env=env, stdout=out, stderr=subprocess.STDOUT,
                                               start_new_session=True))

    def _check_alive(self) -> None:
        for proc, log in zip(self.procs, self.logs):
            if proc.poll() is not None:
                raise RuntimeError(f"{proc.args} ended: {log.read_text()[-2000:]}")

    def on_workers(self, func) -> dict:
        """``func()`` in every worker process, by worker name."""
        names = {addr: info["name"] for addr, info in self.client.scheduler_info(n_workers=-1)["workers"].items()}
        return {names[addr]: value for addr, value in self.client.run(func).items()}

    def stop(self) -> None:
        if self.client is not None:
            self.client.close()
        for proc in reversed(self.procs):
            if proc.poll() is None:
                proc.terminate()
        for proc in self.procs:
            try:
                proc.wait(timeout=30)
            except subprocess.TimeoutExpired:
                proc.kill()
                proc.wait()


def _prefect_imported() -> bool:
    return "prefect" in sys.modules


def _worker_state() -> dict:
    import fieldlimits
    from fieldlimits.pipeline import chunks

    return {"version": chunks._WORKER_VERSION, "package": fieldlimits.__file__, "cwd": os.getcwd(),
            "malloc": {k: os.environ.get(k) for k in chunks.WORKER_MALLOC_ENV}}


def _version_here() -> str:
    from fieldlimits.pipeline.steps import code_version

    return code_version()


def _results(db: Path) -> dict[str, pd.DataFrame]:
    queries = {
        "results_direction": "SELECT * EXCLUDE (run_id) FROM latest_results_direction ORDER BY "
                             "airfield_id, runway_id, aircraft_type_id, month, condition, basis, reliability",
        "results_airfield": "SELECT * EXCLUDE (run_id) FROM latest_results_airfield ORDER BY "
                            "airfield_id, aircraft_type_id, month, condition, basis, reliability",
        "route_payload": "SELECT * EXCLUDE (run_id) FROM latest_route_payload ORDER BY ALL",
    }
    with store.reader(db) as con:
        return {name: con.sql(q).df() for name, q in queries.items()}


@pytest.fixture(scope="module")
def cluster(tmp_path_factory):
    root = tmp_path_factory.mktemp("cluster")
    c = _Cluster(root, {"worker-a": REPO, "worker-b": REPO})
    yield c
    c.stop()


@pytest.fixture(scope="module")
def cluster_run(cluster, tmp_path_factory, demo_dir):
    client_folder = tmp_path_factory.mktemp("client")
    db = client_folder / "dask.duckdb"
    out = cli("run", demo_dir, "--db", db, "--cluster", cluster.address, *RUN_OPTIONS,
              cwd=client_folder, env={"PREFECT_HOME": str(client_folder / "prefect-home")}, timeout=900)
    assert out.returncode == 0, out.stderr
    return db, out


def test_separate_workers_give_the_plain_runs_rows(cluster_run, tmp_path, demo_dir):
    db, _ = cluster_run
    plain_db = tmp_path / "plain.duckdb"
    out = cli("run", demo_dir, "--db", plain_db, "--no-prefect", *RUN_OPTIONS, cwd=tmp_path)
    assert out.returncode == 0, out.stderr
    with store.reader(db) as con:
        status, chunks_done = con.sql("SELECT status, chunks FROM latest_run").fetchall()[0]
    assert status == "complete" and chunks_done > 4
    dask_rows, plain_rows = _results(db), _results(plain_db)
    assert len(dask_rows["results_direction"]) > 0
    assert (dask_rows["results_airfield"]["basis"] == "reliability").any()
    assert len(dask_rows["route_payload"]) > 0
    for name in plain_rows:
        pd.testing.assert_frame_equal(dask_rows[name], plain_rows[name], obj=name)


def test_every_worker_worked_in_its_own_folder_without_prefect(cluster, cluster_run):
    db, _ = cluster_run
    with store.reader(db) as con:
        [(run_version,)] = con.sql("SELECT code_version FROM latest_run").fetchall()
    states = cluster.on_workers(_worker_state)
    assert sorted(states) == ["worker-a", "worker-b"]
    for name, state in states.items():
        assert state["version"] == run_version, name  # it computed chunks, with the run's code
        assert Path(state["cwd"]) == cluster.root / name
        assert state["malloc"] == chunks.WORKER_MALLOC_ENV, name  # the README's worker setting works
        scratch = cluster.root / name / "scratch"
        assert not list(scratch.rglob("fieldlimits-chunk-*")), name  # its scratch removed
        assert not list((cluster.root / name).rglob("*.duckdb*"))
    # the workers never imported Prefect, so no Prefect server of theirs can have started
    assert cluster.on_workers(_prefect_imported) == {"worker-a": False, "worker-b": False}
    assert not list(db.parent.glob("*.work/*"))  # the client's work folder is gone


def _other_checkout(folder: Path) -> Path:
    """A copy of the package with one source file changed: another code version."""
    for name in _PACKAGE_FOLDERS:
        shutil.copytree(REPO / name, folder / name, ignore=shutil.ignore_patterns("__pycache__"))
    shutil.copy(REPO / "pyproject.toml", folder / "pyproject.toml")
    constants = folder / "physics" / "constants.py"
    constants.write_text(constants.read_text() + "\n# a worker with a changed source file\n")
    return folder


def test_a_worker_with_other_code_fails_the_run_naming_both_versions(tmp_path, demo_dir):
    other = _other_checkout(tmp_path / "other-code")
    c = _Cluster(tmp_path / "cluster", {"worker-old": other})
    try:
        [state] = c.on_workers(_worker_state).values()
        assert Path(state["package"]).parent.parent == other  # the worker runs the copy
        worker_version = c.on_workers(_version_here)["worker-old"]
        db = tmp_path / "client" / "mixed.duckdb"
        db.parent.mkdir()
        out = cli("run", demo_dir, "--db", db, "--cluster", c.address, *RUN_OPTIONS,
                  cwd=db.parent, env={"PREFECT_HOME": str(tmp_path / "prefect-home")}, timeout=600)
    finally:
        c.stop()
    assert out.returncode == 1, out.stderr
    with store.reader(db) as con:
        [(status, message, client_version)] = con.sql(
            "SELECT status, error, code_version FROM runs ORDER BY run_id DESC LIMIT 1").fetchall()
    assert status == "failed" and worker_version != client_version
    assert worker_version in message and client_version in message, message
    assert worker_version in out.stderr and client_version in out.stderr, out.stderr
