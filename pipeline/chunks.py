"""Compute one chunk of cases and write its Parquet part files (idempotent, atomic).

:func:`compute_chunk` is the body of the Prefect chunk task and is called directly by tests.
It reads its cases (one row group of ``<work>/cases.parquet``) and the aircraft table from
the run's work folder, solves the takeoff-weight limit with
:func:`physics.weightlimit.solve_takeoff_weight` (with the obstacles of each case's runway
direction, :func:`pipeline.cases.obstacle_arrays`), turns the result into ``results_direction``
rows for the ``design_day`` basis and then asks the **row producers** for more rows
(:mod:`pipeline.producers` — the single place where e.g. reliability rows are added).

Each part is written to a temporary name and renamed into place, so a part file is either
complete or absent. Parts are named by chunk number, and a part carrying the same chunk key
(code version + run parameters + chunk) is reused rather than recomputed: running a chunk
twice (a retry, a lost Dask worker) is safe and gives the same file.

Large runs (at least :data:`PROCESS_MIN_CASES` cases) solve their chunks in a small pool of
worker processes owned by the calling process: the solver is many short numpy calls that
hold the GIL, so threads alone use about one core. The calling thread (a local thread, a
Prefect task) waits for its chunk; results and files are the same. Not used inside a Dask
worker or a child process, nor while :data:`pipeline.producers.ROW_PRODUCERS` holds
in-process producers. ``FIELDLIMITS_CHUNK_PROCESSES=N`` sets the pool size (0: off). The
processes run with glibc's memory settings of the Dask workers (:data:`WORKER_MALLOC_ENV`,
:func:`start_chunk_process`) and give freed memory back after each chunk
(:func:`release_free_memory`).

On a Dask cluster (``fieldlimits run --cluster``) no path is shared: :class:`DaskChunks` reads
a chunk's inputs from the client's work folder (:func:`chunk_payload`), sends them through
Dask to :func:`compute_on_worker`, which checks the worker's code version against the run's,
solves the chunk in a scratch folder of the worker's own and returns the rows as Arrow
tables; the client writes the part files (:func:`write_parts`).
"""

from __future__ import annotations

import atexit
import dataclasses
import json
import multiprocessing
import os
import threading
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq

from fieldlimits.pipeline import cases as case_io
from fieldlimits.pipeline import producers
from fieldlimits.schemas.results import RESULT_COLUMNS, columns

PARTS_DIR = "parts"
PROCESS_MIN_CASES = 200_000
"""Runs with at least this many cases solve their chunks in worker processes."""
_KEY_META = b"fieldlimits_chunk_key"
_BASES_META = b"fieldlimits_airfield_bases"

_SITE_COLUMNS = ("tora_m", "toda_m", "asda_m", "slope", "mu_roll", "mu_brake", "pressure_pa",
                 "temperature_k", "headwind_mps", "screen_height_m", "mu_roll_dry", "mu_brake_dry")

# results column <- WeightLimit field, converted from m/s to knots where the name says so
_SPEED_FIELDS = {"v1_kt": "v1_mps", "vr_kt": "vr_mps", "v2_kt": "v2_mps", "v_lof_kt": "v_lof_mps"}
_PLAIN_FIELDS = ("takeoff_distance_m", "takeoff_run_m", "accelerate_stop_m", "climb_gradient",
                 "obstacle_clearance_m", "acceleration_height_m")

_ARROW_TYPES = {"BIGINT": pa.int64(), "VARCHAR": pa.string(), "TINYINT": pa.int8(),
                "DOUBLE": pa.float64()}
RESULT_SCHEMA = pa.schema([pa.field(c.name, _ARROW_TYPES[c.sql_type]) for c in columns("results_direction")])


@dataclass(frozen=True)
class ChunkResult:
    """What a chunk task hands to the writer: paths and counts, no data."""

    chunk: int
    direction_path: str
    airfield_path: str | None
    airfield_bases: tuple[str, ...]
    rows: int
    cases: int
    reused: bool = False


@dataclass
class ChunkContext:
    """Everything a row producer may use for one chunk (see :mod:`pipeline.producers`)."""

    run_id: int
    chunk: int
    cases: pd.DataFrame
    aircraft: object
    site: object
    design_rows: pd.DataFrame
    params: dict
    work_dir: Path
    _tables: dict = field(default_factory=dict)

    @property
    def airfield_ids(self) -> list[str]:
        return sorted(self.cases["airfield_id"].unique().tolist())

    def table(self, name: str) -> pd.DataFrame:
        """An input table (SI) restricted to this chunk's airfields where it has airfield_id."""
        if name not in self._tables:
            self._tables[name] = read_chunk_table(self.work_dir, name, self.airfield_ids)
        return self._tables[name]


def read_chunk_table(work_dir: Path, name: str, airfield_ids: list[str]) -> pd.DataFrame | None:
    """Input table ``name`` (SI) of the run's work folder, only the rows of ``airfield_ids``
    where it has an airfield_id; None when the run has no such table.

    Only the row groups whose airfield-id range (Parquet statistics) holds one of the ids are
    read: the work folder's tables are sorted by airfield id and cut where the chunks begin
    and end (:func:`pipeline.cases.write_chunk_aligned`), so a chunk reads its own rows. The
    rows come in the file's order, as from a filtered read of the whole file.
    """
    path = Path(work_dir) / case_io.TABLES_DIR / f"{name}.parquet"
    if not path.exists():
        return None
    return read_airfield_rows(path, airfield_ids)


def read_airfield_rows(path: Path, airfield_ids) -> pd.DataFrame:
    """The rows of ``airfield_ids`` of a table file of the work folder (all rows when it has no
    airfield_id), in the file's order, reading only the row groups that can hold them
    (:func:`read_chunk_table`)."""
    path = Path(path)
    metadata, lows, highs = _row_group_ranges(path)
    # an empty table has untyped (null) text columns, which a filter cannot be bound to
    if lows is None or metadata.num_rows == 0:
        return pq.read_table(path).to_pandas()
    ids = sorted({str(a) for a in airfield_ids})
    if lows is False:  # no statistics to choose row groups by: filter the whole file
        return pq.read_table(path, filters=[(case_io.AIRFIELD_KEY, "in", ids)]).to_pandas()
    from bisect import bisect_left, bisect_right

    import pyarrow.compute as pc

    groups = [g for g, (lo, hi) in enumerate(zip(lows, highs)) if bisect_left(ids, lo) < bisect_right(ids, hi)]
    with pq.ParquetFile(path, metadata=metadata) as source:
        table = source.read_row_groups(groups, use_threads=False)
    column = table.column(case_io.AIRFIELD_KEY)
    keep = pc.is_in(column, value_set=pa.array(ids, column.type))
    if not pc.all(keep).as_py():
        table = table.filter(keep)
    return table.to_pandas()


_RANGES: dict = {}  # path -> (file signature, metadata, lows, highs): read once per process
_RANGES_KEPT = 32


def _row_group_ranges(path: Path):
    """The file's Parquet metadata and each row group's least and greatest airfield id;
    the ranges are None when the table has no ``airfield_id``, False when it is not text or
    a row group lacks statistics. Kept per process while the file is unchanged."""
    st = path.stat()
    signature = (st.st_ino, st.st_size, st.st_mtime_ns)
    found = _RANGES.get(str(path))
    if found is not None and found[0] == signature:
        return found[1:]
    metadata = pq.read_metadata(path)
    schema = metadata.schema.to_arrow_schema()
    lows = highs = None
    if case_io.AIRFIELD_KEY in schema.names:
        column = schema.get_field_index(case_io.AIRFIELD_KEY)
        lows, highs = ([], []) if case_io.is_text(schema.field(column).type) else (False, False)
    if isinstance(lows, list):
        for g in range(metadata.num_row_groups):
            stats = metadata.row_group(g).column(column).statistics
            if stats is None or not stats.has_min_max:
                lows = highs = False
                break
            lows.append(stats.min)
            highs.append(stats.max)
    if len(_RANGES) >= _RANGES_KEPT:
        _RANGES.clear()
    _RANGES[str(path)] = (signature, metadata, lows, highs)
    return metadata, lows, highs


def chunk_key(params: dict, chunk: int, run_id: int) -> str:
    """Identity of a chunk's output: parameters (incl. code version and input hash), run, chunk."""
    return json.dumps({"params": params, "chunk": chunk, "run_id": run_id}, sort_keys=True, default=str)


def aircraft_arrays(aircraft_table: pd.DataFrame, index: np.ndarray):
    """``physics.weightlimit.Aircraft`` with one element per case (row ``index`` of the table)."""
    from fieldlimits.physics.weightlimit import Aircraft

    values = {}
    for f in dataclasses.fields(Aircraft):
        if f.name not in aircraft_table.columns:
            raise KeyError(f"aircraft_types has no column {f.name!r} needed by the physics")
        values[f.name] = aircraft_table[f.name].to_numpy(dtype=float)[index]
    return Aircraft(**values)


def site_arrays(cases: pd.DataFrame):
    """``physics.weightlimit.Site`` with one element per case."""
    from fieldlimits.physics.weightlimit import Site

    names = {f.name for f in dataclasses.fields(Site)}
    return Site(**{name: cases[name].to_numpy(dtype=float) for name in _SITE_COLUMNS if name in names})


def _field(result, name: str, n: int) -> np.ndarray:
    value = getattr(result, name, None)
    if value is None:
        return np.full(n, np.nan)
    return np.broadcast_to(np.asarray(value, dtype=float), (n,))


def design_day_rows(run_id: int, cases: pd.DataFrame, result, obstacle_ids=None) -> pd.DataFrame:
    """``results_direction`` rows (basis ``design_day``) from the cases and a WeightLimit.

    ``obstacle_ids`` (from :func:`pipeline.cases.obstacle_arrays`, or None) names the
    governing obstacle of each case.
    """
    from fieldlimits.physics import constants, limits

    n = len(cases)
    rows = {
        "run_id": np.full(n, run_id, dtype=np.int64),
        "airfield_id": cases["airfield_id"].to_numpy(object),
        "runway_id": cases["runway_id"].to_numpy(object),
        "aircraft_type_id": cases["aircraft_type_id"].to_numpy(object),
        "month": cases["month"].to_numpy(np.int8),
        "condition": cases["condition"].to_numpy(object),
        "basis": np.full(n, "design_day", dtype=object),
        "reliability": np.full(n, np.nan),
        "oat_c": cases["oat_c"].to_numpy(float),
        "pressure_altitude_m": cases["pressure_altitude_m"].to_numpy(float),
        "density_altitude_m": cases["density_altitude_m"].to_numpy(float),
        "headwind_mps": cases["headwind_mps"].to_numpy(float),
        "tow_limit_kg": _field(result, "tow_limit_kg", n),
        "limiting_factor": np.asarray(limits.name(np.asarray(result.limiting_factor)), dtype=object).reshape(n),
    }
    for col in _PLAIN_FIELDS:
        rows[col] = _field(result, col, n)
    for col, src in _SPEED_FIELDS.items():
        rows[col] = _field(result, src, n) / constants.KT_MPS
    rows["governing_obstacle_id"] = case_io.governing_obstacle_ids(obstacle_ids,
                                                                   _field(result, "governing_obstacle", n))
    return pd.DataFrame(rows, columns=list(RESULT_COLUMNS))


def to_result_table(frame: pd.DataFrame) -> pa.Table:
    """Arrow table with exactly the result columns and types (NaN → NULL)."""
    frame = frame.reindex(columns=list(RESULT_COLUMNS))
    arrays = []
    for f in RESULT_SCHEMA:
        col = frame[f.name]
        if pa.types.is_floating(f.type):
            values = col.to_numpy(dtype=float)
            arrays.append(pa.array(values, type=f.type, mask=np.isnan(values)))
        else:
            arrays.append(pa.array(col.tolist() if f.type == pa.string() else col.to_numpy(), type=f.type,
                                   from_pandas=True))
    return pa.Table.from_arrays(arrays, schema=RESULT_SCHEMA)


def _write_part(table: pa.Table, path: Path, key: str, bases: tuple[str, ...]) -> None:
    meta = {_KEY_META: key.encode(), _BASES_META: json.dumps(list(bases)).encode()}
    table = table.replace_schema_metadata({**(table.schema.metadata or {}), **meta})
    tmp = path.with_name(f".{path.name}.{os.getpid()}.{id(table)}.tmp")
    try:
        pq.write_table(table, tmp)
        os.replace(tmp, path)
    finally:
        if tmp.exists():
            tmp.unlink()


def _existing_part(path: Path, key: str) -> tuple[bool, tuple[str, ...], int]:
    if not path.exists():
        return False, (), 0
    try:
        meta = pq.read_schema(path).metadata or {}
        rows = pq.ParquetFile(path).metadata.num_rows
    except Exception:
        return False, (), 0
    if meta.get(_KEY_META) != key.encode():
        return False, (), 0
    return True, tuple(json.loads(meta.get(_BASES_META, b"[]"))), rows


def part_paths(work_dir: Path, chunk: int) -> tuple[Path, Path]:
    parts = Path(work_dir) / PARTS_DIR
    return (parts / f"part-{chunk:05d}.direction.parquet",
            parts / f"part-{chunk:05d}.airfield.parquet")


def best_part_path(work_dir: Path, chunk: int) -> Path:
    """The chunk's best-direction rows (:func:`write_best_part`)."""
    return Path(work_dir) / PARTS_DIR / f"part-{chunk:05d}.best.parquet"


def best_direction_rows(direction: pa.Table, airfield_level_bases) -> pa.Table:
    """Best runway direction per airfield × month × type × condition × basis of direction rows
    (``pipeline/sql/best_direction.sql``, a DuckDB of its own with one thread), the bases in
    ``airfield_level_bases`` left out; the result columns and types of the direction rows."""
    import duckdb

    from fieldlimits.pipeline import store

    con = duckdb.connect()
    try:
        con.execute("SET threads = 1")
        con.register("direction_rows", direction)
        rows = con.sql(store.sql("best_direction"),
                       params={"airfield_level_bases": list(airfield_level_bases)}).to_arrow_table()
    finally:
        con.close()
    return rows.select(direction.schema.names).cast(direction.schema.remove_metadata())


def write_best_part(direction: pa.Table, path: Path, key: str, airfield_level_bases) -> None:
    """Write a chunk's best-direction rows to ``path`` (atomic), marked with the chunk's key
    and the bases left out (a chunk's airfields are whole, so its best directions are the
    run's)."""
    _write_part(best_direction_rows(direction, airfield_level_bases), path, key, tuple(airfield_level_bases))


def best_part(result: "ChunkResult", airfield_level_bases) -> str:
    """The best-direction part of a chunk result: the one the chunk wrote when it carries the
    key of the chunk's direction part and was made for these bases, else written here from
    the direction rows (a part from before, a chunk whose rows came back from Dask)."""
    direction = Path(result.direction_path)
    best = best_part_path(direction.parent.parent, result.chunk)
    key = (pq.read_schema(direction).metadata or {}).get(_KEY_META, b"").decode()
    done, bases, _ = _existing_part(best, key)
    if not (key and done and sorted(bases) == sorted(airfield_level_bases)):
        write_best_part(pq.read_table(direction), best, key, airfield_level_bases)
    return str(best)


_POOL = None
_POOL_LOCK = threading.Lock()


def _pool_size() -> int:
    env = os.environ.get("FIELDLIMITS_CHUNK_PROCESSES", "").strip()
    if env:
        return max(0, int(env))
    return min(os.cpu_count() or 1, 8) if (os.cpu_count() or 1) > 1 else 0


def _in_worker_process() -> bool:
    if multiprocessing.parent_process() is not None:
        return True
    try:
        from distributed import get_worker

        get_worker()
        return True
    except Exception:
        return False


def _process_pool(work: Path):
    """The shared process pool when this run is big enough to use one, else None."""
    global _POOL
    size = _pool_size()
    if size < 2 or producers.ROW_PRODUCERS or _in_worker_process():
        return None
    try:
        n_cases = case_io.planned_cases(work)
    except Exception:
        return None
    if n_cases < PROCESS_MIN_CASES:
        return None
    with _POOL_LOCK:
        if _POOL is None:
            from concurrent.futures import ProcessPoolExecutor

            # spawn: the parent has threads (Prefect, the task runner), so no fork
            _POOL = ProcessPoolExecutor(max_workers=size, mp_context=multiprocessing.get_context("spawn"),
                                        initializer=start_chunk_process)
            atexit.register(shutdown_pool)
        return _POOL


def _libc():
    """glibc through ctypes, or None (another C library, another system)."""
    import ctypes
    import ctypes.util

    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6")
        libc.mallopt, libc.malloc_trim  # noqa: B018 (glibc only)
    except (OSError, AttributeError):
        return None
    return libc


#: glibc's ``mallopt`` parameter of each variable of :data:`WORKER_MALLOC_ENV` (malloc.h).
_MALLOPT_PARAMS = {"MALLOC_TRIM_THRESHOLD_": -1, "MALLOC_MMAP_THRESHOLD_": -3}
_CHUNK_PROCESS: dict = {}  # what start_chunk_process applied in this process


def start_chunk_process() -> None:
    """Initializer of the chunk processes (:func:`_process_pool`): glibc's memory settings of
    the Dask workers (:data:`WORKER_MALLOC_ENV`). A spawned process has read the environment
    before this runs, so each setting is applied with ``mallopt``, as glibc applies the
    variable at start, and put in the process's environment (what it starts inherits it)."""
    libc = _libc()
    for name, value in WORKER_MALLOC_ENV.items():
        os.environ[name] = value
        if libc is not None:
            _CHUNK_PROCESS[name] = int(libc.mallopt(_MALLOPT_PARAMS[name], int(value))) == 1
    _CHUNK_PROCESS["started"] = True


def chunk_process_settings() -> dict:
    """This process's :data:`WORKER_MALLOC_ENV` variables and whether ``mallopt`` took each
    (for the tests and for diagnosis)."""
    return {"environ": {name: os.environ.get(name) for name in WORKER_MALLOC_ENV},
            "applied": dict(_CHUNK_PROCESS)}


def release_free_memory() -> None:
    """Give the memory freed after a chunk back to the system (a chunk process between
    chunks): glibc keeps freed blocks in its heap, most of a chunk's peak, until
    ``malloc_trim``; Arrow's pool keeps its own."""
    pa.default_memory_pool().release_unused()
    libc = _libc()
    if libc is not None:
        libc.malloc_trim(0)


_OTHER_POOLS: set = set()  # other pools of this process's worker processes (the landing step's)


def track_pool(pool, add: bool = True) -> None:
    """Count ``pool`` among the pools :func:`terminate_pools` stops (``add=False``: no more)."""
    with _POOL_LOCK:
        (_OTHER_POOLS.add if add else _OTHER_POOLS.discard)(pool)


def terminate_pools() -> None:
    """Stop every worker process of this process at once (a stopped command that exits
    without waiting): a chunk or block in progress is abandoned. Without this the workers
    outlive the command, each waiting for work that never comes (they hold their queue's
    other end, so they never see it close)."""
    global _POOL
    with _POOL_LOCK:
        pools = [p for p in (_POOL, *_OTHER_POOLS) if p is not None]
        _POOL = None
        _OTHER_POOLS.clear()
    for pool in pools:
        for proc in list((getattr(pool, "_processes", None) or {}).values()):
            try:
                proc.terminate()
            except Exception:
                pass
        try:
            pool.shutdown(wait=False, cancel_futures=True)
        except Exception:
            pass


def shutdown_pool() -> None:
    """Stop the worker processes (also done at exit)."""
    global _POOL
    with _POOL_LOCK:
        pool, _POOL = _POOL, None
    if pool is not None:
        pool.shutdown(wait=True, cancel_futures=True)


def compute_chunk(work_dir: str | os.PathLike, chunk: int, run_id: int, params: dict) -> ChunkResult:
    """Compute chunk ``chunk`` of the run in ``work_dir`` and write its part files.

    Safe to call more than once: an existing part with the same chunk key is reused.
    Large runs hand the work to the process pool (see the module notes) and wait for it.
    """
    pool = _process_pool(Path(work_dir))
    if pool is not None:
        return pool.submit(_compute_chunk_here, str(work_dir), chunk, run_id, params).result()
    return _compute_chunk_here(work_dir, chunk, run_id, params)


def _compute_chunk_here(work_dir: str | os.PathLike, chunk: int, run_id: int, params: dict) -> ChunkResult:
    """:func:`compute_chunk` in this process."""
    work = Path(work_dir)
    key = chunk_key(params, chunk, run_id)
    done = reused_part(work, chunk, key)
    if done is not None:
        return done
    cases = case_io.read_chunk_cases(work, chunk)
    direction, airfield, bases = solve_chunk(work, cases, chunk, run_id, params)
    result = write_parts(work, chunk, key, direction, airfield, bases, len(cases))
    if _CHUNK_PROCESS:  # a chunk process: hold only what the next chunk needs meanwhile
        del cases, direction, airfield
        release_free_memory()
    return result


def reused_part(work: Path, chunk: int, key: str) -> ChunkResult | None:
    """The chunk's result when its part files already exist with ``key`` (a retry), else None."""
    direction_path, airfield_path = part_paths(work, chunk)
    done, bases, rows = _existing_part(direction_path, key)
    if done and (not bases or _existing_part(airfield_path, key)[0]):
        n_cases = case_io.planned_cases(work, chunk)
        return ChunkResult(chunk, str(direction_path), str(airfield_path) if bases else None,
                           bases, rows, n_cases, reused=True)
    return None


def solve_chunk(work: Path, cases: pd.DataFrame, chunk: int, run_id: int,
                params: dict) -> tuple[pa.Table, pa.Table | None, tuple[str, ...]]:
    """Solve ``cases`` and run the row producers; return the direction rows, the airfield rows
    (or None) and the bases given at airfield level. Reads the aircraft and input tables from
    ``work`` (the run's work folder, or a worker's private copy of the chunk's part of it)."""
    from fieldlimits.physics.weightlimit import solve_takeoff_weight

    aircraft_table = pd.read_parquet(work / case_io.AIRCRAFT_FILE)
    aircraft = aircraft_arrays(aircraft_table, cases["aircraft_index"].to_numpy())
    site = site_arrays(cases)
    # the obstacles of each case's runway direction (None: the run has none here)
    obstacle_table = read_chunk_table(work, "obstacles", sorted(cases["airfield_id"].unique().tolist()))
    obstacles, obstacle_ids = case_io.obstacle_arrays(cases, obstacle_table)
    result = solve_takeoff_weight(aircraft, site, obstacles=obstacles)
    design = design_day_rows(run_id, cases, result, obstacle_ids)

    del result, obstacles, obstacle_ids  # in the rows now; not held while the producers run
    context = ChunkContext(run_id=run_id, chunk=chunk, cases=cases, aircraft=aircraft, site=site,
                           design_rows=design, params=params, work_dir=work,
                           _tables={"obstacles": obstacle_table})
    direction_frames, airfield_frames = [design], []
    for produce in producers.active_producers():
        out = producers.normalise(produce(context))
        if out.direction is not None and len(out.direction):
            direction_frames.append(out.direction)
        if out.airfield is not None and len(out.airfield):
            airfield_frames.append(out.airfield)

    direction = pd.concat(direction_frames, ignore_index=True) if len(direction_frames) > 1 else design
    if not airfield_frames:
        return to_result_table(direction), None, ()
    airfield = pd.concat(airfield_frames, ignore_index=True)
    bases = tuple(sorted(airfield["basis"].unique().tolist()))
    return to_result_table(direction), to_result_table(airfield), bases


def write_parts(work: Path, chunk: int, key: str, direction: pa.Table, airfield: pa.Table | None,
                bases: tuple[str, ...], n_cases: int) -> ChunkResult:
    """Write a chunk's part files (airfield and best-direction parts first: the direction part
    marks it done)."""
    direction_path, airfield_path = part_paths(work, chunk)
    direction_path.parent.mkdir(parents=True, exist_ok=True)
    airfield_out = None
    if airfield is not None:
        _write_part(airfield, airfield_path, key, bases)
        airfield_out = str(airfield_path)
    write_best_part(direction, best_part_path(work, chunk), key, bases)
    _write_part(direction, direction_path, key, bases)
    return ChunkResult(chunk, str(direction_path), airfield_out, bases, direction.num_rows, n_cases)


# --------------------------------------------------------------------------- Dask workers
class VersionMismatch(RuntimeError):
    """A Dask worker runs other fieldlimits code than the client (the run's code version)."""


@dataclass(frozen=True)
class ChunkPayload:
    """Everything a Dask worker needs for one chunk, sent through Dask (no path is shared).

    ``files`` maps a path relative to the work folder (``aircraft.parquet``,
    ``tables/<name>.parquet``) to the Parquet bytes of that file, restricted to the chunk's
    airfields where the table has an ``airfield_id``.
    """

    chunk: int
    run_id: int
    params: dict
    cases: pa.Table
    files: dict


@dataclass(frozen=True)
class ChunkRows:
    """What a Dask worker sends back: the chunk's rows as Arrow tables."""

    chunk: int
    direction: pa.Table
    airfield: pa.Table | None
    bases: tuple[str, ...]
    cases: int


def _parquet_bytes(table: pa.Table) -> bytes:
    sink = pa.BufferOutputStream()
    pq.write_table(table, sink)
    return sink.getvalue().to_pybytes()


def chunk_payload(work_dir: str | os.PathLike, chunk: int, run_id: int, params: dict) -> ChunkPayload:
    """Read one chunk's cases and the parts of the input tables it needs from the client's
    work folder (each table with an ``airfield_id`` only for the chunk's airfields)."""
    work = Path(work_dir)
    cases = pa.Table.from_pandas(case_io.read_chunk_cases(work, chunk), preserve_index=False)
    airfields = sorted(set(cases.column("airfield_id").to_pylist()))
    files = {case_io.AIRCRAFT_FILE: (work / case_io.AIRCRAFT_FILE).read_bytes()}
    for path in sorted((work / case_io.TABLES_DIR).glob("*.parquet")):
        name = f"{case_io.TABLES_DIR}/{path.name}"
        if "airfield_id" not in pq.read_schema(path).names:
            files[name] = path.read_bytes()
            continue
        frame = read_chunk_table(work, path.stem, airfields)
        files[name] = _parquet_bytes(pa.Table.from_pandas(frame, preserve_index=False))
    return ChunkPayload(chunk, run_id, params, cases, files)


_WORKER_VERSION: str | None = None


def worker_code_version() -> str:
    """This process's code version (:func:`pipeline.steps.code_version`), computed once."""
    global _WORKER_VERSION
    if _WORKER_VERSION is None:
        from fieldlimits.pipeline.steps import code_version

        _WORKER_VERSION = code_version()
    return _WORKER_VERSION


def _worker_name() -> str:
    try:
        from distributed import get_worker

        return f"Dask worker {get_worker().address}"
    except Exception:
        return f"worker process {os.getpid()}"


def _worker_scratch() -> Path:
    """The worker's own scratch folder (its ``--local-directory``), else the system's."""
    import tempfile

    try:
        from distributed import get_worker

        root = get_worker().local_directory
    except Exception:
        root = None
    return Path(tempfile.mkdtemp(prefix="fieldlimits-chunk-", dir=root))


def compute_on_worker(payload: ChunkPayload) -> ChunkRows:
    """The chunk task on a Dask worker: check the code version, solve, return the rows.

    The payload's tables are written to a scratch folder of this worker's own (removed
    afterwards), so the row producers read them as in a local run.
    """
    import shutil

    client_version = payload.params.get("code_version")
    mine = worker_code_version()
    if client_version != mine:
        raise VersionMismatch(
            f"{_worker_name()} runs fieldlimits {mine}, but the run was started with "
            f"fieldlimits {client_version}: install the same fieldlimits on the client and every "
            f"worker (pip install the same wheel or checkout) and restart the workers")
    scratch = _worker_scratch()
    try:
        for name, data in payload.files.items():
            path = scratch / name
            path.parent.mkdir(parents=True, exist_ok=True)
            path.write_bytes(data)
        cases = payload.cases.to_pandas()
        direction, airfield, bases = solve_chunk(scratch, cases, payload.chunk, payload.run_id,
                                                 payload.params)
    finally:
        shutil.rmtree(scratch, ignore_errors=True)
    return ChunkRows(payload.chunk, direction, airfield, bases, len(cases))


class DaskChunks:
    """Computes chunks on a Dask cluster; the part files are written by the client.

    The client reads each chunk's inputs from its own work folder, sends them through Dask
    (:class:`ChunkPayload`), and writes the rows the worker returns (:class:`ChunkRows`) to
    its work folder, so the workers share no folder with the client or with each other, and
    never run Prefect. ``address`` is a scheduler address (``tcp://host:8786``) or ``local``
    (a temporary cluster of ``workers`` single-threaded worker processes on this machine).
    """

    def __init__(self, address: str, workers: int = 2):
        self.address = address
        self.workers = workers
        self.client = None
        self._cluster = None

    def start(self) -> "DaskChunks":
        from distributed import Client

        if self.address == "local":
            import dask
            from distributed import LocalCluster

            # Dask's nanny starts workers with MALLOC_TRIM_THRESHOLD_=65536, which also fixes
            # glibc's mmap threshold at 128 KiB: every large numpy temporary is then mapped and
            # unmapped again (measured: 3 min system time in a 5 min run). These are glibc's
            # own dynamic limits at their largest, as in a plain run.
            with dask.config.set({"distributed.nanny.pre-spawn-environ": dict(
                    dask.config.get("distributed.nanny.pre-spawn-environ", {}), **WORKER_MALLOC_ENV)}):
                self._cluster = LocalCluster(n_workers=self.workers, threads_per_worker=1,
                                             processes=True, dashboard_address=None)
            self.client = Client(self._cluster)
        else:
            self.client = Client(self.address, timeout="30s")
        return self

    def threads(self) -> int:
        """Worker threads in the cluster now (at least 1)."""
        return max(1, sum(self.client.nthreads().values())) if self.client else 1

    def compute(self, work_dir: str | os.PathLike, chunk: int, run_id: int, params: dict) -> ChunkResult:
        """Compute one chunk on the cluster and write its part files here (a part already
        written with the same chunk key is reused, as in :func:`compute_chunk`)."""
        work = Path(work_dir)
        key = chunk_key(params, chunk, run_id)
        done = reused_part(work, chunk, key)
        if done is not None:
            return done
        data = self.client.scatter(chunk_payload(work, chunk, run_id, params), hash=False)
        future = self.client.submit(compute_on_worker, data, pure=False,
                                    key=f"fieldlimits-run-{run_id}-chunk-{chunk}-{os.urandom(4).hex()}")
        try:
            rows = future.result()
        finally:
            future.release()
            data.release()
        return write_parts(work, chunk, key, rows.direction, rows.airfield, rows.bases, rows.cases)

    def close(self) -> None:
        client, cluster, self.client, self._cluster = self.client, self._cluster, None, None
        if client is not None:
            client.close()
        if cluster is not None:
            cluster.close()


#: Environment of the local cluster's worker processes (see :meth:`DaskChunks.start`); start
#: remote workers with the same: :data:`WORKER_ENV_VARIABLE` set to :func:`worker_env_value`.
WORKER_MALLOC_ENV = {"MALLOC_MMAP_THRESHOLD_": "33554432", "MALLOC_TRIM_THRESHOLD_": "67108864"}
#: The Dask setting that gives :data:`WORKER_MALLOC_ENV` to the workers a nanny starts. It is
#: set as one dictionary: Dask lowercases the last part of a name such as
#: ``…__PRE_SPAWN_ENVIRON__MALLOC_TRIM_THRESHOLD_``, and glibc ignores the lowercase variable.
WORKER_ENV_VARIABLE = "DASK_DISTRIBUTED__NANNY__PRE_SPAWN_ENVIRON"


def worker_env_value() -> str:
    """The value of :data:`WORKER_ENV_VARIABLE` for the workers (merged into Dask's own)."""
    return json.dumps(WORKER_MALLOC_ENV)
