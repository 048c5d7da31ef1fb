"""The steps of a run as plain functions (the Prefect tasks in :mod:`pipeline.flow` wrap them).

A run, step by step::

    prepare_run        validate + load the inputs, plan the chunks        (nothing written)
    register           record the run as 'running'                       (short DB write)
    build_cases        stations → <work>/stations.parquet, one row group per chunk
    compute_chunk      per chunk: expand its cases, solve, write parts/part-NNNNN.*.parquet
    start_landing      the route destinations' landing limits, solved in the chunks' process
                       pool while the chunks run (large runs; else in route_payloads)
    reference_reused   which earlier run's stored rows each unchanged airfield × type reads
    best_directions    best runway direction per airfield: the chunks' parts/part-NNNNN.best.parquet
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
import json
import logging
import math
import os
import shutil
import threading
import time
from concurrent.futures import Future, ThreadPoolExecutor, as_completed
from dataclasses import asdict, dataclass, field
from importlib import metadata
from pathlib import Path
from typing import Callable, Sequence

import pandas as pd

from fieldlimits.pipeline import cases as case_io
from fieldlimits.pipeline import chunks, store
from fieldlimits.pipeline import progress as progress_mod
from fieldlimits.pipeline.chunks import ChunkResult
from fieldlimits.pipeline.inputs import Inputs, load_inputs
from fieldlimits.schemas.results import CONDITIONS

#: Messages about the run's steps; ``fieldlimits run`` prints them on stderr and the Prefect
#: flow also sends them to the flow run's log (the Prefect UI).
log = logging.getLogger("fieldlimits.run")
log.setLevel(logging.INFO)  # shown only where a handler is attached (the CLI, the flow)

DEFAULT_CHUNK_SIZE = 48000  # numpy call overhead per case about halved at 32 000 vs 8 000, ~5 % less again at 48 000; 64 000 saves ~6 % more but its processes peak 0.15 GB higher
DEFAULT_RELIABILITY_LEVELS = (0.50, 0.85, 0.95)
BEST_FILE = "airfield_best.parquet"
ROUTE_FILE = "route_payload.parquet"
_PACKAGES = ("physics", "schemas", "pipeline", "demo_network")


#: Largest temperature offset a scenario may add [K]: beyond it the monthly temperatures leave
#: the range the climate table allows (−60 … 60 °C) for most climates; more is a typing slip.
MAX_TEMPERATURE_OFFSET_K = 30.0


def scenario_label(temperature_offset_k: float) -> str:
    """``baseline`` (no offset) or ``temperature +2 K``: the name of a run's scenario.

    The ``run_scenarios`` view spells the same (``printf('temperature %+g K', …)``); a test
    holds the two together.
    """
    offset = float(temperature_offset_k or 0.0)
    return "baseline" if offset == 0 else f"temperature {offset:+g} K"


def _bad(message: str):
    from fieldlimits.pipeline.errors import BadInput

    return BadInput(message)


@dataclass(frozen=True)
class RunParams:
    """The parameters of a run (stored as JSON in ``runs.parameters``).

    Every value is checked when the object is made, so a wrong option stops the command
    with exit status 2 before any work starts (``fieldlimits run`` and ``serve`` alike).
    """

    temperature_offset_k: float = 0.0
    chunk_size: int = DEFAULT_CHUNK_SIZE
    conditions: tuple[str, ...] = CONDITIONS
    reliability_levels: tuple[float, ...] = DEFAULT_RELIABILITY_LEVELS
    reliability_conditions: tuple[str, ...] = ("dry",)  # runway conditions with reliability rows
    # the dispatch rule for landing at the destination (pipeline.landing): the dry landing
    # distance may use this share of the LDA (14 CFR 121.195(b): 0.6; propeller types 0.7
    # where the operator uses that rule, 121.195(c)); wet: the required distance +15 % (d)
    landing_jet_share: float = 0.6
    landing_turboprop_share: float = 0.6
    landing_wet_increase: float = 0.15
    reuse: bool = True  # reuse unchanged airfield × type results of an earlier run

    def __post_init__(self):
        bad = [c for c in self.conditions if c not in CONDITIONS]
        if bad or not self.conditions:
            raise _bad(f"--conditions must be some of {', '.join(CONDITIONS)}; "
                       f"got {', '.join(self.conditions) or 'none'}")
        if len(set(self.conditions)) != len(self.conditions):
            raise _bad(f"--conditions lists a condition twice: {', '.join(self.conditions)}")
        self._check_landing_rule()
        extra = [c for c in self.reliability_conditions if c not in self.conditions]
        if extra:
            raise _bad(f"--reliability-conditions must be among the run's conditions "
                       f"({', '.join(self.conditions)}); got {', '.join(extra)}")
        offset = self.temperature_offset_k
        if not isinstance(offset, (int, float)) or not math.isfinite(offset) \
                or abs(offset) > MAX_TEMPERATURE_OFFSET_K:
            raise _bad(f"--temperature-offset must be a number of kelvin between "
                       f"-{MAX_TEMPERATURE_OFFSET_K:g} and +{MAX_TEMPERATURE_OFFSET_K:g}; got {offset}")
        self._check_levels()
        if not isinstance(self.chunk_size, int) or self.chunk_size < 1:
            raise _bad(f"--chunk-size must be a whole number of cases, at least 1; got {self.chunk_size}")

    def _check_levels(self) -> None:
        """Reliability levels are shares of days strictly between 0 and 1, each once."""
        levels = self.reliability_levels
        wrong = [p for p in levels if not isinstance(p, (int, float)) or not math.isfinite(p)
                 or not 0.0 < p < 1.0]
        if wrong:
            shown = ", ".join(f"{p:g}" if isinstance(p, (int, float)) else repr(p) for p in levels)
            hint = ""
            if all(isinstance(p, (int, float)) and 5.0 <= p < 100.0 for p in wrong):
                hint = (" (percentages? write "
                        + ",".join(f"{p / 100:g}" for p in levels if isinstance(p, (int, float)))
                        + ")")
            raise _bad(f"--reliability levels are shares of days strictly between 0 and 1, e.g. "
                       f"0.5,0.85,0.95, or 'none'; got {shown}{hint}")
        if len(set(levels)) != len(levels):
            raise _bad(f"--reliability lists a level twice: {', '.join(f'{p:g}' for p in levels)}")

    @property
    def scenario(self) -> str:
        """``baseline`` or ``temperature +2 K`` (:func:`scenario_label`)."""
        return scenario_label(self.temperature_offset_k)

    def describe(self) -> str:
        """The scenario and the options that choose the rows, in one line."""
        levels = (", ".join(f"{p:g}" for p in self.reliability_levels) + " on "
                  + (", ".join(self.reliability_conditions) or "no condition")
                  if self.reliability_levels else "none")
        return (f"{self.scenario}; conditions {', '.join(self.conditions)}; "
                f"reliability levels {levels}")

    def _check_landing_rule(self) -> None:
        """Landing shares in (0, 1], the wet increase from 0 to 1 (100 %)."""
        from fieldlimits.pipeline.errors import BadInput

        for name in ("landing_jet_share", "landing_turboprop_share"):
            v = getattr(self, name)
            if not isinstance(v, (int, float)) or not 0.0 < float(v) <= 1.0:
                raise BadInput(f"--{name.replace('_', '-')} is the share of the landing distance "
                               f"available the dry landing distance may use, above 0 and at most 1 "
                               f"(0.6 for jets, 14 CFR 121.195(b); 0.7 for turboprops under the 70 % rule); got {v}")
        v = self.landing_wet_increase
        if not isinstance(v, (int, float)) or not 0.0 <= float(v) <= 1.0:
            raise BadInput(f"--landing-wet-increase is a share from 0 to 1 (0.15 = +15 %, 14 CFR "
                           f"121.195(d)); got {v}")

    @classmethod
    def from_dict(cls, values: dict) -> "RunParams":
        """From :meth:`as_dict` output (lists become tuples); unknown keys are an error."""
        known = {f.name for f in dataclasses.fields(cls)}
        unknown = sorted(set(values) - known)
        if unknown:
            from fieldlimits.pipeline.errors import BadInput

            raise BadInput(f"unknown run parameters: {', '.join(unknown)}")
        values = dict(values)
        for key in ("conditions", "reliability_levels", "reliability_conditions"):
            if key in values:
                values[key] = tuple(values[key])
        return cls(**values)

    def as_dict(self) -> dict:
        d = asdict(self)
        d["conditions"] = list(self.conditions)
        d["reliability_levels"] = list(self.reliability_levels)
        d["reliability_conditions"] = list(self.reliability_conditions)
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
    reuse_key: str = ""
    hashes: pd.DataFrame | None = None  # kind, key, sha256
    reuse: "ReusePlan | None" = None
    n_airfields: int = 0

    @property
    def skip(self) -> case_io.Skip:
        return self.reuse.skip if self.reuse else case_io.Skip()

    @property
    def reused_cases(self) -> int:
        return self.reuse.cases if self.reuse else 0

    def chunk_params(self) -> dict:
        """What identifies the computed numbers (chunk key): parameters, inputs, code."""
        return {**self.params.as_dict(), "input_hash": self.inputs.input_hash,
                "code_version": self.code_version}


@dataclass(frozen=True)
class ReusePlan:
    """Which results of an earlier run a rerun reuses instead of computing (issue 8): stored
    by reference, never copied (:func:`reference_reused`)."""

    from_run_id: int
    skip: case_io.Skip
    cases: int  # design-day direction cases reused
    routes_from_run_id: int | None = None  # whole input unchanged: that run's route results

    def pairs(self) -> pd.DataFrame:
        return pd.DataFrame([(a, t) for a in sorted(self.skip.airfields) for t in sorted(self.skip.types)],
                            columns=["airfield_id", "aircraft_type_id"])


def reuse_key(code: str, params: RunParams) -> str:
    """Hash of what changes the numbers: code version and the result-changing parameters."""
    d = params.as_dict()
    for k in ("chunk_size", "reuse"):
        d.pop(k, None)
    return hashlib.sha256(json.dumps({"code": code, "params": d}, sort_keys=True).encode()).hexdigest()


def content_hashes(inputs: Inputs) -> pd.DataFrame:
    """Per-airfield and per-aircraft-type content hashes (:mod:`schemas.hashing`)."""
    from fieldlimits.schemas import hashing

    rows = [("airfield", k, v)
            for k, v in hashing.airfield_hashes(inputs.user_tables, inputs.group_digests).items()]
    rows += [("aircraft_type", k, v) for k, v in hashing.aircraft_type_hashes(inputs.user_tables).items()]
    return pd.DataFrame(rows, columns=["kind", "key", "sha256"])


def plan_reuse(inputs: Inputs, hashes: pd.DataFrame, db_path: Path, key: str,
               conditions: tuple[str, ...]) -> ReusePlan | None:
    """Unchanged airfields × unchanged types of the last complete run with the same key."""
    found = store.find_reusable(db_path, key)
    if found is None:
        return None
    prev_id, prev, prev_input_hash, routes_from = found
    merged = hashes.merge(prev, on=["kind", "key"], suffixes=("", "_prev"))
    same = merged[merged["sha256"] == merged["sha256_prev"]]
    skip = case_io.Skip(frozenset(same.loc[same.kind == "airfield", "key"]),
                        frozenset(same.loc[same.kind == "aircraft_type", "key"]))
    if not skip:
        return None
    dirs = inputs.tables["runways"].groupby("airfield_id").size()
    n_dirs = int(dirs[dirs.index.isin(list(skip.airfields))].sum())
    same_input = prev_input_hash == inputs.input_hash  # route payloads and landing limits too
    return ReusePlan(prev_id, skip, n_dirs * 12 * len(skip.types) * len(conditions),
                     routes_from if same_input else None)


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


def network_name(input_dir) -> str:
    """``demo network`` for the bundled demo, else the input folder's name (flow run names,
    progress lines)."""
    folder = Path(str(input_dir)).resolve()
    try:
        from fieldlimits.demo_network import demo_path

        if folder == Path(demo_path()).resolve():
            return "demo network"
    except Exception:
        pass
    return folder.name or str(folder)


def default_work_root(db_path: Path) -> Path:
    return db_path.with_name(db_path.name + ".work")


_PREPARED: dict = {}


def _folder_signature(folder: Path) -> tuple:
    try:
        return tuple(sorted((p.name, p.stat().st_size, p.stat().st_mtime_ns)
                            for p in folder.iterdir() if p.is_file()))
    except OSError:
        return ()


def _file_signature(path: Path) -> tuple:
    try:
        st = path.stat()
        return (st.st_size, st.st_mtime_ns)
    except OSError:
        return ()


SPOOL_PREFIX = "prepare-"
"""Spool folders (``<work root>/prepare-<host>-<pid>-<n>``): the streamed input tables between
validation and the run's work folder."""


_SPOOLS: set = set()  # spools made by this process, removed at exit if still there


def _new_spool(work_root: Path) -> Path:
    import atexit
    import socket
    import uuid

    if not _SPOOLS:
        atexit.register(_remove_spools)
    host = socket.gethostname().replace("-", "_") or "host"
    spool = work_root / f"{SPOOL_PREFIX}{host}-{os.getpid()}-{uuid.uuid4().hex[:8]}"
    _SPOOLS.add(spool)
    return spool


def _remove_spools() -> None:
    for spool in list(_SPOOLS):
        shutil.rmtree(spool, ignore_errors=True)
        try:
            spool.parent.rmdir()
        except OSError:
            pass
    _SPOOLS.clear()


def _cached_inputs(input_dir, work_root: Path | None = None) -> Inputs:
    """Load an input folder once per process while its files are unchanged.

    With ``work_root`` the large tables are streamed to a spool folder there instead of held
    (:func:`pipeline.inputs.load_inputs`); :func:`build_cases` moves the files into the run's
    work folder, after which the folder is loaded again by the next run.
    """
    folder = Path(input_dir).resolve()
    key = (str(folder), _folder_signature(folder), str(work_root))
    found = _PREPARED.get(key)
    if key[1] and found is not None and (found.spool is None or found.spool.is_dir()):
        return found
    _forget_inputs()
    inputs = load_inputs(folder, spool=_new_spool(work_root) if work_root is not None else None)
    _PREPARED[key] = inputs
    return inputs


def _forget_inputs(inputs: Inputs | None = None) -> None:
    """Drop cached inputs (all, or ``inputs``) and the prepared runs that hold them (their
    spools stay until the run takes or removes them, or the process ends)."""
    for key in [k for k, v in _PREPARED.items() if inputs is None or v is inputs]:
        del _PREPARED[key]
    for key in [k for k, v in _PREPARED_RUNS.items() if inputs is None or v.inputs is inputs]:
        del _PREPARED_RUNS[key]


_PREPARED_RUNS: dict = {}  # at most one prepared run not yet registered (prepare_run)


def prepare_run(input_dir, db_path, params: RunParams, work_root=None) -> PreparedRun:
    """Validate and load the inputs and plan the chunks; nothing is written but the spool of
    the large input tables (``<work root>/prepare-…``, moved into the run's work folder by
    :func:`build_cases`, removed by :func:`cleanup`).

    The inputs are validated once per process: a second call with the same folder (unchanged
    files), database (unchanged file), parameters and work root before the run is registered
    returns the same prepared run (``fieldlimits run`` prepares before it starts Prefect,
    and the flow's first task prepares again).
    """
    db = Path(db_path).resolve()
    root = Path(work_root).resolve() if work_root else default_work_root(db)
    folder = Path(input_dir).resolve()
    key = (str(folder), _folder_signature(folder), str(db), _file_signature(db),
           json.dumps(params.as_dict(), sort_keys=True), str(root))
    found = _PREPARED_RUNS.pop(key, None)
    if found is not None and (found.inputs.spool is None or found.inputs.spool.is_dir()):
        return found
    _PREPARED_RUNS.clear()
    inputs = _cached_inputs(folder, root)
    code = code_version()
    key_ = reuse_key(code, params)
    hashes = content_hashes(inputs)
    reuse = plan_reuse(inputs, hashes, db, key_, params.conditions) if params.reuse else None
    skip = reuse.skip if reuse else case_io.Skip()
    plan = case_io.plan_chunks(inputs.tables, params.chunk_size, params.conditions, skip)
    n_airfields = int(inputs.tables["runways"]["airfield_id"].nunique())
    prepared = PreparedRun(inputs, params, plan, code, db, root, key_, hashes, reuse, n_airfields)
    if key[1]:
        _PREPARED_RUNS[key] = prepared
    return prepared


@dataclass
class RunState:
    """What this process's run has reached, for the command line's one-line stop message."""

    db_path: Path | None = None
    run_id: int | None = None
    work_dir: Path | None = None
    recorded: str | None = None  # how the run's end was recorded ("interrupted", "failed")
    cleaned: threading.Event = field(default_factory=threading.Event)

    def remove_work_dir(self) -> None:
        """Remove the run's work folder again (a chunk task that was still computing when the
        run stopped may have written a part after :func:`cleanup`)."""
        if self.work_dir is None:
            return
        shutil.rmtree(self.work_dir, ignore_errors=True)
        try:
            self.work_dir.parent.rmdir()
        except OSError:
            pass


#: The run this process works on (one at a time from the command line).
CURRENT = RunState()


def register(prepared: PreparedRun) -> int:
    """Record the run as running; return its run_id."""
    record = store.RunRecord(
        input_dir=str(prepared.inputs.folder),
        parameters=prepared.params.as_dict(),
        temperature_offset_k=prepared.params.temperature_offset_k,
        input_hash=prepared.inputs.input_hash,
        input_hashes=prepared.inputs.hashes,
        code_version=prepared.code_version,
        airfields=prepared.n_airfields,
        cases=prepared.plan.n_cases + prepared.reused_cases,
        chunks=prepared.plan.n_chunks,
        reused_cases=prepared.reused_cases,
        reused_from_run_id=prepared.reuse.from_run_id if prepared.reuse else None,
        reuse_key=prepared.reuse_key,
        work_root=str(prepared.work_root),
    )
    for key in [k for k, v in _PREPARED_RUNS.items() if v is prepared]:
        del _PREPARED_RUNS[key]  # a later prepare_run prepares afresh
    run_id = store.register_run(prepared.db_path, record, heartbeat=True)  # until cleanup
    CURRENT.db_path, CURRENT.run_id, CURRENT.recorded = prepared.db_path, run_id, None
    CURRENT.work_dir = work_dir(prepared, run_id)
    CURRENT.cleaned.clear()
    log.info("run %d registered: %s", run_id, prepared.params.describe())
    return run_id


def work_dir(prepared: PreparedRun, run_id: int) -> Path:
    return prepared.work_root / f"run-{run_id:06d}"


#: Input tables with at least this many rows are dropped from memory once written to the
#: work folder (the wind rose of a large network: about 0.75 GB at 20 000 airfields).
RELEASE_MIN_ROWS = 1_000_000
INPUTS_DIR = "inputs"  # user-unit copies of the input tables, for the store


def build_cases(prepared: PreparedRun, run_id: int) -> Path:
    """Write the run's case arrays and tables into its work folder; return the folder.

    The user-unit input tables go to ``<work>/inputs/`` for the load step; a table of at
    least :data:`RELEASE_MIN_ROWS` rows is then released from memory (its frames are read
    from the work folder by the steps that need them).
    """
    inputs = prepared.inputs
    held = {name: frame for name, frame in inputs.tables.items() if frame is not None}
    work = case_io.write_cases(held, prepared.plan, work_dir(prepared, run_id),
                               prepared.params.temperature_offset_k, prepared.params.conditions,
                               prepared.skip)
    (work / INPUTS_DIR).mkdir(exist_ok=True)
    for name, frame in inputs.user_tables.items():
        if name in inputs.hashes and frame is not None:
            case_io.write_frame(frame, work / INPUTS_DIR / f"{name}.parquet")
    if inputs.spool is not None:  # the streamed tables, written while they were checked
        for name in inputs.released:
            for sub in (INPUTS_DIR, case_io.TABLES_DIR):
                spooled = inputs.spool / sub / f"{name}.parquet"
                if spooled.exists():
                    os.replace(spooled, work / sub / f"{name}.parquet")
            # the chunks' copy sorted by airfield and cut per chunk, as write_cases does
            case_io.align_table_file(work / case_io.TABLES_DIR / f"{name}.parquet", prepared.plan)
        shutil.rmtree(inputs.spool, ignore_errors=True)
        inputs.spool = None
    big = [name for name, frame in inputs.user_tables.items() if frame is not None and len(frame) >= RELEASE_MIN_ROWS]
    if big or inputs.released:
        _forget_inputs(inputs)  # a later run in this process loads the folder again
        for name in big:
            inputs.release(name)
    # validation, hashing and the case blocks are done: their freed memory goes back to the
    # system instead of staying in this process's heap through the chunk phase
    chunks.release_free_memory()
    return work


REUSED_SOURCES = "reused.sources.parquet"
REUSED_AIRFIELD = "reused.airfield.parquet"  # route origins only: read by the route step, not stored


def reference_reused(prepared: PreparedRun, run_id: int, work: Path) -> str | None:
    """Which stored rows the reused airfield × type pairs read; return the file that says so.

    Nothing is copied: each pair points at the run whose stored rows the previous run read
    (``run_sources``), written to ``parts/reused.sources.parquet`` for the load. The route
    step still needs the reused best-direction rows of route origins: those (and only those)
    go to ``parts/reused.airfield.parquet``, which the load does not store.
    """
    if not prepared.reuse:
        return None
    import pyarrow.parquet as pq

    parts = Path(work) / chunks.PARTS_DIR
    parts.mkdir(parents=True, exist_ok=True)
    pairs = prepared.reuse.pairs()
    sources = store.reused_sources(prepared.db_path, prepared.reuse.from_run_id, pairs)
    out = parts / REUSED_SOURCES
    tmp = out.with_name(f".{out.name}.tmp")
    pq.write_table(_sources_table(sources), tmp)
    os.replace(tmp, out)
    routes = prepared.inputs.tables.get("routes")
    if prepared.reuse.routes_from_run_id is None and routes is not None and len(routes):
        wanted = pairs["airfield_id"].isin(routes["origin_id"].astype(str))
        if "aircraft_type_id" in routes:
            wanted &= pairs["aircraft_type_id"].isin(routes["aircraft_type_id"].astype(str))
        if wanted.any():
            store.export_reused_route_rows(prepared.db_path, prepared.reuse.from_run_id, run_id,
                                           pairs[wanted], parts / REUSED_AIRFIELD, chunks.RESULT_SCHEMA)
    return str(out)


def _sources_table(frame: pd.DataFrame):
    """The reused-pairs frame as an Arrow table with fixed types (an empty frame included)."""
    import pyarrow as pa

    return pa.table({"airfield_id": pa.array(frame["airfield_id"].astype(str), pa.string()),
                     "aircraft_type_id": pa.array(frame["aircraft_type_id"].astype(str), pa.string()),
                     "source_run_id": pa.array(frame["source_run_id"].astype("int64"), pa.int64())})


def best_directions(work: Path, results: Sequence[ChunkResult]) -> list[str]:
    """Best runway direction per airfield × month × type × condition × basis: the chunks'
    best-direction parts (each chunk holds whole airfields, so its best directions are the
    run's; ``pipeline/sql/best_direction.sql``), in chunk order; return their paths.

    Bases that a producer supplied at airfield level are left out. A chunk whose part is
    missing or was written for other bases (a part from before, a chunk on a Dask worker
    whose rows came back without one) gets it here from its direction rows.
    """
    import pyarrow.parquet as pq

    if not results:
        out = Path(work) / BEST_FILE
        tmp = out.with_name(f".{out.name}.tmp")
        pq.write_table(chunks.RESULT_SCHEMA.empty_table(), tmp)
        os.replace(tmp, out)
        return [str(out)]
    bases = sorted({b for r in results for b in r.airfield_bases})
    return [chunks.best_part(r, bases) for r in results]


ROUTE_AIRFIELD_COLUMNS = ("run_id", "airfield_id", "runway_id", "aircraft_type_id", "month", "condition",
                          "basis", "reliability", "tow_limit_kg", "limiting_factor")
"""The ``results_airfield`` columns the route step reads."""


def _route_airfield_rows(routes: pd.DataFrame, paths: Sequence[Path], best: Sequence[str] = ()) -> pd.DataFrame:
    """Airfield rows of the route origins and route types only (not the whole network), from
    the best-direction parts ``best`` and the airfield part files ``paths``."""
    import pyarrow.dataset as ds
    import pyarrow.parquet as pq

    wanted = None
    if "origin_id" in routes and "aircraft_type_id" in routes:
        # the (origin, type) pairs flown, one term per type: on a large network the origins
        # × every route type would read several times the rows the routes use
        pairs = routes[["origin_id", "aircraft_type_id"]].astype(str).drop_duplicates()
        for type_id, group in pairs.groupby("aircraft_type_id", sort=True):
            term = (ds.field("aircraft_type_id") == type_id) & \
                ds.field("airfield_id").isin(sorted(group["origin_id"].unique()))
            wanted = term if wanted is None else wanted | term
    elif "origin_id" in routes:
        wanted = ds.field("airfield_id").isin(sorted(routes["origin_id"].astype(str).unique()))
    frames = []
    if best:  # the chunks' best-direction parts: one schema, read as one dataset
        data = ds.dataset([str(p) for p in best], format="parquet")
        frames.append(data.to_table(columns=[c for c in ROUTE_AIRFIELD_COLUMNS if c in data.schema.names],
                                    filter=wanted).to_pandas())
    for path in paths:
        have = pq.read_schema(path).names
        frames.append(pq.read_table(path, columns=[c for c in ROUTE_AIRFIELD_COLUMNS if c in have],
                                    filters=wanted).to_pandas())
    return pd.concat(frames, ignore_index=True) if len(frames) > 1 else frames[0]


def _route_function(prepared: PreparedRun) -> Callable | None:
    """``pipeline.routes.route_payload_frame`` when this run computes route payloads (routes
    exist and the whole input is not unchanged: then the load points the run at the earlier
    route payloads and landing limits), else None."""
    if prepared.reuse and prepared.reuse.routes_from_run_id is not None:
        return None
    tables = prepared.inputs.tables
    if "routes" not in tables or tables["routes"] is None or len(tables["routes"]) == 0:
        return None
    try:
        routes = importlib.import_module("fieldlimits.pipeline.routes")
    except ModuleNotFoundError as exc:
        if exc.name == "fieldlimits.pipeline.routes":
            return None
        raise
    return getattr(routes, "route_payload_frame", None)


#: Landing steps started early (:func:`start_landing`), by work folder: (its result, its
#: executor).
_LANDING: dict[str, tuple[Future, "_LandingExecutor"]] = {}
_LANDING_LOCK = threading.Lock()


class _LandingExecutor:
    """The chunks' process pool as the early landing step's executor, that can be stopped:
    once stopped, no further block is handed to the pool and the blocks still waiting there
    are cancelled. The pool itself stays up (chunk tasks still running may use it; a pool
    closed under them would be started again and outlive a stopped run)."""

    def __init__(self, pool):
        self.pool = pool
        self._max_workers = getattr(pool, "_max_workers", 1)
        self._lock = threading.Lock()
        self._futures: list = []
        self.stopped = False

    def submit(self, fn, *args, **kwargs):
        from concurrent.futures import CancelledError

        with self._lock:
            if self.stopped:
                raise CancelledError("the run stopped before its landing step finished")
            future = self.pool.submit(fn, *args, **kwargs)
            self._futures.append(future)
            return future

    def stop(self) -> None:
        with self._lock:
            self.stopped = True
            for future in self._futures:
                future.cancel()


def start_landing(prepared: PreparedRun, work: Path) -> bool:
    """Start the landing step now, beside the chunks, when the run uses the chunks' process
    pool in this process and the route step will need it; return whether it started.

    Its blocks go to the same worker processes as the chunks (:func:`landing_rows` with the
    pool as executor), from a thread of this process: they fill the pool's gaps while the
    chunks run and its tail, with no second pool to start. :func:`route_payloads` takes its
    parts (the same files, row for row); :func:`await_landing` waits for it before the pool
    is closed; :func:`cleanup` stops it on a failed run. The rows do not depend on where a
    block is solved.
    """
    if _route_function(prepared) is None:
        return False
    pool = chunks._process_pool(Path(work))
    if pool is None:
        return False
    future: Future = Future()
    executor = _LandingExecutor(pool)

    def run() -> None:
        if not future.set_running_or_notify_cancel():
            return
        try:
            future.set_result(landing_rows(prepared, work, executor=executor))
        except BaseException as exc:  # handed to whoever waits for it
            future.set_exception(exc)

    with _LANDING_LOCK:
        _LANDING[str(work)] = (future, executor)
    threading.Thread(target=run, name="fieldlimits-landing", daemon=True).start()
    return True


def await_landing(work: Path) -> None:
    """Wait for a landing step started by :func:`start_landing` (its error is raised by the
    route step that takes its parts)."""
    with _LANDING_LOCK:
        started = _LANDING.get(str(work))
    if started is not None:
        started[0].exception()


def _take_landing(work: Path):
    """The parts of the landing step started early for ``work`` (None: not started)."""
    with _LANDING_LOCK:
        started = _LANDING.pop(str(work), None)
    return None if started is None else started[0].result()


def _drop_landing(work: Path) -> None:
    """Stop a landing step started early (a failed or stopped run): no further block is
    handed to the pool and those waiting there are cancelled; wait for its thread (at most
    the blocks already being solved), ignoring its error."""
    with _LANDING_LOCK:
        started = _LANDING.pop(str(work), None)
    if started is None:
        return
    future, executor = started
    executor.stop()
    future.exception()


def _best_list(best) -> list[str]:
    """The best-direction parts as a list (:func:`best_directions`; one path allowed)."""
    return [str(best)] if isinstance(best, (str, os.PathLike)) else [str(p) for p in best]


def route_payloads(prepared: PreparedRun, work: Path, best_path) -> Path | None:
    """Route payloads through ``pipeline.routes.route_payload_frame`` when routes exist (none
    when the whole input is unchanged: the load points the run at the earlier route payloads
    and landing limits)."""
    early = _take_landing(work)
    func = _route_function(prepared)
    if func is None:
        return None
    tables = prepared.inputs.tables
    from fieldlimits.pipeline import landing

    # the landing step first (or its parts, started beside the chunks): the origins' takeoff
    # rows (millions on a large network) are not held while it runs
    parts = early if early is not None else landing_rows(prepared, work)
    airfield = _route_airfield_rows(tables["routes"], sorted(
        (Path(work) / chunks.PARTS_DIR).glob("*.airfield.parquet")), best=_best_list(best_path))
    destinations = landing.route_rows(parts)
    params = prepared.params.as_dict()
    # blocks of whole routes in route_id order (the order of the frame, which sorts by
    # route_id first): each block's frame is that stretch of the whole one, and only one is
    # held as a frame at a time (a frame of 20 000 routes' payloads took the main process to
    # 2.2 GB); the blocks are kept as Arrow tables until they are written
    routes = tables["routes"]
    blockwise = all(c in routes for c in ("route_id", "origin_id", "destination_id"))
    ids = routes["route_id"].astype(str) if blockwise else None
    order = sorted(ids.unique()) if blockwise else []
    blocks = [order[i:i + ROUTE_BLOCK_ROUTES] for i in range(0, len(order), ROUTE_BLOCK_ROUTES)]

    def block_inputs():
        if len(blocks) <= 1:
            yield tables, airfield, destinations
            return
        origin_of = airfield["airfield_id"].astype(str)
        landing_of = destinations["airfield_id"].astype(str) if "airfield_id" in destinations else None
        for block in blocks:
            sub = routes[ids.isin(block).to_numpy()]
            yield ({**tables, "routes": sub}, airfield[origin_of.isin(set(sub["origin_id"].astype(str)))],
                   destinations if landing_of is None else
                   destinations[landing_of.isin(set(sub["destination_id"].astype(str)))])

    import pyarrow as pa
    import pyarrow.parquet as pq

    pieces = []
    for block_tables, origins, dests in block_inputs():
        frame = func(block_tables, origins, params, landing=dests)
        if frame is None:
            pieces = None
            break
        pieces.append(pa.Table.from_pandas(frame, preserve_index=False))
        del frame
    del airfield, destinations
    if pieces is None:
        chunks.release_free_memory()
        return None
    out = Path(work) / ROUTE_FILE
    tmp = out.with_name(f".{out.name}.tmp")
    pq.write_table(pa.concat_tables(pieces, promote_options="default"), tmp)
    os.replace(tmp, out)
    del pieces
    chunks.release_free_memory()  # the origins' rows and the payloads' frames, before the load
    return out


#: Routes per block of the route step (:func:`route_payloads`). [–]
ROUTE_BLOCK_ROUTES = 2_500


#: Landing runs with at least this many blocks of destinations solve them in worker processes.
LANDING_PROCESS_MIN_BLOCKS = 2


def _landing_pool(n_blocks: int):
    """A process pool for the landing blocks (spawn and the memory settings of the chunks'
    pool) when there are enough blocks and cores for one, else None. The caller shuts it
    down after the step."""
    size = min(chunks._pool_size(), n_blocks)
    if n_blocks < LANDING_PROCESS_MIN_BLOCKS or size < 2 or chunks._in_worker_process():
        return None
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    pool = ProcessPoolExecutor(max_workers=size, mp_context=multiprocessing.get_context("spawn"),
                               initializer=chunks.start_chunk_process)
    chunks.track_pool(pool)  # stopped with the chunks' pool by a stopped command
    return pool


def landing_rows(prepared: PreparedRun, work: Path, executor=None):
    """Landing-mass limits of the route destinations (:mod:`pipeline.landing`), solved and
    written block by block to ``<work>/landing_direction/`` and ``<work>/landing_airfield/``
    (worker processes on a large run: ``executor``, else a pool of its own); returns the part
    files (``landing.LandingParts``): the route step reads the destination rows from them,
    the load scans them."""
    from fieldlimits.pipeline import landing

    tables = prepared.inputs.tables
    rose = tables.get("wind_rose")
    if rose is None and prepared.params.reliability_levels:  # released: its Parquet copy,
        rose = str(Path(work) / case_io.TABLES_DIR / "wind_rose.parquet")  # read block by block
    if executor is not None:
        return landing.write_landing_parts(tables, prepared.params.as_dict(), work, wind_rose=rose,
                                           block_airfields=landing.BLOCK_AIRFIELDS, executor=executor)
    blocks = landing.destination_blocks(landing.destination_pairs(tables["routes"]), landing.BLOCK_AIRFIELDS)
    pool = _landing_pool(len(blocks))
    try:
        return landing.write_landing_parts(tables, prepared.params.as_dict(), work, wind_rose=rose,
                                           block_airfields=landing.BLOCK_AIRFIELDS, executor=pool)
    finally:
        if pool is not None:  # its memory is free for the load
            pool.shutdown(wait=True, cancel_futures=True)
            chunks.track_pool(pool, add=False)


def _landing_parts(prepared: PreparedRun, run_id: int, folder: str) -> list[str] | None:
    """The landing part files of a run in row order (None: the landing step did not run)."""
    path = work_dir(prepared, run_id) / folder
    return [str(p) for p in sorted(path.glob("*.parquet"))] if path.is_dir() else None


def load(prepared: PreparedRun, run_id: int, results: Sequence[ChunkResult], best_path,
         route_path: Path | None, reused: str | None = None) -> dict[str, int]:
    """The single writer: all of the run in one DuckDB transaction (``reused``: the file of
    :func:`reference_reused`; the computed rows are stored, the reused ones referenced)."""
    from fieldlimits.pipeline import landing

    folder = work_dir(prepared, run_id) / INPUTS_DIR
    inputs = [store.InputTable(name, prepared.inputs.files.get(name), prepared.inputs.hashes[name],
                               path=str(folder / f"{name}.parquet"))
              for name in prepared.inputs.user_tables if name in prepared.inputs.hashes]
    spec = store.LoadSpec(
        run_id=run_id,
        direction_parts=[r.direction_path for r in results],
        airfield_parts=_best_list(best_path) + [r.airfield_path for r in results if r.airfield_path],
        inputs=inputs,
        route_payload=str(route_path) if route_path else None,  # scanned by the store
        landing_direction=_landing_parts(prepared, run_id, landing.DIRECTION_PARTS),  # scanned by the store
        landing_airfield=_landing_parts(prepared, run_id, landing.AIRFIELD_PARTS),
        hashes=prepared.hashes,
        reused_sources=reused,
        reused_cases=prepared.reused_cases,
        reused_from_run_id=prepared.reuse.from_run_id if prepared.reuse else None,
        route_results_from_run_id=prepared.reuse.routes_from_run_id if prepared.reuse else None,
    )
    log.info("storing run %d in %s (one transaction)", run_id, prepared.db_path)
    return store.load_run(prepared.db_path, spec)


def fail(prepared: PreparedRun, run_id: int, exc: BaseException) -> None:
    """Record the run as failed, or as interrupted when it was stopped (Ctrl-C, SIGTERM:
    a ``KeyboardInterrupt``; its ``reason`` says which); no-op if already recorded."""
    try:
        if isinstance(exc, KeyboardInterrupt):
            reason = getattr(exc, "reason", None) or "Ctrl-C"
            store.interrupt_run(prepared.db_path, run_id, f"stopped by the user ({reason})")
            CURRENT.recorded = "interrupted"
        else:
            store.fail_run(prepared.db_path, run_id, f"{type(exc).__name__}: {exc}")
            CURRENT.recorded = "failed"
    except BaseException:  # the record is best effort; a second Ctrl-C must not hide the first
        pass


def cleanup(prepared: PreparedRun, run_id: int) -> None:
    """Stop the run's heartbeat; remove its work folder (and the work root if it is empty)."""
    store.stop_heartbeat(prepared.db_path, run_id)
    _drop_landing(work_dir(prepared, run_id))  # a failed run's landing step, if still running
    shutil.rmtree(work_dir(prepared, run_id), ignore_errors=True)
    if prepared.inputs.spool is not None:  # stopped before build_cases took the spool
        _forget_inputs(prepared.inputs)
        shutil.rmtree(prepared.inputs.spool, ignore_errors=True)
        prepared.inputs.spool = None
    try:
        prepared.work_root.rmdir()
    except OSError:
        pass
    if CURRENT.run_id == run_id:
        CURRENT.cleaned.set()


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
    reused_cases: int = 0
    reused_from_run_id: int | None = None
    scenario: str = "baseline"
    description: str = ""  # RunParams.describe()
    wall_seconds: float | None = None  # from the command's start (set by fieldlimits run)

    def text(self) -> str:
        reused = (f" ({self.reused_cases} reused from run {self.reused_from_run_id})"
                  if self.reused_cases else "")
        took = (f"{self.wall_seconds:.1f} s wall time (flow {self.seconds:.1f} s)"
                if self.wall_seconds is not None else f"{self.seconds:.1f} s")
        lines = [
            f"run {self.run_id} complete: {self.airfields} airfields, {self.cases} cases{reused} "
            f"in {self.chunks} chunks, {took}",
            f"scenario: {self.description or self.scenario}",
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
                    + (f" ({r.no_takeoff_months} with no takeoff possible)" if r.no_takeoff_months else "")
                    + (f"; most: {r.worst_airfields}" if isinstance(r.worst_airfields, str) else ""))
        return "\n".join(lines)


def summarise(prepared: PreparedRun, run_id: int, seconds: float, rows: dict[str, int]) -> RunSummary:
    return RunSummary(run_id, prepared.n_airfields, prepared.plan.n_cases + prepared.reused_cases,
                      prepared.plan.n_chunks, seconds, rows, store.run_summary(prepared.db_path, run_id),
                      prepared.reused_cases, prepared.reuse.from_run_id if prepared.reuse else None,
                      prepared.params.scenario, prepared.params.describe())


# --------------------------------------------------------------------------- local driver
ProgressFn = Callable[[int, int, float], None]


def run_local(input_dir, db_path, params: RunParams = RunParams(), progress: ProgressFn | None = None,
              workers: int = 2, work_root=None, cluster: str | None = None) -> RunSummary:
    """Run every step in this process without Prefect (threads for the chunks).

    ``cluster``: a Dask scheduler address or ``local`` (:class:`pipeline.chunks.DaskChunks`):
    the chunks are computed there, everything else here, as with Prefect's Dask runner.
    """
    t0 = time.monotonic()
    prepared = prepare_run(input_dir, db_path, params, work_root)
    run_id = register(prepared)
    dask = None
    try:
        work = build_cases(prepared, run_id)
        key_params = prepared.chunk_params()
        results: list[ChunkResult] = []
        n = prepared.plan.n_chunks
        compute, threads = chunks.compute_chunk, max(1, workers)
        if cluster:
            dask = chunks.DaskChunks(cluster, workers).start()
            # one chunk per worker thread and the next one's inputs read meanwhile
            compute, threads = dask.compute, dask.threads() + 1
        pool = ThreadPoolExecutor(max_workers=threads)
        try:
            futures = [pool.submit(compute, work, i, run_id, key_params) for i in range(n)]
            if dask is None:
                start_landing(prepared, work)
            for fut in as_completed(futures):
                results.append(fut.result())
                (progress or progress_mod.report)(len(results), n, time.monotonic() - t0)
        finally:  # on a stop, chunks not yet started are dropped, not waited for
            pool.shutdown(wait=False, cancel_futures=True)
            if dask is not None:
                dask.close()
        await_landing(work)  # its blocks share the chunks' pool
        chunks.shutdown_pool()  # the worker processes' memory is free for the load
        results.sort(key=lambda r: r.chunk)
        reused = reference_reused(prepared, run_id, work)
        best = best_directions(work, results)
        route = route_payloads(prepared, work, best)
        rows = load(prepared, run_id, results, best, route, reused)
    except BaseException as exc:
        fail(prepared, run_id, exc)
        cleanup(prepared, run_id)
        raise
    cleanup(prepared, run_id)
    return summarise(prepared, run_id, time.monotonic() - t0, rows)
