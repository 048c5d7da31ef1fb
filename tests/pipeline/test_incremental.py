"""Incremental reruns (issue 8): unchanged airfield × type results are copied, not recomputed."""

from __future__ import annotations

import shutil

import pandas as pd
import pytest

from fieldlimits.pipeline import store
from fieldlimits.pipeline.steps import RunParams, run_local
from tests.pipeline.conftest import needs_physics

pytestmark = needs_physics

PARAMS = RunParams(reliability_levels=())
QUERY = ("SELECT * EXCLUDE (run_id) FROM {view} ORDER BY airfield_id, runway_id, aircraft_type_id, "
         "month, condition, basis, reliability")


@pytest.fixture
def first_run(tmp_path, demo_dir):
    """A fresh first run (not the session's: in a shared tree the code version may move)."""
    db = tmp_path / "first.duckdb"
    run_local(demo_dir, db, PARAMS, progress=lambda *a: None)
    return db


def _rows(db, view="latest_results_direction"):
    with store.reader(db) as con:
        return con.sql(QUERY.format(view=view)).df()


def test_unchanged_rerun_reuses_everything(first_run, demo_dir):
    before = _rows(first_run)
    summary = run_local(demo_dir, first_run, PARAMS, progress=lambda *a: None)
    assert summary.chunks == 0 and summary.reused_cases == summary.cases == len(before)
    with store.reader(first_run) as con:
        reused, source = con.execute("SELECT reused_cases, reused_from_run_id FROM latest_run").fetchall()[0]
    assert reused == len(before) and source == 1
    pd.testing.assert_frame_equal(_rows(first_run), before)


def test_changing_one_airfield_recomputes_only_its_cases(tmp_path, first_run, demo_dir):
    changed = tmp_path / "changed"
    shutil.copytree(demo_dir, changed)
    climate = pd.read_csv(changed / "climate_monthly.csv", dtype={"airfield_id": str})
    target = sorted(climate["airfield_id"].unique())[3]
    climate.loc[climate["airfield_id"] == target, "mean_daily_max_c"] += 4.0
    climate.to_csv(changed / "climate_monthly.csv", index=False)

    summary = run_local(changed, first_run, PARAMS, progress=lambda *a: None)
    with store.reader(first_run) as con:
        n_target = con.execute("SELECT count(*) FROM results_direction WHERE run_id = 1 AND airfield_id = $a",
                               {"a": target}).fetchall()[0][0]
    assert n_target > 0
    assert summary.cases - summary.reused_cases == n_target  # only that airfield was computed

    fresh = tmp_path / "fresh.duckdb"
    run_local(changed, fresh, PARAMS, progress=lambda *a: None)
    pd.testing.assert_frame_equal(_rows(first_run), _rows(fresh))
    pd.testing.assert_frame_equal(_rows(first_run, "latest_results_airfield"),
                                  _rows(fresh, "latest_results_airfield"))


def test_no_reuse_recomputes(first_run, demo_dir):
    summary = run_local(demo_dir, first_run, RunParams(reliability_levels=(), reuse=False),
                        progress=lambda *a: None)
    assert summary.reused_cases == 0 and summary.chunks > 0


def test_other_parameters_are_not_reused(first_run, demo_dir):
    summary = run_local(demo_dir, first_run, RunParams(reliability_levels=(), conditions=("dry",)),
                        progress=lambda *a: None)
    assert summary.reused_cases == 0


# --------------------------------------------------------------------------- by reference
RESULT_TABLES = ("results_direction", "results_airfield", "route_payload", "landing_direction",
                 "landing_airfield")


def _run_rows(db, table, run_id):
    """One run's full rows of a result view, without run_id, in a fixed order."""
    with store.reader(db) as con:
        frame = con.execute(f"SELECT * EXCLUDE (run_id) FROM {table} WHERE run_id = $r",
                            {"r": run_id}).df()
    return frame.sort_values(list(frame.columns)).reset_index(drop=True)


def _one(db, query, params=None):
    with store.reader(db) as con:
        return con.execute(query, params or {}).fetchall()


def test_unchanged_reruns_store_no_rows_and_read_in_full(first_run, demo_dir):
    run_local(demo_dir, first_run, PARAMS, progress=lambda *a: None)
    run_local(demo_dir, first_run, PARAMS, progress=lambda *a: None)
    for table in RESULT_TABLES:
        first = _run_rows(first_run, table, 1)
        assert len(first) > 0, table
        for rerun in (2, 3):  # row for row, every column, through the views
            pd.testing.assert_frame_equal(_run_rows(first_run, table, rerun), first, obj=f"{table} run {rerun}")
        # each row is stored once, under the run that computed it
        assert _one(first_run, f"SELECT DISTINCT run_id FROM {table}_stored") == [(1,)], table
    # run 3 reused run 2, whose rows are run 1's: it points at run 1 directly
    assert _one(first_run, "SELECT DISTINCT source_run_id FROM run_sources WHERE run_id = 3") == [(1,)]
    assert _one(first_run, "SELECT run_id, route_results_from_run_id, reused_from_run_id FROM runs "
                           "ORDER BY run_id") == [(1, None, None), (2, 1, 1), (3, 1, 2)]
    counts = _one(first_run, "SELECT DISTINCT rows_direction, rows_airfield, rows_route_payload FROM runs")
    assert len(counts) == 1 and min(counts[0]) > 0  # every run reports its full row counts
    latest = _run_rows(first_run, "latest_results_direction", 3).drop(columns="scenario")
    pd.testing.assert_frame_equal(latest, _run_rows(first_run, "results_direction", 1))


def test_changed_type_is_recomputed_and_the_rest_referenced(tmp_path, first_run, demo_dir):
    changed = tmp_path / "changed"
    shutil.copytree(demo_dir, changed)
    types = pd.read_csv(changed / "aircraft_types.csv", dtype={"aircraft_type_id": str})
    target = "regional-tp70"
    row = types["aircraft_type_id"] == target
    types.loc[row, "static_thrust_per_engine_kn"] *= 0.9  # weaker engines: lower limits
    types.to_csv(changed / "aircraft_types.csv", index=False)

    run_local(changed, first_run, PARAMS, progress=lambda *a: None)
    sources = _one(first_run, "SELECT aircraft_type_id = $t, source_run_id, count(*) FROM run_sources "
                              "WHERE run_id = 2 GROUP BY ALL ORDER BY ALL", {"t": target})
    n_airfields = _one(first_run, "SELECT count(DISTINCT airfield_id) FROM run_sources WHERE run_id = 1")[0][0]
    n_types = _one(first_run, "SELECT count(DISTINCT aircraft_type_id) FROM run_sources WHERE run_id = 1")[0][0]
    assert sources == [(False, 1, n_airfields * (n_types - 1)), (True, 2, n_airfields)]
    assert _one(first_run, "SELECT DISTINCT aircraft_type_id FROM results_direction_stored "
                           "WHERE run_id = 2") == [(target,)]
    assert _one(first_run, "SELECT route_results_from_run_id FROM runs WHERE run_id = 2") == [(None,)]
    changed_limits = _one(first_run, "SELECT count(*) FROM results_direction AS a JOIN results_direction AS b "
                                     "USING (airfield_id, runway_id, aircraft_type_id, month, condition, basis) "
                                     "WHERE a.run_id = 1 AND b.run_id = 2 AND a.aircraft_type_id = $t "
                                     "AND a.tow_limit_kg > b.tow_limit_kg", {"t": target})[0][0]
    assert changed_limits > 0  # the change reached the results

    fresh = tmp_path / "fresh.duckdb"  # the same input computed from scratch
    run_local(changed, fresh, PARAMS, progress=lambda *a: None)
    for table in RESULT_TABLES:
        pd.testing.assert_frame_equal(_run_rows(first_run, table, 2), _run_rows(fresh, table, 1), obj=table)


def test_reliability_rows_of_a_rerun(tmp_path, demo_dir):
    db = tmp_path / "levels.duckdb"
    params = RunParams(reliability_levels=(0.85,), reliability_conditions=("dry",))
    run_local(demo_dir, db, params, progress=lambda *a: None)
    run_local(demo_dir, db, params, progress=lambda *a: None)
    assert _one(db, "SELECT reused_cases = cases FROM runs WHERE run_id = 2") == [(True,)]
    for table in ("results_airfield", "route_payload", "landing_airfield"):
        first = _run_rows(db, table, 1)
        assert (first["basis"] == "reliability").sum() > 0, table
        pd.testing.assert_frame_equal(_run_rows(db, table, 2), first, obj=table)


def test_readers_see_a_rerun_in_full(tmp_path, first_run, demo_dir):
    from fieldlimits.pipeline import export, report

    run_local(demo_dir, first_run, PARAMS, progress=lambda *a: None)
    for what in ("results_airfield", "route_payload"):
        paths = [tmp_path / f"{what}-{r}.csv" for r in (1, 2)]
        rows = [export.export_csv(first_run, what, p, run_id=r) for p, r in zip(paths, (1, 2))]
        assert rows[0] == rows[1] > 0
        frames = [export.read_export(p).drop(columns="run_id") for p in paths]
        pd.testing.assert_frame_equal(frames[1], frames[0], obj=what)
    data = [report.load_report_data(first_run, run_id=r, compare_with=None) for r in (1, 2)]
    for name in ("airfield_results", "route_payload"):
        a, b = (getattr(d, name).drop(columns="run_id", errors="ignore") for d in data)
        assert len(a) > 0
        pd.testing.assert_frame_equal(b, a, obj=name)
    listed = store.list_runs(first_run).set_index("run_id")
    assert listed.loc[2, "rows_direction"] == listed.loc[1, "rows_direction"] > 0
    assert listed.loc[2, "rows_route_payload"] == listed.loc[1, "rows_route_payload"] > 0


def test_a_rerun_whose_reused_rows_are_gone_fails_and_writes_nothing(first_run, demo_dir):
    from fieldlimits.pipeline import steps
    from fieldlimits.pipeline.errors import FieldlimitsError

    prepared = steps.prepare_run(demo_dir, first_run, PARAMS)
    assert prepared.reuse is not None
    run_id = steps.register(prepared)
    work = steps.build_cases(prepared, run_id)
    reused = steps.reference_reused(prepared, run_id, work)
    with store.writer(first_run) as con:  # the rows it points at disappear meanwhile
        store.run_sql(con, "DELETE FROM results_direction_stored WHERE run_id = 1 AND month = 1")
    best = steps.best_directions(work, [])
    try:
        with pytest.raises(FieldlimitsError, match="run it again"):
            steps.load(prepared, run_id, [], best, None, reused)
    finally:
        steps.cleanup(prepared, run_id)
    assert _one(first_run, "SELECT status FROM runs WHERE run_id = $r", {"r": run_id}) == [("failed",)]
    assert _one(first_run, "SELECT count(*) FROM run_sources WHERE run_id = $r", {"r": run_id}) == [(0,)]
