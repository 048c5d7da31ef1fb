"""The DuckDB store: connections with lock handling, the schema, and the one-transaction load.

Layout of the file (DDL in ``pipeline/sql/``, definitions in :mod:`schemas.results`):

``runs``, ``run_inputs``, ``results_direction``, ``results_airfield``
    see :mod:`schemas.results`.
``input_<table>``
    a copy of each validated input table (SI units), stored once per distinct content:
    column ``input_sha256`` is the table's hash, which ``run_inputs.sha256`` points at.
``route_payload``
    route payloads, when the input has a routes table (DDL from the route engineer's
    ``pipeline/sql/create_route_payload.sql``).
``latest_run``, ``latest_results_direction``, ``latest_results_airfield``,
``latest_route_payload``, ``scenario_results_airfield``
    views on the last complete run (and the last complete run of each climate scenario).

Concurrency: DuckDB lets one process hold the file read-write, and while it does no other
process can open it, not even read-only. So the writer connects only for short moments
(register a run; load its results in one transaction; record a failure) and readers open
read-only, retry for a few seconds and then raise :class:`~pipeline.errors.StoreBusy` with
a plain message.
"""

from __future__ import annotations

import functools
import json
import os
import re
import socket
import time
from contextlib import contextmanager
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path
from typing import Iterator, Sequence

import duckdb
import pandas as pd

from pipeline.errors import BadInput, FieldlimitsError, StoreBusy
from schemas import results as result_tables

SQL_DIR = Path(__file__).with_name("sql")
DEFAULT_DB = "fieldlimits.duckdb"
READER_WAIT_S = 5.0
WRITER_WAIT_S = 60.0
_RETRY_INTERVAL_S = 0.2
_IDENT = re.compile(r"^[a-z_][a-z0-9_]*$")

#: DuckDB's memory cap for the run's writer and the best-direction query (it spills to disk
#: beyond it); ``FIELDLIMITS_DUCKDB_MEMORY_LIMIT`` overrides (DuckDB size text, e.g. "2GB").
DEFAULT_DUCKDB_MEMORY_LIMIT = "1GB"

BUSY_MESSAGE = (
    "the database {path} is being written by a fieldlimits run right now; "
    "try again in a few seconds"
)


@functools.cache
def sql(name: str) -> str:
    """Text of ``pipeline/sql/<name>.sql``."""
    return (SQL_DIR / f"{name}.sql").read_text()


def sql_exists(name: str) -> bool:
    """Whether ``pipeline/sql/<name>.sql`` exists (optional DDL from other layers)."""
    return (SQL_DIR / f"{name}.sql").exists()


def run_sql(con: duckdb.DuckDBPyConnection, query: str, params=None) -> list:
    """Execute a statement and consume its result (DuckDB 2 wants every result finished)."""
    cur = con.execute(query, params) if params is not None else con.execute(query)
    return cur.fetchall()


def utcnow() -> datetime:
    """Current UTC time without tzinfo (DuckDB TIMESTAMP)."""
    return datetime.now(timezone.utc).replace(tzinfo=None)


def duckdb_memory_limit() -> str:
    """The memory cap for DuckDB work of a run (see :data:`DEFAULT_DUCKDB_MEMORY_LIMIT`)."""
    return os.environ.get("FIELDLIMITS_DUCKDB_MEMORY_LIMIT", "").strip() or DEFAULT_DUCKDB_MEMORY_LIMIT


def _is_lock_error(exc: Exception) -> bool:
    text = str(exc)
    return isinstance(exc, duckdb.IOException) and ("lock" in text.lower())


def _connect(path: Path, read_only: bool, wait_s: float, config: dict | None) -> duckdb.DuckDBPyConnection:
    deadline = time.monotonic() + wait_s
    while True:
        try:
            return duckdb.connect(str(path), read_only=read_only, config=config or {})
        except duckdb.Error as exc:
            if _is_lock_error(exc):
                if time.monotonic() >= deadline:
                    raise StoreBusy(BUSY_MESSAGE.format(path=path)) from None
                time.sleep(_RETRY_INTERVAL_S)
                continue
            if read_only and "does not exist" in str(exc):
                raise BadInput(
                    f"no database at {path}: run `fieldlimits run` first or pass --db PATH"
                ) from None
            raise FieldlimitsError(f"cannot open the database {path}: {exc}") from None


@contextmanager
def reader(db_path: str | os.PathLike, wait_s: float = READER_WAIT_S) -> Iterator[duckdb.DuckDBPyConnection]:
    """Read-only connection (no file access from SQL either); closed on exit.

    Retries for ``wait_s`` seconds while a writer holds the file, then raises
    :class:`StoreBusy`. A missing file raises :class:`BadInput`.
    """
    con = _connect(Path(db_path), True, wait_s, {"enable_external_access": False})
    try:
        yield con
    finally:
        con.close()


@contextmanager
def writer(db_path: str | os.PathLike, wait_s: float = WRITER_WAIT_S) -> Iterator[duckdb.DuckDBPyConnection]:
    """Read-write connection held only for the ``with`` block; the schema is ensured."""
    path = Path(db_path)
    if path.parent and not path.parent.exists():
        raise BadInput(f"the folder for the database {path} does not exist")
    # capped: a big run's load spills to <db>.tmp instead of growing without bound
    con = _connect(path, False, wait_s, {"memory_limit": duckdb_memory_limit()})
    try:
        ensure_schema(con)
        yield con
    finally:
        con.close()


def ensure_schema(con: duckdb.DuckDBPyConnection) -> None:
    """Create the output tables and views if missing (idempotent, one transaction)."""
    run_sql(con, "BEGIN")
    try:
        for name in result_tables.TABLES:
            run_sql(con, sql(f"create_{name}"))
            _add_defined_columns(con, name)
        for view in ("latest_run", "latest_results_direction", "latest_results_airfield",
                     "scenario_results_airfield"):
            run_sql(con, sql(f"view_{view}"))
        run_sql(con, "COMMIT")
    except Exception:
        run_sql(con, "ROLLBACK")
        raise


def _add_defined_columns(con, table: str) -> None:
    """A file written by an older version gains the columns defined since (never loses any)."""
    have = {r[0] for r in con.execute(
        "SELECT column_name FROM information_schema.columns WHERE table_name = $t", {"t": table}).fetchall()}
    for column in result_tables.columns(table):
        if column.name not in have:
            run_sql(con, f'ALTER TABLE {_check_ident(table)} ADD COLUMN "{column.name}" {column.sql_type}')


# --------------------------------------------------------------------------- run records
@dataclass
class RunRecord:
    """What is known about a run when it is registered."""

    input_dir: str
    parameters: dict
    temperature_offset_k: float
    input_hash: str
    input_hashes: dict
    code_version: str
    airfields: int
    cases: int
    chunks: int
    reused_cases: int = 0
    reused_from_run_id: int | None = None
    reuse_key: str | None = None
    started_at: datetime = field(default_factory=utcnow)


def _process_alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def _mark_interrupted(con: duckdb.DuckDBPyConnection) -> list[int]:
    """Runs left 'running' by a process on this host that no longer exists → interrupted."""
    host = socket.gethostname()
    gone = [
        run_id
        for run_id, run_host, pid in con.execute(sql("running_runs")).fetchall()
        if run_host == host and pid is not None and pid != os.getpid() and not _process_alive(int(pid))
    ]
    for run_id in gone:
        run_sql(con, sql("mark_interrupted"), {"run_id": run_id, "finished_at": utcnow()})
    return gone


def register_run(db_path: str | os.PathLike, record: RunRecord) -> int:
    """Record a new run as ``running`` (short write) and return its run_id."""
    with writer(db_path) as con:
        run_sql(con, "BEGIN")
        try:
            _mark_interrupted(con)
            run_id = int(con.execute(sql("next_run_id")).fetchall()[0][0])
            run_sql(con, sql("insert_run"), {
                "run_id": run_id,
                "started_at": record.started_at,
                "input_dir": record.input_dir,
                "parameters": json.dumps(record.parameters, sort_keys=True, default=str),
                "temperature_offset_k": float(record.temperature_offset_k),
                "input_hash": record.input_hash,
                "input_hashes": json.dumps(record.input_hashes, sort_keys=True),
                "code_version": record.code_version,
                "airfields": int(record.airfields),
                "cases": int(record.cases),
                "chunks": int(record.chunks),
                "reused_cases": int(record.reused_cases),
                "reused_from_run_id": record.reused_from_run_id,
                "reuse_key": record.reuse_key,
                "host": socket.gethostname(),
                "pid": os.getpid(),
            })
            run_sql(con, "COMMIT")
        except Exception:
            run_sql(con, "ROLLBACK")
            raise
    return run_id


def fail_run(db_path: str | os.PathLike, run_id: int, error: str) -> None:
    """Record a run as failed, in its own short transaction."""
    with writer(db_path) as con:
        run_sql(con, sql("fail_run"), {"run_id": run_id, "finished_at": utcnow(), "error": error[:4000]})


# --------------------------------------------------------------------------- the load
@dataclass
class InputTable:
    """One validated input table a run used."""

    name: str
    file_name: str | None
    sha256: str
    frame: pd.DataFrame | None = None
    path: str | None = None  # Parquet copy of the table (read by DuckDB instead of ``frame``)


@dataclass
class LoadSpec:
    """Everything the writer needs for one run (paths and small frames, no connections)."""

    run_id: int
    direction_parts: Sequence[str]
    airfield_parts: Sequence[str] = ()
    inputs: Sequence[InputTable] = ()
    route_payload: pd.DataFrame | None = None
    hashes: pd.DataFrame | None = None  # columns kind, key, sha256 (run_hashes)


def _check_ident(name: str) -> str:
    if not _IDENT.match(name):
        raise ValueError(f"not a plain table name: {name!r}")
    return name


def _table_exists(con: duckdb.DuckDBPyConnection, name: str) -> bool:
    return bool(con.execute(
        "SELECT count(*) FROM information_schema.tables WHERE table_name = $name",
        {"name": name}).fetchall()[0][0])


def _add_missing_columns(con, table: str, frame_view: str) -> None:
    """Let a stored table gain columns that a newer frame has (schema grows, never breaks)."""
    have = {r[0] for r in con.execute(
        "SELECT column_name FROM information_schema.columns WHERE table_name = $t", {"t": table}).fetchall()}
    for col, typ, *_ in con.execute(f"DESCRIBE {frame_view}").fetchall():
        if col not in have:
            run_sql(con, f'ALTER TABLE {table} ADD COLUMN "{col}" {typ}')


def _append_frame(con, table: str, frame: pd.DataFrame, create_sql: str | None = None) -> None:
    """Insert a frame by column name; create the table from DDL (or the frame) first if needed."""
    _check_ident(table)
    view = f"_frame_{table}"
    con.register(view, frame)
    try:
        if not _table_exists(con, table):
            if create_sql:
                run_sql(con, create_sql)
            else:
                run_sql(con, f"CREATE TABLE {table} AS SELECT * FROM {view} LIMIT 0")
        _add_missing_columns(con, table, view)
        run_sql(con, f"INSERT INTO {table} BY NAME SELECT * FROM {view}")
    finally:
        con.unregister(view)


def _append_input(con, table: str, source: InputTable, create_sql: str | None) -> None:
    """Insert an input table with its ``input_sha256``, from its frame or its Parquet copy
    (no copy of a frame in memory: large wind roses)."""
    _check_ident(table)
    view = f"_frame_{table}"
    if source.frame is not None:
        con.register(view, source.frame)
    else:
        import pyarrow.dataset as ds

        con.register(view, ds.dataset(str(source.path), format="parquet"))  # scanned, not loaded
    try:
        if not _table_exists(con, table):
            run_sql(con, create_sql or
                    f"CREATE TABLE {table} AS SELECT CAST(NULL AS VARCHAR) AS input_sha256, * "
                    f"FROM {view} LIMIT 0")
        _add_missing_columns(con, table, view)
        run_sql(con, f"INSERT INTO {table} BY NAME SELECT CAST($h AS VARCHAR) AS input_sha256, * "
                     f"FROM {view}", {"h": source.sha256})
    finally:
        con.unregister(view)


def _input_ddl(table: str, sql_name: str) -> str | None:
    """DDL of a stored input table from :mod:`schemas.ddl` (user units, column comments)."""
    try:
        from schemas import ddl
        from schemas.tables import TABLES
    except ImportError:
        return None
    if table not in TABLES:
        return None
    return ddl.create_table_sql(table, sql_name, leading_columns=[
        ("input_sha256", "VARCHAR NOT NULL", "[sha256] hash of the table content (run_inputs.sha256)")])


def _load_inputs(con, run_id: int, inputs: Sequence[InputTable]) -> None:
    for table in inputs:
        name = "input_" + _check_ident(table.name)
        stored = _table_exists(con, name) and con.execute(
            f"SELECT count(*) FROM {name} WHERE input_sha256 = $h", {"h": table.sha256}).fetchall()[0][0]
        if table.frame is not None:
            rows = len(table.frame)
        else:
            import pyarrow.parquet as pq

            rows = pq.ParquetFile(table.path).metadata.num_rows
        if not stored:
            _append_input(con, name, table, _input_ddl(table.name, name))
        run_sql(con, sql("insert_run_input"), {
            "run_id": run_id, "table_name": table.name, "file_name": table.file_name,
            "row_count": rows, "sha256": table.sha256})


def _load_hashes(con, spec: LoadSpec) -> None:
    if spec.hashes is None or not len(spec.hashes):
        return
    frame = spec.hashes[["kind", "key", "sha256"]].copy()
    frame.insert(0, "run_id", spec.run_id)
    _append_frame(con, "run_hashes", frame)


def _load_results_direction(con, spec: LoadSpec) -> None:
    if spec.direction_parts:
        run_sql(con, sql("load_results_direction"), {"files": [str(p) for p in spec.direction_parts]})


def _load_results_airfield(con, spec: LoadSpec) -> None:
    if spec.airfield_parts:
        run_sql(con, sql("load_results_airfield"), {"files": [str(p) for p in spec.airfield_parts]})


def _load_route_payload(con, spec: LoadSpec) -> int:
    if spec.route_payload is None:
        return 0
    frame = spec.route_payload.copy()
    if "run_id" in frame.columns:
        frame["run_id"] = spec.run_id
    else:
        frame.insert(0, "run_id", spec.run_id)
    create = sql("create_route_payload") if sql_exists("create_route_payload") else None
    _append_frame(con, "route_payload", frame, create)
    run_sql(con, sql("view_latest_route_payload"))
    return len(frame)


def load_run(db_path: str | os.PathLike, spec: LoadSpec) -> dict[str, int]:
    """Load a run's parts and inputs and mark it complete, all in ONE transaction.

    On any error the transaction is rolled back (earlier runs untouched, this run's rows
    absent), the run is recorded as failed in a separate short transaction, and the error
    is raised again. Returns the row counts written.
    """
    try:
        with writer(db_path) as con:
            run_sql(con, "BEGIN")
            try:
                _load_results_direction(con, spec)
                _load_results_airfield(con, spec)
                _load_inputs(con, spec.run_id, spec.inputs)
                _load_hashes(con, spec)
                rows_route = _load_route_payload(con, spec)
                rows_dir, rows_af = con.execute(sql("count_run_rows"), {"run_id": spec.run_id}).fetchall()[0]
                counts = {"rows_direction": int(rows_dir), "rows_airfield": int(rows_af),
                          "rows_route_payload": int(rows_route)}
                run_sql(con, sql("complete_run"), {"run_id": spec.run_id, "finished_at": utcnow(), **counts})
                run_sql(con, "COMMIT")
            except BaseException:
                run_sql(con, "ROLLBACK")
                raise
    except BaseException as exc:
        try:
            fail_run(db_path, spec.run_id, f"load failed: {type(exc).__name__}: {exc}")
        except Exception:  # the failure record is best effort; the original error matters
            pass
        raise
    return counts


# --------------------------------------------------------------------------- reuse
def find_reusable(db_path, reuse_key: str) -> tuple[int, pd.DataFrame] | None:
    """The last complete run with the same reuse key and its per-airfield/type hashes."""
    if not Path(db_path).exists():
        return None
    with reader(db_path, wait_s=WRITER_WAIT_S) as con:
        if not _table_exists(con, "run_hashes"):
            return None
        cols = {r[0] for r in con.execute(
            "SELECT column_name FROM information_schema.columns WHERE table_name = 'runs'").fetchall()}
        if "reuse_key" not in cols:
            return None
        found = con.execute(sql("reusable_run"), {"reuse_key": reuse_key}).fetchall()
        if not found:
            return None
        run_id = int(found[0][0])
        hashes = con.sql(sql("run_hashes_of"), params={"run_id": run_id}).df()
    return run_id, hashes


def export_reused(db_path, prev_run_id: int, new_run_id: int, pairs: pd.DataFrame,
                  direction_path: Path, airfield_path: Path, schema) -> int:
    """Copy a previous run's rows for the (airfield_id, aircraft_type_id) ``pairs`` to Parquet.

    The rows get the new run_id. Streamed in batches; returns the design-day direction rows.
    """
    import pyarrow.parquet as pq

    design = 0
    with reader(db_path, wait_s=WRITER_WAIT_S) as con:
        con.register("reuse_pairs", pairs[["airfield_id", "aircraft_type_id"]])
        for name, path in (("reuse_results_direction", direction_path), ("reuse_results_airfield", airfield_path)):
            rel = con.sql(sql(name), params={"prev_run_id": prev_run_id, "new_run_id": new_run_id})
            tmp = Path(path).with_name(f".{Path(path).name}.tmp")
            with pq.ParquetWriter(tmp, schema) as out:
                for batch in rel.to_arrow_reader(200_000):
                    table = pa_table_from_batch(batch, schema)
                    out.write_table(table)
                    if name == "reuse_results_direction":
                        design += int(pa_count_design(table))
            os.replace(tmp, path)
    return design


def pa_table_from_batch(batch, schema):
    import pyarrow as pa

    table = pa.Table.from_batches([batch])
    return table.select(schema.names).cast(schema)


def pa_count_design(table) -> int:
    import pyarrow.compute as pc

    return pc.sum(pc.equal(table.column("basis"), "design_day")).as_py() or 0


def run_summary(db_path: str | os.PathLike, run_id: int) -> pd.DataFrame:
    """Restricted airfield-months per aircraft type and condition for one run."""
    with reader(db_path, wait_s=WRITER_WAIT_S) as con:
        return con.execute(sql("summary_restrictions"), {"run_id": run_id}).df()
