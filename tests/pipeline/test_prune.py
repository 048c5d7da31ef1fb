"""Pruning old runs (``fieldlimits prune``): the remaining runs read in full afterwards."""

from __future__ import annotations

import shutil
from datetime import datetime

import pandas as pd
import pytest

from fieldlimits.pipeline import prune, store
from fieldlimits.pipeline.errors import BadInput
from fieldlimits.pipeline.steps import RunParams, run_local
from tests.pipeline.conftest import needs_physics

PARAMS = RunParams(reliability_levels=())
TABLES = ("results_direction", "results_airfield", "route_payload", "landing_direction",
          "landing_airfield")


def _snapshot(db) -> dict:
    """Every run's full rows of every result view (run_id kept), per table, in a fixed order."""
    out = {}
    with store.reader(db) as con:
        for table in TABLES:
            frame = con.execute(f"SELECT * FROM {table}").df()
            out[table] = frame.sort_values(list(frame.columns)).reset_index(drop=True)
    return out


def _runs(db) -> list[int]:
    with store.reader(db) as con:
        return [r[0] for r in con.execute("SELECT run_id FROM runs ORDER BY run_id").fetchall()]


def _q(db, query, params=None):
    with store.reader(db) as con:
        return con.execute(query, params or {}).fetchall()


@pytest.fixture
def history(tmp_path, demo_dir):
    """Runs 1 (computed), 2 (unchanged: references 1), 3 (one airfield changed: computes it,
    references 1 for the rest), 4 (unchanged since 3: references 1 and 3)."""
    db = tmp_path / "history.duckdb"
    changed = tmp_path / "changed"
    shutil.copytree(demo_dir, changed)
    climate = pd.read_csv(changed / "climate_monthly.csv", dtype={"airfield_id": str})
    target = sorted(climate["airfield_id"].unique())[2]
    climate.loc[climate["airfield_id"] == target, "mean_daily_max_c"] += 3.0
    climate.to_csv(changed / "climate_monthly.csv", index=False)
    for folder in (demo_dir, demo_dir, changed, changed):
        run_local(folder, db, PARAMS, progress=lambda *a: None)
    return db, target


needs = needs_physics


@needs
def test_prune_keeps_what_remaining_runs_reuse(history):
    db, target = history
    before = _snapshot(db)
    stored_1 = _q(db, "SELECT count(*) FROM results_direction_stored WHERE run_id = 1")[0][0]
    result = prune.prune(db, keep=1)
    assert result.plan.remove == [1, 2, 3] and _runs(db) == [4]
    after = _snapshot(db)
    for table in TABLES:  # run 4 still reads every row it read before, row for row
        keep = before[table][before[table]["run_id"] == 4].reset_index(drop=True)
        assert len(keep) > 0
        pd.testing.assert_frame_equal(after[table], keep, obj=table)
    # run 1's rows stay for the airfields run 4 reuses; those of the changed airfield go
    left = _q(db, "SELECT count(*), count(*) FILTER (WHERE airfield_id = $a) FROM results_direction_stored "
                  "WHERE run_id = 1", {"a": target})[0]
    assert 0 < left[0] < stored_1 and left[1] == 0
    assert result.deleted["results_direction"] == stored_1 - left[0]
    # nothing points at a run that is gone but whose rows are not stored
    assert _q(db, "SELECT count(*) FROM run_sources AS m WHERE NOT EXISTS (SELECT 1 FROM "
                  "results_direction_stored AS s WHERE s.run_id = m.source_run_id AND "
                  "s.airfield_id = m.airfield_id AND s.aircraft_type_id = m.aircraft_type_id)") == [(0,)]


@needs
def test_a_rerun_after_a_prune_reuses_the_remaining_rows(history, demo_dir, tmp_path):
    db, _ = history
    prune.prune(db, keep=1)
    changed = tmp_path / "changed"
    summary = run_local(changed, db, PARAMS, progress=lambda *a: None)
    assert summary.reused_from_run_id == 4 and summary.reused_cases == summary.cases
    fresh = tmp_path / "fresh.duckdb"
    run_local(changed, fresh, PARAMS, progress=lambda *a: None)
    for table in TABLES:
        a, b = _snapshot(db)[table], _snapshot(fresh)[table]
        a = a[a["run_id"] == summary.run_id].drop(columns="run_id")
        b = b.drop(columns="run_id")
        pd.testing.assert_frame_equal(a.sort_values(list(a.columns)).reset_index(drop=True),
                                      b.sort_values(list(b.columns)).reset_index(drop=True), obj=table)


@needs
def test_prune_is_one_transaction(history, monkeypatch):
    db, _ = history
    before, runs = _snapshot(db), _runs(db)
    real = store.sql

    def failing(name):  # the last delete fails after every other one has run
        return "SELECT error('disk gone')" if name == "prune_landing_airfield" else real(name)

    monkeypatch.setattr(store, "sql", failing)
    with pytest.raises(Exception, match="disk gone"):
        prune.prune(db, keep=1)
    monkeypatch.undo()
    assert _runs(db) == runs
    after = _snapshot(db)
    for table in TABLES:
        pd.testing.assert_frame_equal(after[table], before[table], obj=table)


@needs
def test_prune_keeps_running_reused_scenario_and_newest_runs(tmp_path, demo_dir):
    db = tmp_path / "kept.duckdb"
    run_local(demo_dir, db, PARAMS, progress=lambda *a: None)                                  # 1
    run_local(demo_dir, db, RunParams(reliability_levels=(), temperature_offset_k=2.0),
              progress=lambda *a: None)                                                        # 2
    run_local(demo_dir, db, PARAMS, progress=lambda *a: None)                                  # 3
    run_local(demo_dir, db, PARAMS, progress=lambda *a: None)                                  # 4
    # a run of this (live) process still working, reusing run 3
    record = store.RunRecord(input_dir=str(demo_dir), parameters={}, temperature_offset_k=0.0,
                             input_hash="-", input_hashes={}, code_version="-", airfields=0,
                             cases=0, chunks=0, reused_from_run_id=3)
    running = store.register_run(db, record)
    before = _snapshot(db)
    result = prune.prune(db, keep=1)
    assert result.plan.remove == [1]
    assert result.plan.kept == {2: prune.KEEP_SCENARIO, 3: prune.KEEP_REUSED}
    assert prune.plan_prune(result.plan.runs, before=datetime(2100, 1, 1)).kept[running] == prune.KEEP_RUNNING
    assert _runs(db) == [2, 3, 4, running]
    after = _snapshot(db)
    for table in TABLES:
        keep = before[table][before[table]["run_id"] != 1].reset_index(drop=True)
        pd.testing.assert_frame_equal(after[table], keep, obj=table)


def _plan_runs(rows) -> pd.DataFrame:
    frame = pd.DataFrame(rows, columns=["run_id", "status", "started_at", "temperature_offset_k"])
    frame["started_at"] = pd.to_datetime(frame["started_at"])
    frame["finished_at"] = frame["started_at"]
    frame["reused_from_run_id"] = pd.NA
    return frame


PLAN_RUNS = _plan_runs([
    (1, "complete", "2025-01-01", 0.0), (2, "failed", "2025-01-02", 0.0),
    (3, "complete", "2025-01-03", 0.0), (4, "interrupted", "2025-01-04", 0.0),
    (5, "complete", "2025-01-05", 0.0), (6, "complete", "2025-01-06", 0.0),
    (7, "failed", "2025-01-07", 0.0)])


@pytest.mark.parametrize(("keep", "before", "removed"), [
    (1, None, [1, 2, 3, 4, 5]),        # below the newest complete run (6); 7 is the newest run
    (2, None, [1, 2, 3, 4]),           # below the second newest complete run (5)
    (3, None, [1, 2]),
    (4, None, []),                      # fewer complete runs than that: nothing goes
    (None, datetime(2025, 1, 3), [1, 2]),                 # started before 3 January
    (None, datetime(2025, 1, 3, 12), [1, 2, 3]),
    (2, datetime(2025, 1, 3), [1, 2]),  # both rules must select a run
    (1, datetime(2030, 1, 1), [1, 2, 3, 4, 5]),
])
def test_which_runs_go(keep, before, removed):
    plan = prune.plan_prune(PLAN_RUNS, keep, before)
    assert plan.remove == removed
    assert 6 not in plan.remove and 7 not in plan.remove


def test_prune_options_are_checked():
    with pytest.raises(BadInput, match="--keep N"):
        prune.plan_prune(PLAN_RUNS)
    with pytest.raises(BadInput, match="at least 1"):
        prune.plan_prune(PLAN_RUNS, keep=0)


@needs
def test_prune_command(history, capsys):
    from fieldlimits.pipeline import cli

    from fieldlimits.schemas.caution import CAUTION

    db, _ = history
    assert cli.main(["prune", "--help"]) == 0
    assert CAUTION in " ".join(capsys.readouterr().out.split())
    assert cli.main(["prune", "--db", str(db), "--keep", "2", "--dry-run"]) == 0
    assert "would remove 2 run(s): 1, 2" in capsys.readouterr().out
    assert _runs(db) == [1, 2, 3, 4]
    assert cli.main(["prune", "--db", str(db), "--before", "20x5-01-01"]) == 2
    assert "--before must be a date" in capsys.readouterr().err
    assert cli.main(["prune", "--db", str(db), "--keep", "2"]) == 0
    out = capsys.readouterr().out
    assert "removed 2 run(s): 1, 2" in out and "freed space is reused" in out
    assert _runs(db) == [3, 4]


@needs
def test_compact_copy_after_a_prune(history, tmp_path):
    db, _ = history
    prune.prune(db, keep=1)
    before = _snapshot(db)
    copy = tmp_path / "compact.duckdb"
    size = prune.compact_copy(db, copy)
    assert size == copy.stat().st_size < db.stat().st_size
    after = _snapshot(copy)
    for table in TABLES:
        pd.testing.assert_frame_equal(after[table], before[table], obj=table)
    with pytest.raises(BadInput, match="exists already"):
        prune.compact_copy(db, copy)
    summary = run_local(tmp_path / "changed", copy, PARAMS, progress=lambda *a: None)
    assert summary.reused_cases == summary.cases  # the copy is a working store
