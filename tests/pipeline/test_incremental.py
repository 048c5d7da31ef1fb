"""Incremental reruns (issue 8): unchanged airfield × type results are copied, not recomputed."""

from __future__ import annotations

import shutil

import pandas as pd
import pytest

from pipeline import store
from pipeline.steps import RunParams, run_local
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
