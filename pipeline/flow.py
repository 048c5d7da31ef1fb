"""The Prefect flow: the steps of :mod:`pipeline.steps` as tasks, wired with no logic of their own.

``fieldlimits_run`` validates, registers the run, builds the case arrays, submits one task per
chunk (a few thousand cases each) to the task runner, picks the best runway directions, adds
route payloads and hands everything to ONE writer task. Tasks receive paths, numbers and the
small prepared-run object, never database connections or big frames.

It runs without a server: with ``PREFECT_API_URL`` unset, Prefect starts its temporary local
API. The offline settings are applied by :mod:`pipeline.settings` before Prefect is imported.
A Dask cluster is used when ``cluster`` is given (``prefect-dask``; see DEVELOPERS.md).
"""

from __future__ import annotations

import time

import pipeline.settings  # noqa: F401  (offline defaults before prefect is imported)

from prefect import flow, task
from prefect.cache_policies import NO_CACHE
from prefect.futures import as_completed
from prefect.task_runners import ThreadPoolTaskRunner

from pipeline import chunks, progress, steps
from pipeline.steps import RunParams

FLOW_NAME = "fieldlimits-run"


@task(name="validate-and-plan", cache_policy=NO_CACHE)
def prepare_task(input_dir: str, db_path: str, params: RunParams, work_root: str | None):
    return steps.prepare_run(input_dir, db_path, params, work_root)


@task(name="register-run", cache_policy=NO_CACHE)
def register_task(prepared):
    return steps.register(prepared)


@task(name="build-cases", cache_policy=NO_CACHE)
def build_cases_task(prepared, run_id: int):
    return str(steps.build_cases(prepared, run_id))


@task(name="compute-chunk", retries=1, cache_policy=NO_CACHE)
def compute_chunk_task(work: str, chunk: int, run_id: int, key_params: dict):
    return chunks.compute_chunk(work, chunk, run_id, key_params)


@task(name="copy-reused-results", cache_policy=NO_CACHE)
def copy_reused_task(prepared, run_id: int, work: str):
    return steps.copy_reused(prepared, run_id, work)


@task(name="best-directions", cache_policy=NO_CACHE)
def best_directions_task(work: str, results):
    return str(steps.best_directions(work, results))


@task(name="route-payloads", cache_policy=NO_CACHE)
def route_payloads_task(prepared, work: str, best_path: str):
    out = steps.route_payloads(prepared, work, best_path)
    return str(out) if out else None


@task(name="write-duckdb", cache_policy=NO_CACHE)
def load_task(prepared, run_id: int, results, best_path: str, route_path: str | None, reused=None):
    return steps.load(prepared, run_id, results, best_path, route_path, reused)


#: Environment of the Dask workers' processes (see _task_runner); remote workers should be
#: started with it too (DEVELOPERS.md).
WORKER_MALLOC_ENV = {"MALLOC_MMAP_THRESHOLD_": "33554432", "MALLOC_TRIM_THRESHOLD_": "67108864"}


def _task_runner(cluster: str | None, workers: int):
    if not cluster:
        return ThreadPoolTaskRunner(max_workers=workers)
    try:
        from prefect_dask import DaskTaskRunner
    except ImportError:
        from pipeline.errors import BadInput

        raise BadInput("--cluster needs the dask extra: pip install 'fieldlimits[dask]'") from None
    if cluster == "local":
        import dask

        share_temporary_api()  # the workers report to this process's temporary API

        # Dask's nanny starts workers with MALLOC_TRIM_THRESHOLD_=65536, which also fixes
        # glibc's mmap threshold at 128 KiB: every large numpy temporary is then mapped and
        # unmapped again, page faults in the kernel cost more than the arithmetic (measured:
        # 3 min system time in a 5 min run). These are glibc's own dynamic limits at their
        # largest (32 MiB, trim at twice that), as in a plain run.
        dask.config.set({"distributed.nanny.pre-spawn-environ": dict(
            dask.config.get("distributed.nanny.pre-spawn-environ", {}), **WORKER_MALLOC_ENV)})
        return DaskTaskRunner(cluster_kwargs={"n_workers": workers, "threads_per_worker": 1,
                                              "dashboard_address": None})
    return DaskTaskRunner(address=cluster)


@flow(name=FLOW_NAME, log_prints=False, validate_parameters=False)
def fieldlimits_run(input_dir: str, db_path: str = "fieldlimits.duckdb",
                    params: dict | None = None, work_root: str | None = None):
    """Compute every runway direction × month × type × condition and store the run.

    ``params`` are the fields of :class:`pipeline.steps.RunParams` as a plain dict (so a
    deployment can store them); missing ones take their defaults.
    """
    t0 = time.monotonic()
    params = RunParams.from_dict(params or {})
    prepared = prepare_task(input_dir, db_path, params, work_root)
    run_id = register_task(prepared)
    try:
        work = build_cases_task(prepared, run_id)
        key_params = prepared.chunk_params()
        n = prepared.plan.n_chunks
        futures = [compute_chunk_task.submit(work, i, run_id, key_params) for i in range(n)]
        results = []
        for done, fut in enumerate(as_completed(futures), start=1):
            results.append(fut.result())
            progress.report(done, n, time.monotonic() - t0)
        chunks.shutdown_pool()  # the worker processes' memory is free for the load
        results.sort(key=lambda r: r.chunk)
        reused = copy_reused_task(prepared, run_id, work)
        best = best_directions_task(work, results)
        route = route_payloads_task(prepared, work, best)
        rows = load_task(prepared, run_id, results, best, route, reused)
    except BaseException as exc:
        steps.fail(prepared, run_id, exc)
        steps.cleanup(prepared, run_id)
        raise
    steps.cleanup(prepared, run_id)
    return steps.summarise(prepared, run_id, time.monotonic() - t0, rows)


def share_temporary_api() -> str | None:
    """Start Prefect's temporary API in this process and point new child processes at it.

    Without ``PREFECT_API_URL`` every process that runs a task starts a temporary API server
    of its own: the workers of a local Dask cluster would each spend about 10 s on it (and
    record their task runs where nobody sees them). The server is Prefect's own (stopped at
    exit); this process goes on using it as before. Returns the URL given to the children,
    or None when ``PREFECT_API_URL`` is already set.
    """
    import os

    if os.environ.get("PREFECT_API_URL"):
        return None
    from prefect.server.api.server import SubprocessASGIServer

    server = SubprocessASGIServer()  # the instance this process's client uses too
    server.start()
    os.environ["PREFECT_API_URL"] = server.api_url
    return server.api_url


def run_with_prefect(input_dir, db_path, params: RunParams | None = None, *, cluster: str | None = None,
                     workers: int | None = None, work_root=None):
    """Run the flow (temporary local Prefect API unless PREFECT_API_URL is set)."""
    import os

    n = workers or int(os.environ.get("PREFECT_TASKS_RUNNER_THREAD_POOL_MAX_WORKERS", "2"))
    runner = _task_runner(cluster, n)
    return fieldlimits_run.with_options(task_runner=runner)(
        str(input_dir), str(db_path), (params or RunParams()).as_dict(),
        str(work_root) if work_root else None)
