"""fieldlimits compare: what moved between two runs, by how much and why (issue 18)."""

from __future__ import annotations

import io

import numpy as np
import pandas as pd
import pytest

from fieldlimits.pipeline import compare, store
from fieldlimits.pipeline.errors import BadInput
from fieldlimits.schemas.caution import CAUTION
from tests.pipeline.conftest import cli
from tests.pipeline.test_report import _data, _store, _warmer


@pytest.fixture
def two_runs(tmp_path):
    """Run 2: the baseline; run 3: every takeoff limit 1 500 kg lower, temperature +2 K."""
    base = _data()
    warm = _warmer(base)
    return _store(tmp_path, [(2, 0.0, base), (3, 2.0, warm)]), base, warm


def test_default_compares_the_scenario_with_the_baseline(two_runs):
    db, base, warm = two_runs
    c = compare.compare_runs(db)
    assert (c.before.run_id, c.before.scenario) == (2, "baseline")
    assert (c.after.run_id, c.after.scenario) == (3, "temperature +2 K")
    af = c.airfields
    moved = af[af["change"] == "lower"]
    # by construction every possible limit is 1 500 kg lower; no-takeoff months stay so
    assert len(moved) == base.airfield_results["tow_limit_kg"].notna().sum()
    np.testing.assert_allclose(moved["change_kg"], -1500.0)
    np.testing.assert_allclose(moved["after_kg"] - moved["before_kg"], -1500.0)
    np.testing.assert_allclose(moved["change_pct"], -1500.0 / moved["before_kg"] * 100.0)


def test_route_changes_agree_with_a_plain_merge_and_give_the_why(two_runs):
    db, base, warm = two_runs
    c = compare.compare_runs(db, min_change_kg=10.0)
    keys = ["route_id", "aircraft_type_id", "month", "condition", "basis", "reliability"]
    b = base.route_payload.assign(reliability=base.route_payload["reliability"].fillna(-1))
    a = warm.route_payload.assign(reliability=warm.route_payload["reliability"].fillna(-1))
    m = b.merge(a, on=keys, suffixes=("_b", "_a"))
    moved = m[((m["payload_kg_a"] - m["payload_kg_b"]).abs() >= 10.0)
              | (m["possible_b"] != m["possible_a"])]
    got = c.routes.assign(reliability=c.routes["reliability"].fillna(-1)).merge(
        moved, on=keys, how="outer", indicator=True)
    assert (got["_merge"] == "both").all() and len(got) == len(moved) > 0
    np.testing.assert_allclose(got["before_kg"].fillna(-1), got["payload_kg_b"].fillna(-1))
    np.testing.assert_allclose(got["after_kg"].fillna(-1), got["payload_kg_a"].fillna(-1))
    assert (got["limiting_factor_before"] == got["payload_limiting_factor_b"]).all()
    assert (got["limiting_factor_after"] == got["payload_limiting_factor_a"]).all()
    # a route limited by its structure before and by the origin's takeoff limit after
    assert ((c.routes["limiting_factor_before"] == "max_payload")
            & (c.routes["limiting_factor_after"] == "takeoff_limit")).any()


def test_small_moves_are_left_out(two_runs):
    db, _, _ = two_runs
    c = compare.compare_runs(db, min_change_kg=2000.0)
    assert not (c.airfields["change"] == "lower").any()  # 1 500 kg is below the threshold


def test_one_number_and_the_errors(two_runs, tmp_path):
    db, _, _ = two_runs
    assert compare.compare_runs(db, None, 3).before.run_id == 2
    with pytest.raises(BadInput, match=r"run 9 does not exist.*stored runs: 2-3"):
        compare.compare_runs(db, 2, 9)
    with pytest.raises(BadInput, match="no complete baseline run before run 2"):
        compare.compare_runs(db, None, 2)
    with pytest.raises(BadInput, match="two different runs"):
        compare.compare_runs(db, 3, 3)
    with store.writer(db) as con:
        store.run_sql(con, "UPDATE runs SET status = 'failed' WHERE run_id = 2")
    with pytest.raises(BadInput, match="run 2 is failed"):
        compare.compare_runs(db, 2, 3)


def test_changes_frame_names_runs_scenarios_and_levels(two_runs):
    db, _, _ = two_runs
    frame = compare.compare_runs(db).changes()
    assert set(frame["kind"]) == {"route_month", "airfield_month"}
    assert set(frame["quantity"]) == {"payload", "takeoff_weight_limit"}
    assert set(frame["level"]) <= {"design_day", "p85", "p95"}
    assert (frame["before_scenario"] == "baseline").all()
    assert (frame["after_scenario"] == "temperature +2 K").all()


def test_compare_command_table_csv_and_file(two_runs, tmp_path):
    db, _, _ = two_runs
    out = cli("compare", "--db", db)
    assert out.returncode == 0, out.stderr
    assert out.stdout.startswith("compare run 2 (baseline) with run 3 (temperature +2 K)")
    assert "route-months (payload):" in out.stdout and CAUTION in out.stdout
    csv = cli("compare", "2", "3", "--db", db, "--format", "csv", "-o", tmp_path / "c.csv")
    assert csv.returncode == 0, csv.stderr
    frame = pd.read_csv(io.StringIO(csv.stdout))
    assert (frame["caution"] == CAUTION).all() and len(frame) > 0
    assert len(pd.read_csv(tmp_path / "c.csv")) == len(frame)
    bad = cli("compare", "2", "77", "--db", db)
    assert bad.returncode == 2 and "run 77 does not exist" in bad.stderr


def test_scenario_names_agree_between_python_and_the_views(tmp_path):
    """run_scenarios (SQL printf) and steps.scenario_label (Python) spell a scenario alike."""
    from fieldlimits.pipeline.steps import scenario_label

    db = tmp_path / "names.duckdb"
    offsets = (0.0, 2.0, -1.5, 0.25, 12.0)
    for offset in offsets:
        store.register_run(db, store.RunRecord(
            input_dir="/x", parameters={"temperature_offset_k": offset, "conditions": ["dry"],
                                        "reliability_levels": [0.5, 0.95], "reliability_conditions": ["dry"]},
            temperature_offset_k=offset, input_hash="h", input_hashes={}, code_version="t",
            airfields=1, cases=1, chunks=1))
    with store.reader(db) as con:
        rows = con.execute("SELECT temperature_offset_k, scenario, conditions, reliability_levels "
                           "FROM run_scenarios ORDER BY run_id").fetchall()
    assert [r[1] for r in rows] == [scenario_label(o) for o in offsets]
    assert [r[1] for r in rows][:3] == ["baseline", "temperature +2 K", "temperature -1.5 K"]
    assert rows[0][2:] == ("dry", "0.5,0.95")


def test_latest_views_stay_on_the_baseline_after_a_scenario_run(two_runs):
    """Run 3 (+2 K) is newer than run 2 (baseline); "latest" is still run 2 (issue 18)."""
    db, _, _ = two_runs
    with store.reader(db) as con:
        latest = con.execute("SELECT run_id, scenario FROM latest_run").fetchall()
        seen = con.execute("SELECT DISTINCT run_id, scenario FROM latest_results_airfield").fetchall()
        routes = con.execute("SELECT DISTINCT run_id, scenario FROM latest_route_payload").fetchall()
        each = con.execute("SELECT run_id, scenario FROM latest_scenario_runs ORDER BY run_id").fetchall()
        side = con.execute("SELECT DISTINCT scenario FROM scenario_route_payload ORDER BY 1").fetchall()
    assert latest == seen == routes == [(2, "baseline")]
    assert each == [(2, "baseline"), (3, "temperature +2 K")]
    assert side == [("baseline",), ("temperature +2 K",)]
