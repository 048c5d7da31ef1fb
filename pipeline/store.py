"""The DuckDB store: connections with lock handling, the schema, and the one-transaction load.

Layout of the file (DDL in ``pipeline/sql/``, definitions in :mod:`schemas.results`):

``runs``, ``run_inputs``, ``run_hashes``, ``run_sources``
    see :mod:`schemas.results`.
``results_direction``, ``results_airfield``, ``route_payload``, ``landing_direction``, ``landing_airfield``
    views that give every run its full rows (what everything reads); each row is stored once,
    in ``<table>_stored`` under the run that computed it. An unchanged rerun stores no result
    rows: ``run_sources`` says which run's rows each airfield × type reads, and
    ``runs.route_results_from_run_id`` which run's route payloads and landing limits.
``input_<table>``
    a copy of each validated input table (SI units), stored once per distinct content:
    column ``input_sha256`` is the table's hash, which ``run_inputs.sha256`` points at.
``route_payload``
    route payloads, when the input has a routes table (DDL from the route engineer's
    ``pipeline/sql/create_route_payload.sql``).
``run_scenarios``
    each run's scenario: ``baseline`` (no temperature offset) or ``temperature +2 K``, and the
    conditions and reliability levels that chose its rows.
``latest_run``, ``latest_results_direction``, ``latest_results_airfield``, ``latest_route_payload``
    views on the last complete *baseline* run, with a ``scenario`` column; a scenario run
    never becomes "latest".
``latest_scenario_runs``, ``scenario_results_airfield``, ``scenario_route_payload``
    the last complete run of each scenario, side by side.

Concurrency: DuckDB lets one process hold the file read-write, and while it does no other
process can open it, not even read-only. So the writer connects only for short moments
(register a run; load its results in one transaction; record a failure) and readers open
read-only, retry for a few seconds and then raise :class:`~pipeline.errors.StoreBusy` with
a plain message.

Live or dead: a run is ``running`` from its registration until its load or its failure is
recorded; a process that is killed records neither. The run row keeps the host and process
id, and a run started with ``heartbeat=True`` (every ``fieldlimits run``) keeps a small JSON
file ``<db>.heartbeat/run-NNNNNN.json`` beside the database, rewritten every
:data:`HEARTBEAT_EVERY_S` seconds by a thread of the run's process (no database lock), with
the process start time and the machine's boot id. :func:`run_liveness` tells live from dead
with them (same machine: the process id and its start time; another machine: the heartbeat's
age against :data:`HEARTBEAT_STALE_S`), read-only; the next :func:`register_run` records
dead runs as ``interrupted``.
"""

from __future__ import annotations

import functools
import json
import os
import re
import socket
import threading
import time
from contextlib import contextmanager
from dataclasses import dataclass, field
from datetime import datetime, timedelta, timezone
from pathlib import Path
from typing import Iterator, Sequence

import duckdb
import pandas as pd

from fieldlimits.pipeline.errors import BadInput, FieldlimitsError, StoreBusy
from fieldlimits.schemas import results as result_tables

SQL_DIR = Path(__file__).with_name("sql")
DEFAULT_DB = "fieldlimits.duckdb"
READER_WAIT_S = 5.0
WRITER_WAIT_S = 60.0
_RETRY_INTERVAL_S = 0.2
_IDENT = re.compile(r"^[a-z_][a-z0-9_]*$")

#: DuckDB's memory cap for the run's writer and the best-direction query (it spills to disk
#: beyond it); ``FIELDLIMITS_DUCKDB_MEMORY_LIMIT`` overrides (DuckDB size text, e.g. "2GB").
#: The load of a large run fills it: 20 M result rows appended in one transaction held
#: 0.95–1.05 GiB under a 1 GB cap and 0.57 GiB under 512 MB, in about the same time.
DEFAULT_DUCKDB_MEMORY_LIMIT = "512MB"

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
        _current_views(con)
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


#: Views created with the schema, in dependency order (``pipeline/sql/view_<name>.sql``).
VIEWS = ("run_scenarios", "latest_run", "latest_scenario_runs", "latest_results_direction",
         "latest_results_airfield", "latest_route_payload", "latest_landing_direction",
         "latest_landing_airfield", "scenario_results_airfield",
         "scenario_route_payload")


def ensure_schema(con: duckdb.DuckDBPyConnection) -> None:
    """Create the output tables and views if missing (idempotent, one transaction); a file
    from before reruns stored by reference is migrated (:func:`_store_by_reference`)."""
    run_sql(con, "BEGIN")
    try:
        migrated = _store_by_reference(con)
        for name in result_tables.TABLES:
            run_sql(con, sql(f"create_{name}"))
            _add_defined_columns(con, name)
        if migrated:
            run_sql(con, sql("migrate_run_sources"))
        for name in result_tables.STORED_BY_REFERENCE:
            run_sql(con, sql(f"view_{name}"))
        for view in VIEWS:
            run_sql(con, sql(f"view_{view}"))
        run_sql(con, "COMMIT")
    except Exception:
        run_sql(con, "ROLLBACK")
        raise


def _current_views(con: duckdb.DuckDBPyConnection) -> None:
    """A file last written by an older version has older views (or none): give this read-only
    connection today's as temporary views, which shadow the stored ones (nothing is written)."""
    names = {r[0] for r in con.execute(
        "SELECT table_name FROM information_schema.tables WHERE table_schema = 'main'").fetchall()}
    if "runs" not in names or "run_scenarios" in names:
        return
    for view in VIEWS:
        try:
            run_sql(con, sql(f"view_{view}").replace("CREATE OR REPLACE VIEW", "CREATE OR REPLACE TEMP VIEW", 1))
        except duckdb.Error:  # a table the view reads is missing in so old a file
            pass


def _add_defined_columns(con, table: str) -> None:
    """A file written by an older version gains the columns defined since (never loses any)."""
    stored = result_tables.stored_name(table)
    have = {r[0] for r in con.execute(
        "SELECT column_name FROM information_schema.columns WHERE table_name = $t", {"t": stored}).fetchall()}
    for column in result_tables.columns(table):
        if column.name not in have:
            run_sql(con, f'ALTER TABLE {_check_ident(stored)} ADD COLUMN "{column.name}" {column.sql_type}')


def _table_type(con, name: str) -> str | None:
    """``BASE TABLE``, ``VIEW`` or None (no such name)."""
    found = con.execute("SELECT table_type FROM information_schema.tables WHERE table_name = $n",
                        {"n": name}).fetchall()
    return found[0][0] if found else None


def _store_by_reference(con) -> bool:
    """Migrate a file written before results were stored by reference (inside the schema
    transaction; nothing is copied).

    Its result tables hold every run's rows in full: they are renamed to the stored tables
    (``results_direction`` → ``results_direction_stored``, ...), and the caller fills
    ``run_sources`` so that each earlier run reads its own rows. Returns whether it did.
    """
    moved = False
    for name, stored in result_tables.STORED_BY_REFERENCE.items():
        if _table_type(con, name) != "BASE TABLE":
            continue
        if _table_type(con, stored) is not None:
            raise FieldlimitsError(f"the database holds both a table {name} and {stored}; it was not "
                                   f"written by fieldlimits alone, so it is left as it is")
        run_sql(con, f"ALTER TABLE {_check_ident(name)} RENAME TO {_check_ident(stored)}")
        moved = moved or name in ("results_direction", "results_airfield")
    return moved


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
    work_root: str | None = None  # the run's work folder is <work_root>/run-NNNNNN (heartbeat)


# --------------------------------------------------------------------------- live or dead
#: A running process rewrites its heartbeat file this often [s].
HEARTBEAT_EVERY_S = 5.0
#: A heartbeat older than this [s] means a run started on another machine is presumed dead
#: (twelve missed beats; the machines' clocks must agree to well within it).
HEARTBEAT_STALE_S = 60.0

LIVE, DEAD, PRESUMED_DEAD, UNKNOWN = "live", "dead", "presumed dead", "unknown"


@dataclass(frozen=True)
class Liveness:
    """Whether the process of a ``running`` run still works on it, and why we think so."""

    state: str  # LIVE, DEAD, PRESUMED_DEAD or UNKNOWN
    reason: str
    heartbeat_age_s: float | None = None  # seconds since the last heartbeat (None: no file)

    @property
    def dead(self) -> bool:
        """Dead or presumed dead: the next run records it as interrupted."""
        return self.state in (DEAD, PRESUMED_DEAD)


def heartbeat_dir(db_path: str | os.PathLike) -> Path:
    """The folder of heartbeat files beside the database: ``<db>.heartbeat``."""
    path = Path(db_path)
    return path.with_name(path.name + ".heartbeat")


def heartbeat_path(db_path: str | os.PathLike, run_id: int) -> Path:
    return heartbeat_dir(db_path) / f"run-{int(run_id):06d}.json"


def _boot_id() -> str | None:
    """This machine's boot id (Linux); changes at every restart."""
    try:
        return Path("/proc/sys/kernel/random/boot_id").read_text().strip() or None
    except OSError:
        return None


def _proc_stat(pid: int) -> tuple[str, int] | None:
    """State letter and start time [clock ticks since boot] of a process from
    ``/proc/<pid>/stat`` (fields 3 and 22; proc(5)), or None without /proc or such a process."""
    try:
        text = Path(f"/proc/{int(pid)}/stat").read_text()
    except (OSError, ValueError):
        return None
    fields = text[text.rfind(")") + 2:].split()  # the command name may hold spaces and ')'
    try:
        return fields[0], int(fields[19])
    except (IndexError, ValueError):
        return None


def _process_alive(pid: int) -> bool:
    if pid <= 0:  # kill(0 or -n) would signal a process group, not a process
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    except (OverflowError, ValueError):  # not a process id this system can have
        return False
    stat = _proc_stat(pid)
    return not (stat and stat[0] == "Z")  # a zombie has ended; only its exit status is left


class _Heartbeat:
    """A daemon thread rewriting one run's heartbeat file (atomically) until stopped."""

    def __init__(self, path: Path, payload: dict, every_s: float):
        self.path, self.payload, self.every_s = path, payload, every_s
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._loop, name=f"fieldlimits-heartbeat-{path.stem}",
                                        daemon=True)

    def beat(self) -> None:
        self.path.parent.mkdir(exist_ok=True)
        tmp = self.path.with_name(f".{self.path.name}.tmp")
        tmp.write_text(json.dumps({**self.payload, "beat_at": time.time()}))
        os.replace(tmp, self.path)

    def _loop(self) -> None:
        while not self._stop.wait(self.every_s):
            try:
                self.beat()
            except OSError:  # a full disk or a removed folder must not stop the run
                pass

    def start(self) -> None:
        try:
            self.beat()
        except OSError:  # the thread tries again; the run must not fail for its heartbeat
            pass
        self._thread.start()

    def stop(self) -> None:
        self._stop.set()
        if self._thread.is_alive():
            self._thread.join(timeout=2 * self.every_s)
        _remove_heartbeat(self.path)


_HEARTBEATS: dict[tuple[str, int], _Heartbeat] = {}
_HEARTBEATS_LOCK = threading.Lock()


def _remove_heartbeat(path: Path) -> None:
    try:
        path.unlink(missing_ok=True)
        path.parent.rmdir()  # only when no other run's file is left
    except OSError:
        pass


def run_work_dir(work_root, run_id: int) -> Path:
    """The work folder of a run: ``<work_root>/run-NNNNNN``."""
    return Path(work_root) / f"run-{int(run_id):06d}"


def _start_heartbeat(db_path, run_id: int, started_at: datetime, work_root=None) -> None:
    stat = _proc_stat(os.getpid())
    beat = _Heartbeat(heartbeat_path(db_path, run_id), {
        "run_id": int(run_id), "host": socket.gethostname(), "pid": os.getpid(),
        "boot_id": _boot_id(), "process_started": stat[1] if stat else None,
        "started_at": started_at.isoformat(), "beat_every_s": HEARTBEAT_EVERY_S,
        "database": str(Path(db_path).resolve()),
        "work_dir": str(run_work_dir(work_root, run_id)) if work_root else None}, HEARTBEAT_EVERY_S)
    beat.start()
    with _HEARTBEATS_LOCK:
        _HEARTBEATS[(str(Path(db_path).resolve()), int(run_id))] = beat


def stop_heartbeat(db_path: str | os.PathLike, run_id: int) -> None:
    """Stop this process's heartbeat of a run and remove its file (no-op if there is none)."""
    with _HEARTBEATS_LOCK:
        beat = _HEARTBEATS.pop((str(Path(db_path).resolve()), int(run_id)), None)
    if beat is not None:
        beat.stop()


def read_heartbeat(db_path: str | os.PathLike, run_id: int) -> dict | None:
    """The run's heartbeat record, or None when there is no readable file for that run."""
    try:
        beat = json.loads(heartbeat_path(db_path, run_id).read_text())
    except (OSError, ValueError):
        return None
    if not isinstance(beat, dict) or beat.get("run_id") != int(run_id):
        return None
    return beat


def run_liveness(host: str | None, pid: int | None, beat: dict | None,
                 now: float | None = None) -> Liveness:
    """Live or dead, for a run still marked ``running`` (reads /proc and the clock, writes nothing).

    Same machine (``host`` is this host name and the heartbeat, if any, has this boot id):
    dead when process ``pid`` has ended or is a zombie, or when that process id now belongs to
    a process started at another time than the recorded one (process ids are reused), or when
    the machine has restarted since the run started; otherwise live. Another machine, or no
    host or process id: live while the heartbeat is at most :data:`HEARTBEAT_STALE_S` old,
    presumed dead after that, unknown without a heartbeat file.

    Parameters
    ----------
    host, pid
        ``runs.host`` and ``runs.pid`` of the run.
    beat
        :func:`read_heartbeat` of the run (None: no file).
    now
        Current time [s since 1970, UTC]; ``time.time()`` by default.
    """
    now = time.time() if now is None else now
    if beat is not None and (beat.get("host") != host or beat.get("pid") != pid):
        beat = None  # a file of some other process: no evidence about this run
    age = None
    if beat is not None and isinstance(beat.get("beat_at"), (int, float)):
        age = max(0.0, now - float(beat["beat_at"]))
    if host is not None and host == socket.gethostname() and pid is not None:
        return _same_host_liveness(host, int(pid), beat, age)
    where = f"on {host}" if host else "on an unrecorded machine"
    if age is None:
        return Liveness(UNKNOWN, f"started {where}, which this machine cannot check, and it has no "
                                 f"heartbeat file: cannot tell whether it is still working")
    if age > HEARTBEAT_STALE_S:
        return Liveness(PRESUMED_DEAD, f"started {where} (process {pid}); no heartbeat for "
                                       f"{age:.0f} s (more than {HEARTBEAT_STALE_S:.0f} s)", age)
    return Liveness(LIVE, f"started {where} (process {pid}); last heartbeat {age:.0f} s ago", age)


def _same_host_liveness(host: str, pid: int, beat: dict | None, age: float | None) -> Liveness:
    boot = _boot_id()
    if beat is not None and beat.get("boot_id") and boot and beat["boot_id"] != boot:
        return Liveness(DEAD, f"this machine ({host}) has restarted since the run started", age)
    if not _process_alive(pid):
        return Liveness(DEAD, f"process {pid} on this machine ({host}) has ended", age)
    stat = _proc_stat(pid)
    recorded = beat.get("process_started") if beat is not None else None
    if recorded is not None and stat is not None and stat[1] != recorded:
        return Liveness(DEAD, f"process {pid} on this machine ({host}) has ended; its process id "
                              f"now belongs to a process started at another time", age)
    how = "process id and start time" if recorded is not None and stat is not None else "process id only"
    since = f"; last heartbeat {age:.0f} s ago" if age is not None else ""
    return Liveness(LIVE, f"process {pid} on this machine ({host}) is running ({how}){since}", age)


def _mark_interrupted(con: duckdb.DuckDBPyConnection, db_path) -> list[int]:
    """Runs left 'running' by a dead process (:func:`run_liveness`) → interrupted.

    A run of this very process is live (same process id and start time), so it is left
    alone.
    """
    gone = []
    for run_id, run_host, pid in con.execute(sql("running_runs")).fetchall():
        state = run_liveness(run_host, pid, read_heartbeat(db_path, run_id))
        if state.dead:
            gone.append(int(run_id))
            seen = state.heartbeat_age_s  # finish time: its last sign of life, when known
            run_sql(con, sql("mark_interrupted"), {
                "run_id": run_id, "finished_at": utcnow() - timedelta(seconds=seen or 0.0),
                "error": f"the run's process ended before it finished (killed or crashed): {state.reason}"
                         + ("; finish time = its last heartbeat" if seen is not None else "")})
            _remove_work_dir(read_heartbeat(db_path, run_id), run_id)
    return gone


def _remove_work_dir(beat: dict | None, run_id: int) -> None:
    """Remove the work folder a dead run left (named in its heartbeat file; only a folder
    named ``run-NNNNNN`` of that very run, so nothing else can be removed)."""
    import shutil

    path = Path(beat["work_dir"]) if beat and beat.get("work_dir") else None
    if path is None or path.name != f"run-{int(run_id):06d}" or not path.is_dir():
        return
    shutil.rmtree(path, ignore_errors=True)
    try:
        path.parent.rmdir()  # the work root, when no other run's folder is in it
    except OSError:
        pass


def _tidy_heartbeats(con: duckdb.DuckDBPyConnection, db_path) -> None:
    """Remove the heartbeat files of runs no longer ``running`` (left by killed processes)."""
    folder = heartbeat_dir(db_path)
    if not folder.is_dir():
        return
    running = {int(r[0]) for r in con.execute(sql("running_runs")).fetchall()}
    for path in folder.glob("run-*.json"):
        number = path.stem.removeprefix("run-")
        if number.isdigit() and int(number) not in running:
            _remove_heartbeat(path)


def _tidy_work_dirs(con: duckdb.DuckDBPyConnection, work_root) -> None:
    """Remove the work folders (``run-NNNNNN`` in ``work_root``) of runs no longer ``running``:
    left by a stopped or killed process (their results were never loaded)."""
    import shutil

    root = Path(work_root)
    if not root.is_dir():
        return
    running = {int(r[0]) for r in con.execute(sql("running_runs")).fetchall()}
    for path in root.glob("run-*"):
        number = path.name.removeprefix("run-")
        if path.is_dir() and number.isdigit() and len(number) == 6 and int(number) not in running:
            shutil.rmtree(path, ignore_errors=True)
    _tidy_spools(root)


def _tidy_spools(root: Path) -> None:
    """Remove the spools (``prepare-<host>-<pid>-<n>``: input tables written while checked,
    ``pipeline.steps``) that a process of this machine left when it was killed."""
    import shutil
    import socket

    host = socket.gethostname().replace("-", "_") or "host"
    for path in root.glob(f"prepare-{host}-*"):
        pid = path.name.removeprefix(f"prepare-{host}-").split("-")[0]
        if not path.is_dir() or not pid.isdigit():
            continue
        try:
            os.kill(int(pid), 0)
        except ProcessLookupError:
            shutil.rmtree(path, ignore_errors=True)
        except OSError:
            pass  # alive (or not ours to signal): keep


def register_run(db_path: str | os.PathLike, record: RunRecord, heartbeat: bool = False) -> int:
    """Record a new run as ``running`` (short write) and return its run_id.

    Earlier runs whose process is dead are recorded as ``interrupted`` first. With
    ``heartbeat`` this process keeps the run's heartbeat file fresh until
    :func:`stop_heartbeat` (written before the writer lets readers in, so a reader never sees
    the run without it).
    """
    with writer(db_path) as con:
        run_sql(con, "BEGIN")
        try:
            _mark_interrupted(con, db_path)
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
        _tidy_heartbeats(con, db_path)
        own_root = Path(db_path).resolve().with_name(Path(db_path).name + ".work")
        if record.work_root and Path(record.work_root).resolve() == own_root:
            _tidy_work_dirs(con, own_root)  # a --work-dir may be shared by other databases
        if heartbeat:
            _start_heartbeat(db_path, run_id, record.started_at, record.work_root)
    return run_id


def interrupt_run(db_path: str | os.PathLike, run_id: int, reason: str) -> None:
    """Record a running run as interrupted (stopped before it finished), in a short write."""
    with writer(db_path) as con:
        run_sql(con, sql("mark_interrupted"), {"run_id": run_id, "finished_at": utcnow(),
                                               "error": reason[:4000]})


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
    route_payload: pd.DataFrame | str | None = None  # a frame, or its Parquet file (streamed in)
    # landing limits of the route destinations: frames, or their Parquet part files (scanned)
    landing_direction: pd.DataFrame | Sequence[str] | None = None
    landing_airfield: pd.DataFrame | Sequence[str] | None = None
    hashes: pd.DataFrame | None = None  # columns kind, key, sha256 (run_hashes)
    reused_sources: str | None = None  # Parquet: airfield_id, aircraft_type_id, source_run_id
    reused_cases: int = 0  # design-day direction rows the reused pairs must hold
    reused_from_run_id: int | None = None
    route_results_from_run_id: int | None = None  # read that run's route payloads and landing rows


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
        from fieldlimits.schemas import ddl
        from fieldlimits.schemas.tables import TABLES
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


def _load_landing(con, spec: LoadSpec) -> None:
    """The landing-mass limits of the route destinations (``landing_direction``,
    ``landing_airfield``; :mod:`pipeline.landing`): frames, or the landing step's Parquet part
    files, which DuckDB scans rather than holding them in memory."""
    for table, frame in (("landing_direction", spec.landing_direction),
                         ("landing_airfield", spec.landing_airfield)):
        if frame is None or not len(frame):
            continue
        if not isinstance(frame, pd.DataFrame):
            _append_parquet(con, result_tables.stored_name(table), [str(f) for f in frame], spec.run_id,
                            sql(f"create_{table}"))
            continue
        frame = frame.copy()
        if "run_id" in frame.columns:
            frame["run_id"] = spec.run_id
        else:
            frame.insert(0, "run_id", spec.run_id)
        _append_frame(con, result_tables.stored_name(table), frame, sql(f"create_{table}"))


def _load_route_payload(con, spec: LoadSpec) -> int:
    """Store the run's route payloads, or point the run at an earlier run's route payloads and
    landing limits (whole input unchanged); return the route payload rows it reads."""
    if spec.route_results_from_run_id is not None:
        run_sql(con, sql("set_route_results_source"),
                {"run_id": spec.run_id, "source_run_id": spec.route_results_from_run_id})
        return int(con.execute(sql("count_route_payload"), {"run_id": spec.run_id}).fetchall()[0][0])
    if spec.route_payload is None:
        return 0
    create = sql("create_route_payload") if sql_exists("create_route_payload") else None
    table = result_tables.stored_name("route_payload")
    if isinstance(spec.route_payload, pd.DataFrame):
        frame = spec.route_payload.copy()
        if "run_id" in frame.columns:
            frame["run_id"] = spec.run_id
        else:
            frame.insert(0, "run_id", spec.run_id)
        _append_frame(con, table, frame, create)
        rows = len(frame)
    else:  # the route step's Parquet file, scanned by DuckDB rather than held as a frame
        rows = _append_parquet(con, table, str(spec.route_payload), spec.run_id, create)
    run_sql(con, sql("view_latest_route_payload"))
    return rows


def _append_parquet(con, table: str, path: str | Sequence[str], run_id: int, create_sql: str | None) -> int:
    """Insert the rows of a Parquet file (or of several, in order) by column name with
    ``run_id`` set; return the rows."""
    import pyarrow.dataset as ds

    _check_ident(table)
    view = f"_file_{table}"
    data = ds.dataset(path, format="parquet")
    con.register(view, data)
    try:
        rest = "* EXCLUDE (run_id)" if "run_id" in data.schema.names else "*"
        if not _table_exists(con, table):
            run_sql(con, create_sql or f"CREATE TABLE {table} AS SELECT CAST(NULL AS BIGINT) AS "
                                       f"run_id, {rest} FROM {view} LIMIT 0")
        _add_missing_columns(con, table, view)
        run_sql(con, f"INSERT INTO {table} BY NAME SELECT CAST($r AS BIGINT) AS run_id, {rest} "
                     f"FROM {view}", {"r": run_id})
    finally:
        con.unregister(view)
    return data.count_rows()


def _load_run_sources(con, spec: LoadSpec) -> None:
    """Record which run's stored rows each airfield × type of this run reads: its own for
    what it computed, an earlier run's for what it reuses (checked against the plan)."""
    run_sql(con, sql("load_run_sources_computed"), {"run_id": spec.run_id})
    if not spec.reused_sources:
        return
    run_sql(con, sql("load_run_sources_reused"), {"run_id": spec.run_id, "file": str(spec.reused_sources)})
    found = int(con.execute(sql("reused_design_rows"), {"run_id": spec.run_id}).fetchall()[0][0])
    if found != spec.reused_cases:
        raise FieldlimitsError(
            f"run {spec.run_id} reuses {spec.reused_cases} design-day cases of run "
            f"{spec.reused_from_run_id} but finds {found} of them stored (were runs pruned while it "
            f"ran?); run it again, or with --no-reuse")


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
                _load_run_sources(con, spec)
                _load_inputs(con, spec.run_id, spec.inputs)
                _load_hashes(con, spec)
                _load_landing(con, spec)
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
        if isinstance(exc, KeyboardInterrupt):  # a stop: the caller records it as interrupted
            raise
        try:
            fail_run(db_path, spec.run_id, f"load failed: {type(exc).__name__}: {exc}")
        except Exception:  # the failure record is best effort; the original error matters
            pass
        raise
    return counts


# --------------------------------------------------------------------------- reuse
def find_reusable(db_path, reuse_key: str) -> tuple[int, pd.DataFrame, str, int] | None:
    """The last complete run with the same reuse key, its per-airfield/type hashes, the hash of
    its whole input, and the run whose route payloads and landing limits it reads (itself in
    a file from before these were stored by reference)."""
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
        run_id, input_hash = int(found[0][0]), found[0][1]
        hashes = con.sql(sql("run_hashes_of"), params={"run_id": run_id}).df()
        routes_from = run_id
        if "route_results_from_run_id" in cols:
            routes_from = int(con.execute(sql("route_results_source"), {"run_id": run_id}).fetchall()[0][0])
    return run_id, hashes, input_hash, routes_from


def reused_sources(db_path, prev_run_id: int, pairs: pd.DataFrame) -> pd.DataFrame:
    """For the reused (airfield_id, aircraft_type_id) ``pairs``, the run whose stored rows the
    previous run read them from (columns airfield_id, aircraft_type_id, source_run_id)."""
    with reader(db_path, wait_s=WRITER_WAIT_S) as con:
        con.register("reuse_pairs", pairs[["airfield_id", "aircraft_type_id"]])
        return con.execute(sql("reuse_sources"), {"prev_run_id": prev_run_id}).df()


def export_reused_route_rows(db_path, prev_run_id: int, new_run_id: int, pairs: pd.DataFrame,
                             path: Path, schema) -> int:
    """The previous run's ``results_airfield`` rows of the reused ``pairs`` (route origins) to
    Parquet, relabelled with the new run_id, for the route step; streamed; returns the rows."""
    import pyarrow.parquet as pq

    rows = 0
    with reader(db_path, wait_s=WRITER_WAIT_S) as con:
        con.register("route_pairs", pairs[["airfield_id", "aircraft_type_id"]])
        rel = con.sql(sql("reused_route_rows"), params={"prev_run_id": prev_run_id, "new_run_id": new_run_id})
        tmp = Path(path).with_name(f".{Path(path).name}.tmp")
        with pq.ParquetWriter(tmp, schema) as out:
            for batch in rel.to_arrow_reader(200_000):
                table = pa_table_from_batch(batch, schema)
                out.write_table(table)
                rows += table.num_rows
        os.replace(tmp, path)
    return rows


def pa_table_from_batch(batch, schema):
    import pyarrow as pa

    table = pa.Table.from_batches([batch])
    return table.select(schema.names).cast(schema)


# --------------------------------------------------------------------------- run list
def list_runs(db_path: str | os.PathLike, limit: int | None = 20, wait_s: float | None = None) -> pd.DataFrame:
    """The most recent runs, newest first, with the liveness of those still ``running``.

    Read-only (``list_runs.sql`` plus the process table and heartbeat files). Adds
    ``state`` (the status, or for a running run ``live``, ``dead``, ``presumed dead`` or
    ``unknown``), ``state_reason`` and ``heartbeat_age_s`` [s]; ``duration_s`` of a running
    run is the time since it started (live or unknown) or until its last heartbeat (dead).
    """
    with reader(db_path, READER_WAIT_S if wait_s is None else wait_s) as con:
        frame = con.execute(sql("list_runs"), {"limit": limit}).df()
    now, now_utc = time.time(), utcnow()
    states, reasons, ages = [], [], []
    for i, row in enumerate(frame.itertuples(index=False)):
        if row.status != "running":
            states.append(row.status)
            reasons.append(None)
            ages.append(None)
            continue
        pid = None if pd.isna(row.pid) else int(row.pid)
        host = None if pd.isna(row.host) else row.host
        beat = read_heartbeat(db_path, row.run_id)
        state = run_liveness(host, pid, beat, now)
        states.append(state.state)
        reasons.append(state.reason)
        ages.append(state.heartbeat_age_s)
        started = row.started_at.to_pydatetime()
        if not state.dead:
            frame.loc[i, "duration_s"] = (now_utc - started).total_seconds()
        elif state.heartbeat_age_s is not None:
            last = datetime.fromtimestamp(float(beat["beat_at"]), timezone.utc).replace(tzinfo=None)
            frame.loc[i, "duration_s"] = max(0.0, (last - started).total_seconds())
    frame["state"] = states
    frame["state_reason"] = reasons
    frame["heartbeat_age_s"] = pd.array(ages, dtype="Float64")
    return frame


def heartbeat_runs(db_path: str | os.PathLike) -> list[tuple[dict, Liveness]]:
    """Runs known from their heartbeat files alone (when the database is busy), by run id."""
    found = []
    folder = heartbeat_dir(db_path)
    for path in sorted(folder.glob("run-*.json")) if folder.is_dir() else ():
        number = path.stem.removeprefix("run-")
        beat = read_heartbeat(db_path, int(number)) if number.isdigit() else None
        if beat is not None:
            found.append((beat, run_liveness(beat.get("host"), beat.get("pid"), beat)))
    return found


def run_summary(db_path: str | os.PathLike, run_id: int) -> pd.DataFrame:
    """Restricted airfield-months per aircraft type and condition for one run."""
    with reader(db_path, wait_s=WRITER_WAIT_S) as con:
        return con.execute(sql("summary_restrictions"), {"run_id": run_id}).df()
