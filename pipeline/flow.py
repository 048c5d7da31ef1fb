"""The Prefect flow: the steps of :mod:`pipeline.steps` as tasks, wired with no logic of their own.

``fieldlimits_run`` validates, registers the run, builds the case arrays, submits one task per
chunk (a few thousand cases each) to the task runner, picks the best runway directions, adds
route payloads and hands everything to ONE writer task. Tasks receive paths, numbers and the
small prepared-run object, never database connections or big frames.

It runs without a server: ``fieldlimits run`` starts Prefect's temporary local API itself
(:mod:`pipeline.prefect_api`), and with ``PREFECT_API_URL`` unset a plain call has Prefect start
one. The offline settings are applied by :mod:`pipeline.settings` before Prefect is imported.
With ``cluster`` (a Dask scheduler address, or ``local``) the chunk tasks send their work to
a Dask cluster (:class:`DaskChunkRunner`): the data travels through Dask, the workers share no
folder with the client and run no Prefect, and a worker with other code than the client's
fails its chunk with both code versions named (see DEVELOPERS.md, Dask).

What a Prefect user sees: flow runs named after the network and the scenario
(``demo network · baseline``, ``net2000 · temperature +2 K``; :func:`flow_run_name`), chunk
task runs named by chunk, the run's step messages (the ``fieldlimits.run`` logger) in the
flow run's log, which reaches the UI of a server the user points at, and the run summary as a
markdown artifact (key ``fieldlimits-run-summary``).
"""

from __future__ import annotations

import logging
import time

import fieldlimits.pipeline.settings  # noqa: F401  (offline defaults before prefect is imported)

from prefect import flow, get_run_logger, task
from prefect.cache_policies import NO_CACHE
from prefect.futures import as_completed
from prefect.task_runners import ThreadPoolTaskRunner

from fieldlimits.pipeline import chunks, progress, steps
from fieldlimits.pipeline.steps import RunParams

FLOW_NAME = "fieldlimits-run"
SUMMARY_ARTIFACT = "fieldlimits-run-summary"


def flow_run_name() -> str:
    """``<network> · <scenario>``, from the flow run's parameters."""
    from prefect.runtime import flow_run

    p = flow_run.parameters
    params = RunParams.from_dict(p.get("params") or {})
    return f"{steps.network_name(p.get('input_dir', '?'))} · {params.scenario}"

@task(name="validate-and-plan", cache_policy=NO_CACHE)
def prepare_task(input_dir: str, db_path: str, params: RunParams, work_root: str | None):
    return steps.prepare_run(input_dir, db_path, params, work_root)


@task(name="register-run", cache_policy=NO_CACHE)
def register_task(prepared):
    return steps.register(prepared)


@task(name="build-cases", cache_policy=NO_CACHE)
def build_cases_task(prepared, run_id: int):
    return str(steps.build_cases(prepared, run_id))


@task(name="compute-chunk", task_run_name="compute-chunk-{chunk}", retries=1, cache_policy=NO_CACHE)
def compute_chunk_task(work: str, chunk: int, run_id: int, key_params: dict, dask=None):
    if dask is not None:
        return dask.compute(work, chunk, run_id, key_params)
    return chunks.compute_chunk(work, chunk, run_id, key_params)


@task(name="reference-reused-results", cache_policy=NO_CACHE)
def reference_reused_task(prepared, run_id: int, work: str):
    return steps.reference_reused(prepared, run_id, work)


@task(name="best-directions", cache_policy=NO_CACHE)
def best_directions_task(work: str, results):
    return steps.best_directions(work, results)


@task(name="route-payloads", cache_policy=NO_CACHE)
def route_payloads_task(prepared, work: str, best_path: list[str]):
    out = steps.route_payloads(prepared, work, best_path)
    return str(out) if out else None


@task(name="write-duckdb", cache_policy=NO_CACHE)
def load_task(prepared, run_id: int, results, best_path: list[str], route_path: str | None, reused=None):
    return steps.load(prepared, run_id, results, best_path, route_path, reused)


#: Environment of the Dask workers' processes; remote workers should be started with it too
#: (DEVELOPERS.md).
WORKER_MALLOC_ENV = chunks.WORKER_MALLOC_ENV


class DaskChunkRunner(ThreadPoolTaskRunner):
    """Prefect's thread pool, with the chunk tasks' work sent to a Dask cluster.

    Every task runs in this process as with the plain thread pool, so Prefect records all of
    them in the client's API (a server of the user's, or the temporary one) and the Dask
    workers never run Prefect: no API to reach, no server of their own. A chunk task reads
    its chunk's inputs, sends them through Dask (:class:`pipeline.chunks.DaskChunks`) and
    writes the rows that come back. On entering, the runner connects to the cluster and sizes
    its pool to the cluster's worker threads plus one, so each worker has a chunk to do and
    the next chunk's inputs are read meanwhile.
    """

    def __init__(self, cluster: str, workers: int = 2):
        super().__init__(max_workers=workers + 1)
        self.cluster = cluster
        self.workers = workers
        self.dask: chunks.DaskChunks | None = None

    def duplicate(self) -> "DaskChunkRunner":
        return type(self)(self.cluster, self.workers)

    def __eq__(self, value: object) -> bool:
        return (isinstance(value, DaskChunkRunner) and self.cluster == value.cluster
                and self.workers == value.workers)

    def __enter__(self):
        self.dask = chunks.DaskChunks(self.cluster, self.workers).start()
        try:
            self._max_workers = self.dask.threads() + 1
            return super().__enter__()
        except BaseException:
            self.dask.close()
            raise

    def __exit__(self, exc_type, exc_value, traceback) -> None:
        try:
            super().__exit__(exc_type, exc_value, traceback)
        finally:
            if self.dask is not None:
                self.dask.close()
                self.dask = None

    def __getstate__(self) -> dict:
        state = super().__getstate__()
        state["dask"] = None  # a connection is not carried to another process
        return state


def _task_runner(cluster: str | None, workers: int):
    if not cluster:
        return ThreadPoolTaskRunner(max_workers=workers)
    try:
        import distributed  # noqa: F401
    except ImportError:
        from fieldlimits.pipeline.errors import BadInput

        raise BadInput("--cluster needs the dask extra: pip install 'fieldlimits[dask]'") from None
    return DaskChunkRunner(cluster, workers)


def _dask_chunks() -> "chunks.DaskChunks | None":
    """The Dask cluster of this flow run's task runner, if it has one."""
    from prefect.context import FlowRunContext

    ctx = FlowRunContext.get()
    return getattr(ctx.task_runner, "dask", None) if ctx is not None else None


class _ToRunLog(logging.Handler):
    """Passes the ``fieldlimits.run`` messages on to the flow run's logger (the Prefect UI)."""

    def __init__(self, run_logger):
        super().__init__(logging.INFO)
        self.run_logger = run_logger

    def emit(self, record: logging.LogRecord) -> None:
        try:
            self.run_logger.log(record.levelno, record.getMessage())
        except Exception:
            pass


def _summary_markdown(summary, input_dir: str, db_path: str) -> str:
    from fieldlimits.schemas.caution import CAUTION

    lines = [f"# fieldlimits run {summary.run_id}: {steps.network_name(input_dir)}, {summary.scenario}",
             "", f"**{CAUTION}**", "", f"- inputs: `{input_dir}`", f"- database: `{db_path}`",
             f"- scenario: {summary.description or summary.scenario}", "", "```",
             summary.text(), "```"]
    return "\n".join(lines)


@flow(name=FLOW_NAME, flow_run_name=flow_run_name, log_prints=False, validate_parameters=False)
def fieldlimits_run(input_dir: str, db_path: str = "fieldlimits.duckdb",
                    params: dict | None = None, work_root: str | None = None):
    """Compute every runway direction × month × type × condition and store the run.

    ``params`` are the fields of :class:`pipeline.steps.RunParams` as a plain dict (so a
    deployment can store them); missing ones take their defaults.
    """
    t0 = time.monotonic()
    params = RunParams.from_dict(params or {})
    bridge = _ToRunLog(get_run_logger())
    steps.log.addHandler(bridge)
    try:
        summary = _run(input_dir, db_path, params, work_root, t0)
    finally:
        steps.log.removeHandler(bridge)
    from prefect.artifacts import create_markdown_artifact

    create_markdown_artifact(markdown=_summary_markdown(summary, input_dir, db_path),
                             key=SUMMARY_ARTIFACT,
                             description=f"fieldlimits run {summary.run_id}: {summary.scenario}")
    get_run_logger().info("%s", summary.text())
    return summary


def _run(input_dir: str, db_path: str, params: RunParams, work_root: str | None, t0: float):
    """The flow's body: the steps as tasks (validate, register, chunks, store)."""
    prepared = prepare_task(input_dir, db_path, params, work_root)
    run_id = register_task(prepared)
    try:
        work = build_cases_task(prepared, run_id)
        key_params = prepared.chunk_params()
        n = prepared.plan.n_chunks
        dask = _dask_chunks()
        futures = [compute_chunk_task.submit(work, i, run_id, key_params, dask) for i in range(n)]
        if dask is None:  # the landing blocks in the chunks' process pool, beside the chunks
            steps.start_landing(prepared, work)
        results = []
        for done, fut in enumerate(as_completed(futures), start=1):
            results.append(fut.result())
            progress.report(done, n, time.monotonic() - t0)
        steps.await_landing(work)  # its blocks share the chunks' pool
        chunks.shutdown_pool()  # the worker processes' memory is free for the load
        results.sort(key=lambda r: r.chunk)
        reused = reference_reused_task(prepared, run_id, work)
        best = best_directions_task(work, results)
        route = route_payloads_task(prepared, work, best)
        rows = load_task(prepared, run_id, results, best, route, reused)
    except BaseException as exc:
        steps.fail(prepared, run_id, exc)
        steps.cleanup(prepared, run_id)
        raise
    steps.cleanup(prepared, run_id)
    return steps.summarise(prepared, run_id, time.monotonic() - t0, rows)


def run_with_prefect(input_dir, db_path, params: RunParams | None = None, *, cluster: str | None = None,
                     workers: int | None = None, work_root=None, server=None):
    """Run the flow: against ``server`` (a :class:`pipeline.prefect_api.TemporaryServer`
    already answering) when given, else Prefect's own temporary API unless PREFECT_API_URL is
    set."""
    import contextlib
    import os

    n = workers or int(os.environ.get("PREFECT_TASKS_RUNNER_THREAD_POOL_MAX_WORKERS", "2"))
    with server.settings() if server is not None else contextlib.nullcontext():
        if server is not None:  # processes started from here find it too
            os.environ["PREFECT_API_URL"] = server.api_url
        runner = _task_runner(cluster, n)
        try:
            return fieldlimits_run.with_options(task_runner=runner)(
                str(input_dir), str(db_path), (params or RunParams()).as_dict(),
                str(work_root) if work_root else None)
        finally:
            _send_run_logs()


def _send_run_logs(timeout_s: float = 10.0) -> None:
    """Wait until Prefect has sent the flow run's log messages to its API (they go in batches
    from a background thread): the caller may stop a temporary server next, and the run's
    last messages (its summary) would be lost with it."""
    try:
        from prefect.logging.handlers import APILogWorker

        APILogWorker.drain_all(timeout=timeout_s)
    except Exception:  # the log's delivery is best effort; the run's result stands
        pass
