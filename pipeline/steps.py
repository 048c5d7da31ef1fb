"""The steps of a run as plain functions (the Prefect tasks in :mod:`pipeline.flow` wrap them).

A run, step by step::

    prepare_run        validate + load the inputs, plan the chunks        (nothing written)
    register           record the run as 'running'                       (short DB write)
    build_cases        case arrays → <work>/cases.parquet, one row group per chunk
    compute_chunk      per chunk: solve, write parts/part-NNNNN.*.parquet (pipeline.chunks)
    best_directions    best runway direction per airfield → <work>/airfield_best.parquet
    route_payloads     routes → <work>/route_payload.parquet (when a routes table exists)
    load               everything into DuckDB in ONE transaction, run marked complete
    finish / fail      summary, or the run recorded as failed; the work folder removed

:func:`run_local` chains them in this process without Prefect (used by tests and
``fieldlimits run --no-prefect``); the Prefect flow runs the same functions as tasks.
"""

from __future__ import annotations

import dataclasses
import hashlib
import importlib
import os
import shutil
import time
from concurrent.futures import ThreadPoolExecutor, as_completed
from dataclasses import asdict, dataclass, field
from importlib import metadata
from pathlib import Path
from typing import Callable, Sequence

import duckdb
import pandas as pd

from pipeline import cases as case_io
from pipeline import chunks, store
from pipeline import progress as progress_mod
from pipeline.chunks import ChunkResult
from pipeline.inputs import Inputs, load_inputs
from schemas.results import CONDITIONS

DEFAULT_CHUNK_SIZE = 8000
DEFAULT_RELIABILITY_LEVELS = (0.50, 0.85, 0.95)
BEST_FILE = "airfield_best.parquet"
ROUTE_FILE = "route_payload.parquet"
_PACKAGES = ("physics", "schemas", "pipeline", "demo_network")


@dataclass(frozen=True)
class RunParams:
    """The parameters of a run (stored as JSON in ``runs.parameters``)."""

    temperature_offset_k: float = 0.0
    chunk_size: int = DEFAULT_CHUNK_SIZE
    conditions: tuple[str, ...] = CONDITIONS
    reliability_levels: tuple[float, ...] = DEFAULT_RELIABILITY_LEVELS

    def __post_init__(self):
        bad = [c for c in self.conditions if c not in CONDITIONS]
        if bad or not self.conditions:
            from pipeline.errors import BadInput

            raise BadInput(f"conditions must be some of {', '.join(CONDITIONS)}; got {', '.join(self.conditions) or 'none'}")

    @classmethod
    def from_dict(cls, values: dict) -> "RunParams":
        """From :meth:`as_dict` output (lists become tuples); unknown keys are an error."""
        known = {f.name for f in dataclasses.fields(cls)}
        unknown = sorted(set(values) - known)
        if unknown:
            from pipeline.errors import BadInput

            raise BadInput(f"unknown run parameters: {', '.join(unknown)}")
        values = dict(values)
        for key in ("conditions", "reliability_levels"):
            if key in values:
                values[key] = tuple(values[key])
        return cls(**values)

    def as_dict(self) -> dict:
        d = asdict(self)
        d["conditions"] = list(self.conditions)
        d["reliability_levels"] = list(self.reliability_levels)
        return d


@dataclass
class PreparedRun:
    """A validated input and its plan, before anything is written."""

    inputs: Inputs
    params: RunParams
    plan: case_io.ChunkPlan
    code_version: str
    db_path: Path
    work_root: Path

    def chunk_params(self) -> dict:
        """What identifies the computed numbers (chunk key): parameters, inputs, code."""
        return {**self.params.as_dict(), "input_hash": self.inputs.input_hash,
                "code_version": self.code_version}


def code_version() -> str:
    """Package version + a hash of the source files of physics/, schemas/, pipeline/."""
    try:
        version = metadata.version("fieldlimits")
    except metadata.PackageNotFoundError:
        version = "0+unknown"
    h = hashlib.sha256()
    root = Path(__file__).resolve().parent.parent
    for pkg in _PACKAGES:
        for path in sorted((root / pkg).rglob("*")):
            if path.suffix in (".py", ".sql") and "__pycache__" not in path.parts:
                h.update(str(path.relative_to(root)).encode())
                h.update(path.read_bytes())
    return f"{version}+{h.hexdigest()[:12]}"


def default_work_root(db_path: Path) -> Path:
    return db_path.with_name(db_path.name + ".work")


_PREPARED: dict = {}


def _folder_signature(folder: Path) -> tuple:
    try:
        return tuple(sorted((p.name, p.stat().st_size, p.stat().st_mtime_ns)
                            for p in folder.iterdir() if p.is_file()))
    except OSError:
        return ()


def _cached_inputs(input_dir) -> Inputs:
    """Load an input folder once per process while its files are unchanged.

    The command line validates before it starts Prefect (so bad input never waits for the
    Prefect server); the flow's own validation step then finds the same folder here.
    """
    folder = Path(input_dir).resolve()
    key = (str(folder), _folder_signature(folder))
    if key[1] and key in _PREPARED:
        return _PREPARED[key]
    inputs = load_inputs(folder)
    _PREPARED.clear()
    _PREPARED[key] = inputs
    return inputs


def prepare_run(input_dir, db_path, params: RunParams, work_root=None) -> PreparedRun:
    """Validate and load the inputs and plan the chunks; nothing is written."""
    inputs = _cached_inputs(input_dir)
    plan = case_io.plan_chunks(inputs.tables, params.chunk_size, params.conditions)
    db = Path(db_path).resolve()
    root = Path(work_root).resolve() if work_root else default_work_root(db)
    return PreparedRun(inputs, params, plan, code_version(), db, root)


def register(prepared: PreparedRun) -> int:
    """Record the run as running; return its run_id."""
    record = store.RunRecord(
        input_dir=str(prepared.inputs.folder),
        parameters=prepared.params.as_dict(),
        temperature_offset_k=prepared.params.temperature_offset_k,
        input_hash=prepared.inputs.input_hash,
        input_hashes=prepared.inputs.hashes,
        code_version=prepared.code_version,
        airfields=prepared.plan.n_airfields,
        cases=prepared.plan.n_cases,
        chunks=prepared.plan.n_chunks,
    )
    return store.register_run(prepared.db_path, record)


def work_dir(prepared: PreparedRun, run_id: int) -> Path:
    return prepared.work_root / f"run-{run_id:06d}"


def build_cases(prepared: PreparedRun, run_id: int) -> Path:
    """Write the run's case arrays and tables into its work folder; return the folder."""
    return case_io.write_cases(prepared.inputs.tables, prepared.plan, work_dir(prepared, run_id),
                               prepared.params.temperature_offset_k, prepared.params.conditions)


def best_directions(work: Path, results: Sequence[ChunkResult]) -> Path:
    """Best runway direction per airfield × month × type × condition × basis → Parquet.

    Uses an in-memory DuckDB over the part files (``pipeline/sql/best_direction.sql``);
    bases that a producer supplied at airfield level are left out here.
    """
    out = Path(work) / BEST_FILE
    tmp = out.with_name(f".{out.name}.tmp")
    bases = sorted({b for r in results for b in r.airfield_bases})
    con = duckdb.connect()
    try:
        con.execute("SET threads = 2")
        table = con.sql(store.sql("best_direction"), params={
            "files": [r.direction_path for r in results],
            "airfield_level_bases": bases}).to_arrow_table()
    finally:
        con.close()
    import pyarrow.parquet as pq

    pq.write_table(table.cast(chunks.RESULT_SCHEMA), tmp)
    os.replace(tmp, out)
    return out


def route_payloads(prepared: PreparedRun, work: Path, best_path: Path) -> Path | None:
    """Route payloads through ``pipeline.routes.route_payload_frame`` when routes exist."""
    tables = prepared.inputs.tables
    if "routes" not in tables or tables["routes"] is None or len(tables["routes"]) == 0:
        return None
    try:
        routes = importlib.import_module("pipeline.routes")
    except ModuleNotFoundError as exc:
        if exc.name == "pipeline.routes":
            return None
        raise
    func = getattr(routes, "route_payload_frame", None)
    if func is None:
        return None
    airfield = pd.read_parquet(best_path)
    airfield_parts = [p for p in sorted((Path(work) / chunks.PARTS_DIR).glob("*.airfield.parquet"))]
    if airfield_parts:
        airfield = pd.concat([airfield] + [pd.read_parquet(p) for p in airfield_parts], ignore_index=True)
    frame = func(tables, airfield, prepared.params.as_dict())
    if frame is None:
        return None
    out = Path(work) / ROUTE_FILE
    tmp = out.with_name(f".{out.name}.tmp")
    frame.to_parquet(tmp, index=False)
    os.replace(tmp, out)
    return out


def load(prepared: PreparedRun, run_id: int, results: Sequence[ChunkResult], best_path: Path,
         route_path: Path | None) -> dict[str, int]:
    """The single writer: all of the run in one DuckDB transaction."""
    inputs = [store.InputTable(name, prepared.inputs.files.get(name), prepared.inputs.hashes[name], frame)
              for name, frame in prepared.inputs.user_tables.items() if name in prepared.inputs.hashes]
    spec = store.LoadSpec(
        run_id=run_id,
        direction_parts=[r.direction_path for r in results],
        airfield_parts=[str(best_path)] + [r.airfield_path for r in results if r.airfield_path],
        inputs=inputs,
        route_payload=pd.read_parquet(route_path) if route_path else None,
    )
    return store.load_run(prepared.db_path, spec)


def fail(prepared: PreparedRun, run_id: int, exc: BaseException) -> None:
    """Record the run as failed (no-op if the load already did)."""
    try:
        store.fail_run(prepared.db_path, run_id, f"{type(exc).__name__}: {exc}")
    except Exception:
        pass


def cleanup(prepared: PreparedRun, run_id: int) -> None:
    """Remove the run's work folder (and the work root if it is empty)."""
    shutil.rmtree(work_dir(prepared, run_id), ignore_errors=True)
    try:
        prepared.work_root.rmdir()
    except OSError:
        pass


# --------------------------------------------------------------------------- summary
@dataclass
class RunSummary:
    """What ``fieldlimits run`` prints at the end."""

    run_id: int
    airfields: int
    cases: int
    chunks: int
    seconds: float
    rows: dict[str, int]
    restrictions: pd.DataFrame = field(default_factory=pd.DataFrame)

    def text(self) -> str:
        lines = [
            f"run {self.run_id} complete: {self.airfields} airfields, {self.cases} cases "
            f"in {self.chunks} chunks, {self.seconds:.1f} s",
            f"rows: results_direction {self.rows.get('rows_direction', 0)}, "
            f"results_airfield {self.rows.get('rows_airfield', 0)}, "
            f"route_payload {self.rows.get('rows_route_payload', 0)}",
        ]
        if len(self.restrictions):
            lines.append("airfield-months below MTOW (best runway direction, design day):")
            for r in self.restrictions.itertuples(index=False):
                lines.append(
                    f"  {r.aircraft_type_id:<20} {r.condition:<4} {r.restricted_months:>5} of "
                    f"{r.airfield_months} months at {r.restricted_airfields} airfields"
                    + (f" ({r.no_takeoff_months} with no takeoff possible)" if r.no_takeoff_months else ""))
        return "\n".join(lines)


def summarise(prepared: PreparedRun, run_id: int, seconds: float, rows: dict[str, int]) -> RunSummary:
    return RunSummary(run_id, prepared.plan.n_airfields, prepared.plan.n_cases, prepared.plan.n_chunks,
                      seconds, rows, store.run_summary(prepared.db_path, run_id))


# --------------------------------------------------------------------------- local driver
ProgressFn = Callable[[int, int, float], None]


def run_local(input_dir, db_path, params: RunParams = RunParams(), progress: ProgressFn | None = None,
              workers: int = 2, work_root=None) -> RunSummary:
    """Run every step in this process without Prefect (threads for the chunks)."""
    t0 = time.monotonic()
    prepared = prepare_run(input_dir, db_path, params, work_root)
    run_id = register(prepared)
    try:
        work = build_cases(prepared, run_id)
        key_params = prepared.chunk_params()
        results: list[ChunkResult] = []
        n = prepared.plan.n_chunks
        with ThreadPoolExecutor(max_workers=max(1, workers)) as pool:
            futures = [pool.submit(chunks.compute_chunk, work, i, run_id, key_params) for i in range(n)]
            for fut in as_completed(futures):
                results.append(fut.result())
                (progress or progress_mod.report)(len(results), n, time.monotonic() - t0)
        results.sort(key=lambda r: r.chunk)
        best = best_directions(work, results)
        route = route_payloads(prepared, work, best)
        rows = load(prepared, run_id, results, best, route)
    except BaseException as exc:
        fail(prepared, run_id, exc)
        cleanup(prepared, run_id)
        raise
    cleanup(prepared, run_id)
    return summarise(prepared, run_id, time.monotonic() - t0, rows)
