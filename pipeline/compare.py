"""What changed between two runs: route payloads and takeoff-weight limits that moved, and why.

Planners ask it after every fleet, network or climate change: ``fieldlimits compare`` (and the
report's comparison chart) put two complete runs side by side, row by row
(``pipeline/sql/compare_airfield.sql``, ``compare_route.sql``): every airfield-month (best
runway direction, per type, condition and level) whose takeoff-weight limit moved by at least
``min_change_kg``, and every route-month whose payload did, with the limiting factor before
and after (for routes also the origin's), plus rows that became possible or impossible or are
in one run only (an airfield or route added or removed).

Which runs, by default (:func:`pick_runs`): the later run is the last complete run; the earlier
one is the last complete *baseline* run before it when the later run is a scenario
(temperature +2 K against the climate as given), otherwise the baseline run before it (the
network or fleet as it was).
"""

from __future__ import annotations

from dataclasses import dataclass

import pandas as pd

from fieldlimits.pipeline import store
from fieldlimits.pipeline.errors import BadInput

#: Smallest move reported [kg]: a tenth of a passenger; below it the weight search's 1 kg
#: tolerance would show up as change between runs of slightly different inputs.
DEFAULT_MIN_CHANGE_KG = 10.0
QUANTITY = {"route": "payload", "airfield": "takeoff_weight_limit"}


@dataclass(frozen=True)
class RunInfo:
    """A complete run as the comparison names it."""

    run_id: int
    scenario: str
    finished_at: object
    input_dir: str | None
    conditions: str | None = None
    reliability_levels: str | None = None
    rows_airfield: int = 0
    rows_route_payload: int = 0

    def label(self) -> str:
        """``run 3 (baseline)``."""
        return f"run {self.run_id} ({self.scenario})"


@dataclass
class Comparison:
    """Two runs and the rows that moved between them (columns of the compare_*.sql queries)."""

    before: RunInfo
    after: RunInfo
    airfields: pd.DataFrame
    routes: pd.DataFrame
    min_change_kg: float
    compared_airfield_rows: int = 0
    compared_route_rows: int = 0

    def changes(self) -> pd.DataFrame:
        """Both kinds in one frame, one row per moved route-month or airfield-month.

        ``kind`` is ``route_month`` or ``airfield_month``; ``quantity`` says what
        ``before_kg`` and ``after_kg`` hold (payload, or the takeoff-weight limit); the level
        is ``design_day`` or ``p85``; the runs and their scenarios are columns too.
        """
        from fieldlimits.pipeline.routes import level_label

        frames = []
        for kind, frame in (("route_month", self.routes), ("airfield_month", self.airfields)):
            if frame is None or frame.empty:
                continue
            f = frame.copy()
            if kind == "airfield_month":
                f = f.rename(columns={"airfield_id": "origin_id"})
            f.insert(0, "kind", kind)
            f.insert(1, "quantity", QUANTITY["route" if kind == "route_month" else "airfield"])
            f["level"] = [level_label(b, r) for b, r in zip(f["basis"], f["reliability"])]
            frames.append(f)
        order = ["kind", "quantity", "route_id", "origin_id", "destination_id", "aircraft_type_id",
                 "month", "condition", "level", "before_kg", "after_kg", "change_kg", "change_pct",
                 "change", "limiting_factor_before", "limiting_factor_after",
                 "origin_limiting_factor_before", "origin_limiting_factor_after",
                 "origin_tow_limit_before_kg", "origin_tow_limit_after_kg", "runway_before",
                 "runway_after"]
        if not frames:
            out = pd.DataFrame(columns=order)
        else:
            out = pd.concat(frames, ignore_index=True, sort=False)
            out = out.reindex(columns=order)
        out = out.rename(columns={"origin_id": "airfield_id"})
        out["before_run_id"] = self.before.run_id
        out["before_scenario"] = self.before.scenario
        out["after_run_id"] = self.after.run_id
        out["after_scenario"] = self.after.scenario
        return out

    def counts(self, kind: str) -> dict[str, int]:
        """How many rows of ``kind`` ('route' or 'airfield') changed in each way."""
        frame = self.routes if kind == "route" else self.airfields
        if frame is None or frame.empty:
            return {}
        return {str(k): int(v) for k, v in frame["change"].value_counts().items()}

    def text(self, top: int = 15) -> str:
        """A summary for the terminal: what was compared, counts, the largest moves."""
        from fieldlimits.pipeline import export

        lines = [f"compare {self.before.label()} with {self.after.label()}",
                 f"  before: finished {_stamp(self.before.finished_at)} UTC, inputs {self.before.input_dir}",
                 f"  after:  finished {_stamp(self.after.finished_at)} UTC, inputs {self.after.input_dir}",
                 f"  rows listed: moved by {self.min_change_kg:g} kg or more, became possible or "
                 f"impossible, or in one run only"]
        for kind, compared, frame, what in (
                ("route", self.compared_route_rows, self.routes, "route-months (payload)"),
                ("airfield", self.compared_airfield_rows, self.airfields,
                 "airfield-months (takeoff-weight limit, best runway direction)")):
            counts = self.counts(kind)
            n = sum(counts.values())
            detail = ", ".join(f"{v} {k}" for k, v in sorted(counts.items(), key=lambda kv: -kv[1]))
            lines.append("")
            lines.append(f"{what}: {n} of {compared} changed" + (f" ({detail})" if detail else ""))
            if n:
                shown = _largest(frame, top)
                lines.append(export.text_table(shown))
                if n > len(shown):
                    lines.append(f"({n - len(shown)} more; -o FILE or --format csv for all)")
        return "\n".join(lines)


def _stamp(value) -> str:
    return "-" if value is None or pd.isna(value) else str(value)[:19]


def _largest(frame: pd.DataFrame, top: int) -> pd.DataFrame:
    """The ``top`` rows with the largest moves; a change of possibility ranks first."""
    from fieldlimits.pipeline.routes import level_label

    f = frame.copy()
    f["level"] = [level_label(b, r) for b, r in zip(f["basis"], f["reliability"])]
    size = f["change_kg"].abs().fillna(float("inf"))
    f = f.assign(_size=size).sort_values("_size", ascending=False, kind="mergesort").head(top)
    keep = [c for c in ("route_id", "airfield_id", "aircraft_type_id", "month", "condition", "level",
                        "before_kg", "after_kg", "change_kg", "change_pct", "change",
                        "limiting_factor_before", "limiting_factor_after")
            if c in f.columns]
    return f[keep].rename(columns={"limiting_factor_before": "factor_before",
                                   "limiting_factor_after": "factor_after"})


def _info(con, run_id: int, db_path) -> RunInfo:
    row = con.execute(store.sql("run_info"), {"run_id": int(run_id)}).df()
    if row.empty:
        from fieldlimits.pipeline.export import check_run_exists

        check_run_exists(con, run_id, db_path)  # raises with the stored run numbers
    r = row.iloc[0]
    if r["status"] != "complete":
        raise BadInput(f"run {run_id} is {r['status']}, not complete: it has no stored results to "
                       f"compare (see `fieldlimits runs`)")
    return RunInfo(int(r["run_id"]), str(r["scenario"]), r["finished_at"], r["input_dir"],
                   r["conditions"], r["reliability_levels"], _count(r["rows_airfield"]),
                   _count(r["rows_route_payload"]))


def _count(value) -> int:
    return 0 if value is None or pd.isna(value) else int(value)


def pick_runs(con, before: int | None, after: int | None, db_path=None) -> tuple[int, int]:
    """The run numbers to compare; the defaults are in the module docstring."""
    runs = con.execute(store.sql("complete_runs")).df()
    if runs.empty:
        raise BadInput(f"{db_path or 'the database'} has no complete run to compare; run "
                       f"`fieldlimits run` first")
    if after is None:
        after = int(runs["run_id"].iloc[0])
    if before is None:
        position = runs.index[runs["run_id"] == after]
        earlier = runs.iloc[int(position[0]) + 1:] if len(position) else runs.iloc[0:0]
        baseline = earlier[earlier["scenario"] == "baseline"]
        if baseline.empty:
            scenario = runs.loc[runs["run_id"] == after, "scenario"]
            what = scenario.iloc[0] if len(scenario) else "unknown"
            raise BadInput(
                f"no complete baseline run before run {after} ({what}) to compare it with; give "
                f"two run numbers: fieldlimits compare BEFORE AFTER (see `fieldlimits runs`)")
        before = int(baseline["run_id"].iloc[0])
    if before == after:
        raise BadInput(f"compare needs two different runs; got run {before} twice")
    return int(before), int(after)


def compare_runs(db_path, before: int | None = None, after: int | None = None,
                 min_change_kg: float = DEFAULT_MIN_CHANGE_KG) -> Comparison:
    """Read two complete runs (read-only) and the rows that moved between them."""
    if not min_change_kg >= 0:
        raise BadInput(f"--min-change-kg must be 0 or more; got {min_change_kg}")
    with store.reader(db_path) as con:
        names = {r[0] for r in con.execute(
            "SELECT table_name FROM information_schema.tables").fetchall()}
        if "runs" not in names or "run_scenarios" not in names:
            raise BadInput(f"{db_path} holds no fieldlimits runs of this version; run "
                           f"`fieldlimits run` first")
        for given in (before, after):
            if given is not None:
                _info(con, given, db_path)
        before, after = pick_runs(con, before, after, db_path)
        b, a = _info(con, before, db_path), _info(con, after, db_path)
        params = {"before": before, "after": after, "min_change_kg": float(min_change_kg)}
        airfields = con.execute(store.sql("compare_airfield"), params).df()
        routes = (con.execute(store.sql("compare_route"), params).df()
                  if "route_payload" in names else pd.DataFrame())
    # rows compared: those of the later run and those only the earlier run has
    n_airfield = a.rows_airfield + int((airfields["change"] == "removed").sum())
    n_route = a.rows_route_payload + (int((routes["change"] == "removed").sum()) if len(routes) else 0)
    return Comparison(b, a, airfields, routes, float(min_change_kg), n_airfield, n_route)
