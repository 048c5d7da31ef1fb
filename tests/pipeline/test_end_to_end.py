"""End to end on the demo network with the plain functions (no Prefect)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from fieldlimits.pipeline import store
from tests.pipeline.conftest import needs_physics

pytestmark = needs_physics


@pytest.fixture(scope="module")
def frames(demo_run, demo_dir):
    from fieldlimits.schemas.load import load_folder

    db, summary = demo_run
    with store.reader(db) as con:
        direction = con.sql("SELECT * FROM latest_results_direction").df()
        airfield = con.sql("SELECT * FROM latest_results_airfield").df()
        run = con.sql("SELECT * FROM latest_run").df()
    return load_folder(demo_dir), direction, airfield, run, summary


def test_row_counts_are_directions_by_months_by_types_by_conditions(frames):
    tables, direction, airfield, run, summary = frames
    n_dirs, n_types = len(tables.runways), len(tables.aircraft_types)
    n_airfields = tables.runways["airfield_id"].nunique()
    design = direction[direction["basis"] == "design_day"]
    assert len(design) == n_dirs * 12 * n_types * 2
    assert len(airfield[airfield["basis"] == "design_day"]) == n_airfields * 12 * n_types * 2
    assert int(run["cases"].iloc[0]) == n_dirs * 12 * n_types * 2
    assert int(run["rows_direction"].iloc[0]) == len(direction)
    assert summary.cases == len(design)
    keys = ["airfield_id", "runway_id", "aircraft_type_id", "month", "condition", "basis", "reliability"]
    assert not direction.duplicated(keys).any()


def test_every_result_has_a_mass_or_no_takeoff(frames):
    _, direction, *_ = frames
    from fieldlimits.physics.limits import FACTORS

    has_mass = direction["tow_limit_kg"].notna()
    no_takeoff = direction["limiting_factor"] == "no_takeoff"
    assert (has_mass ^ no_takeoff).all()
    assert direction["limiting_factor"].isin(FACTORS).all()


def test_limits_never_exceed_mtow(frames):
    tables, direction, *_ = frames
    mtow = tables.aircraft_types.set_index("aircraft_type_id")["mtow_kg"]
    assert (direction["tow_limit_kg"].dropna() <= direction.dropna(subset=["tow_limit_kg"])
            ["aircraft_type_id"].map(mtow) + 1e-6).all()


def test_wet_runway_is_never_better_than_dry(frames):
    # 14 CFR 25.109(b) and 25.113(b): the wet-runway figures may not be better than the dry
    # ones for the same runway and day (no_takeoff counts as 0 kg; the solver tolerance is 1 kg).
    _, direction, *_ = frames
    d = direction[direction["basis"] == "design_day"].copy()
    d["tow"] = d["tow_limit_kg"].fillna(0.0)
    keys = ["airfield_id", "runway_id", "aircraft_type_id", "month"]
    pair = d[d.condition == "dry"].merge(d[d.condition == "wet"], on=keys, suffixes=("_dry", "_wet"))
    assert len(pair) == len(d) // 2
    assert (pair["tow_wet"] <= pair["tow_dry"] + 1.0).all()
    assert (pair["tow_wet"] < pair["tow_dry"] - 1.0).any()  # wet does cost mass somewhere


def test_hotter_and_higher_month_gives_no_higher_limit(frames):
    # physics: at the same runway, type and condition, a month that is both hotter and at a
    # higher pressure altitude has less thrust and less lift, so the limit cannot rise
    # (the solver's own tolerance is 1 kg).
    _, direction, *_ = frames
    d = direction[direction["basis"] == "design_day"].copy()
    d["tow"] = d["tow_limit_kg"].fillna(0.0)
    pairs = d.merge(d, on=["airfield_id", "runway_id", "aircraft_type_id", "condition"], suffixes=("", "_b"))
    worse = pairs[(pairs["oat_c_b"] > pairs["oat_c"]) & (pairs["pressure_altitude_m_b"] >= pairs["pressure_altitude_m"])]
    assert len(worse) > 1000  # the check compares many month pairs
    assert (worse["tow_b"] <= worse["tow"] + 2.0).all()


def test_wet_cases_use_wet_friction_and_the_15_ft_screen(demo_dir):
    from fieldlimits.pipeline import cases
    from fieldlimits.pipeline.inputs import load_inputs

    tables = load_inputs(demo_dir).tables
    first = sorted(tables["runways"]["airfield_id"].unique())[:2]
    c = cases.block_cases(tables, first, 0.0)
    dry, wet = c[c.condition == "dry"].reset_index(drop=True), c[c.condition == "wet"].reset_index(drop=True)
    # 14 CFR 25.113: 35 ft screen dry, 15 ft wet (0.3048 m per ft)
    assert (dry.screen_height_m == 35 * 0.3048).all() and (wet.screen_height_m == 15 * 0.3048).all()
    # Raymer Table 17.1: braking friction lower on wet paved surfaces, rolling friction higher
    assert (wet.mu_brake < dry.mu_brake).all()
    assert (wet.mu_roll >= dry.mu_roll).all()
    for col in ("tora_m", "pressure_pa", "temperature_k", "headwind_mps"):
        assert (wet[col] == dry[col]).all()


def test_best_direction_is_the_highest_limit(frames):
    _, direction, airfield, *_ = frames
    d = direction[direction["basis"] == "design_day"].copy()
    d["tow"] = d["tow_limit_kg"].fillna(-1.0)
    best = d.groupby(["airfield_id", "aircraft_type_id", "month", "condition"])["tow"].max()
    a = airfield[airfield["basis"] == "design_day"].set_index(
        ["airfield_id", "aircraft_type_id", "month", "condition"])["tow_limit_kg"].fillna(-1.0)
    pd.testing.assert_series_equal(a.sort_index(), best.sort_index(), check_names=False)


def test_design_day_atmosphere_is_stored(frames):
    tables, direction, *_ = frames
    # design day: mean daily maximum, calm wind
    d = direction[(direction.basis == "design_day") & (direction.condition == "dry")]
    clim = tables.user["climate_monthly"].set_index(["airfield_id", "month"])["mean_daily_max_c"]
    expected = pd.MultiIndex.from_frame(d[["airfield_id", "month"]].astype({"month": int})).map(clim)
    np.testing.assert_allclose(d["oat_c"].to_numpy(), np.asarray(expected, float), atol=1e-9)
    assert (d["headwind_mps"] == 0).all()


def test_temperature_offset_scenario_is_stored_and_lowers_limits(demo_db_copy, demo_dir):
    from fieldlimits.pipeline.steps import RunParams, run_local

    summary = run_local(demo_dir, demo_db_copy, RunParams(temperature_offset_k=2.0, reliability_levels=()), progress=lambda *a: None)
    with store.reader(demo_db_copy) as con:
        off = con.execute("SELECT temperature_offset_k FROM runs WHERE run_id = $r",
                          {"r": summary.run_id}).fetchall()[0][0]
        cmp = con.sql("""
            SELECT a.tow_limit_kg AS base, b.tow_limit_kg AS warm, a.oat_c AS t0, b.oat_c AS t1
            FROM scenario_results_airfield a JOIN scenario_results_airfield b
              USING (airfield_id, aircraft_type_id, month, condition, basis)
            WHERE a.temperature_offset_k = 0 AND b.temperature_offset_k = 2""").df()
    assert off == 2.0
    assert len(cmp) > 0
    np.testing.assert_allclose(cmp["t1"] - cmp["t0"], 2.0, atol=1e-9)
    assert (cmp["warm"].fillna(0) <= cmp["base"].fillna(0) + 2.0).all()


def test_chunk_rerun_is_idempotent(tmp_path, demo_dir):
    from fieldlimits.pipeline import chunks, steps

    prepared = steps.prepare_run(demo_dir, tmp_path / "x.duckdb", steps.RunParams(chunk_size=3000, reliability_levels=()))
    prepared.work_root = tmp_path / "work"
    work = steps.build_cases(prepared, 1)
    key = prepared.chunk_params()
    first = chunks.compute_chunk(work, 0, 1, key)
    before = pd.read_parquet(first.direction_path)
    again = chunks.compute_chunk(work, 0, 1, key)
    assert again.reused and again.direction_path == first.direction_path
    pd.testing.assert_frame_equal(pd.read_parquet(again.direction_path), before)
    # a changed parameter set is not mistaken for the same chunk
    changed = chunks.compute_chunk(work, 0, 1, {**key, "temperature_offset_k": 1.0})
    assert not changed.reused
    assert not list((work / chunks.PARTS_DIR).glob(".*.tmp"))  # no temporary files left


def test_chunks_hold_whole_airfields(tmp_path, demo_dir):
    from fieldlimits.pipeline import cases, steps

    prepared = steps.prepare_run(demo_dir, tmp_path / "x.duckdb", steps.RunParams(chunk_size=1000))
    prepared.work_root = tmp_path / "work"
    work = steps.build_cases(prepared, 1)
    seen = set()
    for i in range(prepared.plan.n_chunks):
        ids = set(cases.read_chunk_cases(work, i)["airfield_id"])
        assert not ids & seen
        seen |= ids
    assert prepared.plan.n_chunks > 2


def test_row_producers_add_direction_and_airfield_rows(tmp_path, demo_dir, monkeypatch):
    """The producer hook: extra direction rows, and airfield rows that replace the best pick."""
    from fieldlimits.pipeline import producers
    from fieldlimits.pipeline.steps import RunParams, run_local

    def fake_reliability(context):
        d = context.design_rows.copy()
        d["basis"], d["reliability"] = "reliability", 0.5
        d["tow_limit_kg"] = d["tow_limit_kg"] - 1.0
        a = d.drop_duplicates(["airfield_id", "aircraft_type_id", "month", "condition"]).copy()
        a["runway_id"] = None
        return producers.ProducerRows(direction=d, airfield=a)

    monkeypatch.setattr(producers, "OPTIONAL_PRODUCERS", ())
    monkeypatch.setattr(producers, "ROW_PRODUCERS", [fake_reliability])
    db = tmp_path / "p.duckdb"
    run_local(demo_dir, db, RunParams(reliability_levels=()), progress=lambda *a: None)
    with store.reader(db) as con:
        counts = dict(con.sql("SELECT basis, count(*) FROM latest_results_direction GROUP BY 1").fetchall())
        af = dict(con.sql("SELECT basis, count(*) FROM latest_results_airfield GROUP BY 1").fetchall())
        nulls = con.sql("SELECT count(*) FROM latest_results_airfield WHERE basis = 'reliability' "
                        "AND runway_id IS NOT NULL").fetchall()[0][0]
    assert counts["reliability"] == counts["design_day"]
    assert af["reliability"] == af["design_day"]  # supplied at airfield level, not re-derived
    assert nulls == 0


def test_demo_has_some_obstacle_limited_months_and_types(frames):
    """The demo's invented obstacles (demo_network/build_demo.py) limit some months and types,
    not all: the design day has obstacle_clearance rows, each naming an obstacle of its runway."""
    tables, direction, airfield, *_ = frames
    design = direction[direction["basis"] == "design_day"]
    lim = design[design["limiting_factor"] == "obstacle_clearance"]
    assert len(lim) > 0
    ob = tables.obstacles
    named = set(zip(ob["airfield_id"], ob["runway_id"], ob["obstacle_id"]))
    assert set(zip(lim["airfield_id"], lim["runway_id"], lim["governing_obstacle_id"])) <= named
    on_obstacle_runways = design.set_index(["airfield_id", "runway_id"]).index.isin(
        list(zip(ob["airfield_id"], ob["runway_id"])))
    assert len(lim) < on_obstacle_runways.sum()  # some months and types only
    assert lim["aircraft_type_id"].nunique() >= 3 and lim["month"].nunique() >= 6
    # without obstacles the new columns stay empty
    free = design[~on_obstacle_runways]
    assert free["governing_obstacle_id"].isna().all() and free["obstacle_clearance_m"].isna().all()
    assert (airfield["limiting_factor"] == "obstacle_clearance").any()



def test_best_directions_of_many_chunks_are_the_whole_runs(demo_dir, tmp_path):
    """Each chunk writes the best runway directions of its own airfields (its airfields are
    whole): a run cut into ten chunks stores, for every airfield × type × month × condition of
    the design day, the full row of the direction with the highest limit (ties to the first
    runway id, no takeoff last), computed here from all its direction rows at once."""
    from fieldlimits.pipeline.steps import RunParams, run_local

    db = tmp_path / "ten.duckdb"
    summary = run_local(demo_dir, db, RunParams(chunk_size=1500, reliability_levels=()), progress=lambda *a: None)
    with store.reader(db) as con:
        chunks_done = con.sql("SELECT chunks FROM latest_run").fetchall()[0][0]
        direction = con.sql("SELECT * FROM latest_results_direction WHERE basis = 'design_day'").df()
        airfield = con.sql("SELECT * FROM latest_results_airfield WHERE basis = 'design_day'").df()
    assert chunks_done == summary.chunks >= 10
    keys = ["airfield_id", "aircraft_type_id", "month", "condition"]
    ranked = direction.assign(no_takeoff=direction["tow_limit_kg"].isna()).sort_values(
        keys + ["no_takeoff", "tow_limit_kg", "runway_id"], ascending=[True] * 4 + [True, False, True],
        kind="stable")
    expected = ranked.drop_duplicates(keys).drop(columns="no_takeoff").sort_values(keys, ignore_index=True)
    got = airfield.sort_values(keys, ignore_index=True)[expected.columns]
    assert len(got) == len(expected) > 0
    pd.testing.assert_frame_equal(got, expected, check_exact=True)
