"""Remove old runs from the store without breaking the runs that remain (``fieldlimits prune``).

Which runs go (:func:`plan_prune`): ``keep=N`` selects every run numbered below the N-th
newest complete run; ``before=T`` every run started before ``T`` (UTC); given both, a run must
be selected by both. Whatever the options, these stay, each with its reason:

* a run still ``running`` (after dead ones are recorded as interrupted): its load will
  reference the rows of the run it reuses, so that run stays too;
* the last complete run of each climate scenario (``latest_*`` and ``scenario_*`` views);
* the newest run of all, so that run numbers keep increasing.

How (:func:`prune`), in ONE transaction: the pruned runs' rows in ``runs``, ``run_inputs``,
``run_hashes``, ``run_sources`` and ``route_payload`` are deleted; then every stored result row
that no remaining run reads (``run_sources``) is deleted, so rows a remaining run reuses from
a pruned run stay where they are, under the number of the run that computed them; then the
input-table contents no remaining run read. A crash or an error rolls all of it back.
DuckDB reuses the freed space for later runs; the file itself shrinks only when the free
space is at its end. :func:`compact_copy` writes a compact copy of the store beside it.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from datetime import datetime
from pathlib import Path

import pandas as pd

from fieldlimits.pipeline import store
from fieldlimits.pipeline.errors import BadInput

KEEP_RUNNING = "still running"
KEEP_REUSED = "a running run reuses its results"
KEEP_SCENARIO = "last complete run of its climate scenario"
KEEP_NEWEST = "newest run (run numbers keep increasing)"


@dataclass
class PrunePlan:
    """The runs a prune removes, and the selected runs it keeps with the reason."""

    remove: list[int]
    kept: dict[int, str] = field(default_factory=dict)
    runs: pd.DataFrame = field(default_factory=pd.DataFrame)  # prune_runs.sql, every run


@dataclass
class PruneResult:
    """What a prune did: the plan, rows deleted per table, file size before and after [bytes]."""

    plan: PrunePlan
    deleted: dict[str, int]
    bytes_before: int
    bytes_after: int


def plan_prune(runs: pd.DataFrame, keep: int | None = None, before: datetime | None = None) -> PrunePlan:
    """Which runs go (see the module docstring); pure, from the ``prune_runs.sql`` rows.

    Parameters
    ----------
    runs
        Every run: run_id, status, started_at, finished_at, temperature_offset_k [K],
        reused_from_run_id.
    keep
        Keep the ``keep`` newest complete runs and every later run (None: no such rule).
    before
        Remove runs started before this time [UTC, naive] (None: no such rule).
    """
    if keep is None and before is None:
        raise BadInput("say which runs to remove: --keep N (keep the N newest complete runs) "
                       "and/or --before DATE (runs started before DATE, UTC)")
    if keep is not None and keep < 1:
        raise BadInput(f"--keep must be a whole number of runs, at least 1; got {keep}")
    if runs.empty:
        return PrunePlan([], {}, runs)
    selected = pd.Series(True, index=runs.index)
    if keep is not None:
        complete = runs.loc[runs["status"] == "complete", "run_id"].sort_values(ascending=False)
        if len(complete) < keep:
            selected &= False
        else:
            selected &= runs["run_id"] < int(complete.iloc[keep - 1])
    if before is not None:
        selected &= runs["started_at"] < pd.Timestamp(before)
    reasons = _protected(runs)
    remove = [int(r) for r in runs.loc[selected, "run_id"] if int(r) not in reasons]
    kept = {int(r): reasons[int(r)] for r in runs.loc[selected, "run_id"] if int(r) in reasons}
    return PrunePlan(remove, kept, runs)


def _protected(runs: pd.DataFrame) -> dict[int, str]:
    """Runs that stay whatever the options, with the reason."""
    why: dict[int, str] = {}
    running = runs[runs["status"] == "running"]
    for run_id in running["run_id"]:
        why[int(run_id)] = KEEP_RUNNING
    for run_id in running["reused_from_run_id"].dropna():
        why.setdefault(int(run_id), KEEP_REUSED)
    complete = runs[runs["status"] == "complete"].sort_values(["finished_at", "run_id"], ascending=False)
    for run_id in complete.drop_duplicates("temperature_offset_k")["run_id"]:
        why.setdefault(int(run_id), KEEP_SCENARIO)
    why.setdefault(int(runs["run_id"].max()), KEEP_NEWEST)
    return why


def read_plan(db_path, keep: int | None = None, before: datetime | None = None) -> PrunePlan:
    """The plan for a dry run: read-only, nothing written (dead runs still show as running)."""
    with store.reader(db_path) as con:
        runs = con.execute(store.sql("prune_runs")).df()
    return plan_prune(runs, keep, before)


_DELETES = ("run_sources", "run_hashes", "run_inputs", "runs_rows", "results_direction",
            "results_airfield", "route_payload", "landing_direction", "landing_airfield")


def prune(db_path, keep: int | None = None, before: datetime | None = None) -> PruneResult:
    """Remove the runs :func:`plan_prune` selects, in one transaction (see the module docstring)."""
    path = Path(db_path)
    if not path.exists():
        raise BadInput(f"no database at {path}: nothing to prune (pass --db PATH)")
    size_before = path.stat().st_size
    deleted: dict[str, int] = {}
    with store.writer(path) as con:
        store.run_sql(con, "BEGIN")
        try:
            store._mark_interrupted(con, path)  # a dead run's results are no one's to wait for
            plan = plan_prune(con.execute(store.sql("prune_runs")).df(), keep, before)
            if plan.remove:
                con.register("prune_ids", pd.DataFrame({"run_id": pd.array(plan.remove, dtype="int64")}))
                for name in _DELETES:
                    deleted[name.removesuffix("_rows")] = _count(store.run_sql(con, store.sql(f"prune_{name}")))
                for (table,) in con.execute(store.sql("input_tables")).fetchall():
                    query = store.sql("prune_input_table").format(table=store._check_ident(table))
                    deleted[table] = _count(store.run_sql(con, query, {"name": table.removeprefix("input_")}))
                con.unregister("prune_ids")
            store.run_sql(con, "COMMIT")
        except BaseException:
            store.run_sql(con, "ROLLBACK")
            raise
        if plan.remove:
            store.run_sql(con, "CHECKPOINT")  # frees the deleted rows' blocks for reuse now
    return PruneResult(plan, deleted, size_before, os.path.getsize(path))


def _count(result: list) -> int:
    """Rows a DELETE reports."""
    return int(result[0][0]) if result else 0


def compact_copy(db_path, out_path) -> int:
    """Write a compact copy of the store to ``out_path`` (a new file); return its size [bytes].

    Every table and view is copied as it is (DuckDB's ``COPY FROM DATABASE``), without the
    free space a prune left. The store is held for writing meanwhile, so no run changes it
    during the copy; the copy is written under a temporary name and renamed when complete.
    Putting it in the store's place is left to the user (while no run is active).
    """
    path, out = Path(db_path), Path(out_path)
    if not path.exists():
        raise BadInput(f"no database at {path}: nothing to copy (pass --db PATH)")
    if out.exists() or out.resolve() == path.resolve():
        raise BadInput(f"{out} exists already; give a new file name for the compact copy")
    if not out.parent.is_dir():
        raise BadInput(f"the folder for the compact copy {out} does not exist")
    tmp = out.with_name(f".{out.name}.{os.getpid()}.tmp")
    try:
        with store.writer(path) as con:
            source = con.execute("SELECT current_database()").fetchall()[0][0]
            literal = str(tmp).replace("'", "''")  # ATTACH takes no bound parameter
            store.run_sql(con, f"ATTACH '{literal}' AS fieldlimits_compact")
            try:
                store.run_sql(con, f'COPY FROM DATABASE "{source}" TO fieldlimits_compact')
            finally:
                store.run_sql(con, "DETACH fieldlimits_compact")
        os.replace(tmp, out)
    finally:
        tmp.unlink(missing_ok=True)
        Path(f"{tmp}.wal").unlink(missing_ok=True)
    return out.stat().st_size
