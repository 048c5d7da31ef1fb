"""Obstacles in a run: per-case arrays, results columns, reliability rows, and the run without
the obstacles table giving the earlier results to the bit.

The network is four invented demo airfields; obstacles (invented) at two of them. Checks
against direct solves of ``physics.weightlimit.solve_takeoff_weight`` (the model itself, with
and without its ``obstacles`` argument).
"""

from __future__ import annotations

import dataclasses
import shutil

import numpy as np
import pandas as pd
import pytest

from fieldlimits.pipeline import cases as case_io
from fieldlimits.pipeline import store
from fieldlimits.pipeline.chunks import aircraft_arrays, site_arrays
from tests.pipeline.conftest import needs_physics

pytestmark = needs_physics

KEEP = ("windgap", "cape-tallow", "saltmere", "highcrag-south")
OBSTACLES = pd.DataFrame(
    [("windgap", "07", "ridge", 3000.0, 60.0, 0.0),
     ("windgap", "07", "mast", 1200.0, 12.0, -150.0),
     ("cape-tallow", "17", "cliff", 600.0, 35.0, 40.0),
     ("cape-tallow", "17", "shed", 300.0, 30.0, 400.0),  # outside the area: left out
     ("cape-tallow", "35", "hill", 800.0, 30.0, 0.0)],
    columns=["airfield_id", "runway_id", "obstacle_id", "distance_from_toda_end_m", "height_m",
             "lateral_offset_m"])
LEVELS = (0.85,)
KEYS = ["airfield_id", "runway_id", "aircraft_type_id", "month", "condition", "basis", "reliability"]


def _folder(dst, demo_dir, obstacles):
    dst.mkdir()
    for name in ("airfields", "runways", "climate_monthly", "wind_rose", "routes"):
        df = pd.read_csv(demo_dir / f"{name}.csv", dtype=str, keep_default_na=False)
        col = "origin_id" if name == "routes" else "airfield_id"
        keep = df[col].isin(KEEP) & (df["destination_id"].isin(KEEP) if name == "routes" else True)
        df[keep].to_csv(dst / f"{name}.csv", index=False)
    shutil.copy(demo_dir / "aircraft_types.csv", dst / "aircraft_types.csv")
    if obstacles:
        OBSTACLES.to_csv(dst / "obstacles.csv", index=False)
    return dst


@pytest.fixture(scope="module")
def runs(tmp_path_factory, demo_dir):
    from fieldlimits.pipeline.steps import RunParams, run_local

    tmp = tmp_path_factory.mktemp("obstacles")
    out = {}
    for name, with_obstacles in (("with", True), ("without", False)):
        folder = _folder(tmp / name, demo_dir, with_obstacles)
        db = tmp / f"{name}.duckdb"
        run_local(folder, db, RunParams(reliability_levels=LEVELS), progress=lambda *a: None)
        with store.reader(db) as con:
            out[name] = {t: con.sql(f"SELECT * FROM latest_{t} ORDER BY ALL").df()
                         for t in ("results_direction", "results_airfield", "route_payload")}
        out[name]["folder"] = folder
        out[name]["db"] = db
    return out


def _same_to_the_bit(a: pd.DataFrame, b: pd.DataFrame, columns) -> None:
    assert len(a) == len(b)
    for c in columns:
        x, y = a[c].to_numpy(), b[c].to_numpy()
        if x.dtype.kind == "f":
            assert np.array_equal(x, y, equal_nan=True), c
        else:
            assert (pd.isna(x) == pd.isna(y)).all() and (x[~pd.isna(x)] == y[~pd.isna(y)]).all(), c


def test_obstacle_arrays_pad_sort_and_leave_out_the_area(demo_dir):
    cases = pd.DataFrame({"airfield_id": ["windgap", "cape-tallow", "saltmere", "windgap"],
                          "runway_id": ["07", "17", "08", "25"]})
    obs, ids = case_io.obstacle_arrays(cases, OBSTACLES)
    # windgap 07: two obstacles by distance; cape-tallow 17: the shed (400 m off at 300 m,
    # half-width 90 + 0.125 × 300 = 127.5 m) is left out; the others none
    np.testing.assert_array_equal(obs.distance_m, [[1200.0, 3000.0], [600.0, np.nan],
                                                   [np.nan, np.nan], [np.nan, np.nan]])
    np.testing.assert_array_equal(obs.height_m, [[12.0, 60.0], [35.0, np.nan],
                                                 [np.nan, np.nan], [np.nan, np.nan]])
    assert ids.tolist() == [["mast", "ridge"], ["cliff", None], [None, None], [None, None]]
    names = case_io.governing_obstacle_ids(ids, [1.0, 0.0, np.nan, np.nan])
    assert names.tolist() == ["ridge", "cliff", None, None]
    assert case_io.obstacle_arrays(cases.iloc[2:], OBSTACLES) == (None, None)
    assert case_io.obstacle_arrays(cases, OBSTACLES.iloc[:0]) == (None, None)


def test_removing_the_obstacles_table_gives_the_earlier_results_to_the_bit(runs):
    """The run without the table equals a direct solve without obstacles (the earlier
    code path); where the run with the table has no obstacle, it equals that run to the bit."""
    from fieldlimits.schemas.load import load_folder
    from fieldlimits.physics.weightlimit import solve_takeoff_weight
    from fieldlimits.physics import limits

    without = runs["without"]["results_direction"]
    assert without[["obstacle_clearance_m", "acceleration_height_m"]].isna().all().all()
    assert without["governing_obstacle_id"].isna().all()
    # the design day without the table: what the solver gives without its obstacles argument
    t = load_folder(runs["without"]["folder"])
    cases = case_io.block_cases(t, sorted(KEEP), 0.0)
    direct = solve_takeoff_weight(aircraft_arrays(t.aircraft_types.reset_index(drop=True),
                                                  cases["aircraft_index"].to_numpy()), site_arrays(cases))
    cases["tow_limit_kg"] = direct.tow_limit_kg
    cases["limiting_factor"] = limits.name(direct.limiting_factor)
    design = without[without["basis"] == "design_day"].merge(
        cases[["airfield_id", "runway_id", "aircraft_type_id", "month", "condition", "tow_limit_kg",
               "limiting_factor"]], on=["airfield_id", "runway_id", "aircraft_type_id", "month", "condition"],
        suffixes=("", "_direct"))
    assert len(design) == len(cases)
    assert np.array_equal(design["tow_limit_kg"], design["tow_limit_kg_direct"], equal_nan=True)
    assert (design["limiting_factor"] == design["limiting_factor_direct"]).all()
    # rows of directions without obstacles (and every airfield row of an airfield without any):
    # the same to the bit with the table as without it
    with_ = runs["with"]
    value_columns = [c for c in without.columns if c not in ("run_id", "scenario")]
    for table in ("results_direction", "results_airfield"):
        a, b = with_[table], runs["without"][table]
        if table == "results_direction":
            free = ~a.set_index(["airfield_id", "runway_id"]).index.isin(
                list(OBSTACLES[["airfield_id", "runway_id"]].itertuples(index=False, name=None)))
        else:
            free = ~a["airfield_id"].isin(OBSTACLES["airfield_id"]).to_numpy()
        keep_b = b.set_index(KEYS).index.isin(a[free].set_index(KEYS).index)
        _same_to_the_bit(a[free].reset_index(drop=True), b[keep_b].reset_index(drop=True), value_columns)
        assert free.sum() > 0


def test_obstacles_limit_some_design_day_and_reliability_rows(runs):
    d = runs["with"]["results_direction"]
    limited = d[d["limiting_factor"] == "obstacle_clearance"]
    assert len(limited[limited["basis"] == "design_day"]) > 0
    a = runs["with"]["results_airfield"]
    assert len(a[(a["basis"] == "reliability") & (a["limiting_factor"] == "obstacle_clearance")]) > 0
    for frame in (d, a):
        lim = frame[frame["limiting_factor"] == "obstacle_clearance"]
        # only directions with obstacles in the area; the governing one named, cleared by
        # 35 ft exactly at the limit (within the 1 kg search bracket: a few centimetres)
        pairs = set(zip(lim["airfield_id"], lim["runway_id"]))
        assert pairs <= {("windgap", "07"), ("cape-tallow", "17"), ("cape-tallow", "35")}
        assert lim["governing_obstacle_id"].isin(["ridge", "mast", "cliff", "hill"]).all()
        assert (lim["obstacle_clearance_m"].abs() < 0.5).all()
        assert ((lim["acceleration_height_m"] >= 121.9) & (lim["acceleration_height_m"] <= 304.9)).all()
    # the shed lies outside the departure area: never governing
    assert not (d["governing_obstacle_id"] == "shed").any()


def test_obstacle_limits_are_never_above_those_without(runs):
    keys = KEYS
    a = runs["with"]["results_direction"].set_index(keys)["tow_limit_kg"].fillna(0.0)
    b = runs["without"]["results_direction"].set_index(keys)["tow_limit_kg"].fillna(0.0)
    design = a.index.get_level_values("basis") == "design_day"
    # within the search bracket (1 kg): a case whose obstacle binds at MTOW but whose limit
    # another requirement sets is searched with one requirement more, so it may land a
    # fraction of a kilogram elsewhere in the bracket
    assert (a[design] <= b.loc[a[design].index] + 1.0).all()
    assert (a[design] < b.loc[a[design].index] - 1.0).any()


def test_route_payloads_take_the_obstacle_limit(runs):
    r = runs["with"]["route_payload"]
    assert (r["origin_limiting_factor"] == "obstacle_clearance").any()


def test_reliability_binding_days_match_a_direct_solve_with_the_obstacles(runs):
    """A reliability row limited by an obstacle is the direct solve of its day (its runway,
    temperature and headwind) with that runway's obstacles, within the 1 kg bracket."""
    from fieldlimits.schemas.load import load_folder
    from fieldlimits.physics.weightlimit import solve_takeoff_weight

    a = runs["with"]["results_airfield"]
    rows = a[(a["basis"] == "reliability") & (a["limiting_factor"] == "obstacle_clearance")]
    t = load_folder(runs["with"]["folder"])
    cases = case_io.block_cases(t, sorted(rows["airfield_id"].unique()), 0.0)
    pick = cases.merge(rows[["airfield_id", "runway_id", "aircraft_type_id", "month", "condition", "oat_c",
                             "headwind_mps", "tow_limit_kg"]],
                       on=["airfield_id", "runway_id", "aircraft_type_id", "month", "condition"],
                       suffixes=("_case", ""))
    assert len(pick) == len(rows) > 0
    site = dataclasses.replace(site_arrays(pick), temperature_k=pick["oat_c"].to_numpy() + 273.15,
                               headwind_mps=pick["headwind_mps"].to_numpy())
    obs, _ = case_io.obstacle_arrays(pick, t.obstacles)
    direct = solve_takeoff_weight(aircraft_arrays(t.aircraft_types.reset_index(drop=True),
                                                  pick["aircraft_index"].to_numpy()), site, obstacles=obs)
    np.testing.assert_allclose(direct.tow_limit_kg, pick["tow_limit_kg"], atol=1.5)


def test_explain_prints_the_flight_path_and_each_obstacle(runs):
    """explain solves the case as the run does (same limit, same clearance) and lists the four
    segments, the gross and net breakpoints and every obstacle of the runway, the one outside
    the departure area included."""
    from fieldlimits.pipeline.explain import explain_case

    d = runs["with"]["results_direction"]
    row = d[(d["basis"] == "design_day") & (d["limiting_factor"] == "obstacle_clearance")
            & (d["airfield_id"] == "cape-tallow")].iloc[0]
    r = explain_case(runs["with"]["folder"], "cape-tallow", "17", int(row["month"]), row["aircraft_type_id"],
                     row["condition"])
    assert r.limiting_factor == "obstacle_clearance"
    assert abs(r.tow_limit_kg - row["tow_limit_kg"]) < 1e-6
    text = r.text.split("8. Takeoff flight path")[1]
    for needle in ("first segment", "second segment", "level acceleration", "final segment",
                   "gross path", "net path", "acceleration height used", "1 500 ft"):
        assert needle in text, needle
    cliff = next(line for line in text.splitlines() if line.strip().startswith("cliff"))
    assert "(governing)" in cliff and "cleared" in cliff
    shed = next(line for line in text.splitlines() if line.strip().startswith("shed"))
    assert "outside the departure area" in shed
    # the clearance printed is the stored one (to its 0.01 m)
    got = float(text.split("clearance of the governing obstacle at the limit")[1].split()[0])
    assert abs(got - row["obstacle_clearance_m"]) < 0.006


def test_explain_of_a_runway_without_obstacles_has_no_flight_path(runs):
    from fieldlimits.pipeline.explain import explain_case

    r = explain_case(runs["with"]["folder"], "saltmere", "08", 7, "narrowbody-180", "dry")
    assert "8. Takeoff flight path" not in r.text


def test_no_result_leaves_an_obstacle_uncleared(runs):
    """At every limit the net path clears the governing obstacle (clearance ≥ 0 within the
    1 kg bracket's few millimetres), whatever requirement sets the limit."""
    for table in ("results_direction", "results_airfield"):
        clr = runs["with"][table]["obstacle_clearance_m"].dropna()
        assert len(clr) > 0 and (clr > -0.01).all()


def test_a_climb_limited_case_still_clears_its_obstacle(demo_dir):
    """A case climb-limited far below MTOW, whose takeoff distance at MTOW runs past the
    obstacle (with a falling net first segment there), still clears it at its limit: the
    obstacle requirement is not dropped by a look at MTOW alone."""
    from fieldlimits.schemas.load import load_folder
    from fieldlimits.physics.weightlimit import solve_takeoff_weight

    t = load_folder(demo_dir)
    obstacles = pd.DataFrame([("fernbrook", "15", "pine-hill", 4500.0, 90.0, 200.0)], columns=OBSTACLES.columns)
    c = case_io.block_cases(t, ["fernbrook"], 2.0, conditions=("dry",))
    c = c[(c["runway_id"] == "15") & (c["aircraft_type_id"] == "regional-jet90") & (c["month"] == 7)]
    c = c.reset_index(drop=True)
    obs, _ = case_io.obstacle_arrays(c, obstacles)
    r = solve_takeoff_weight(aircraft_arrays(t.aircraft_types.reset_index(drop=True), c["aircraft_index"].to_numpy()),
                             site_arrays(c), obstacles=obs)
    assert r.obstacle_clearance_m[0] > -0.01, (r.tow_limit_kg, r.limiting_factor, r.obstacle_clearance_m)


def test_report_draws_the_flight_path_of_obstacle_limited_runways(runs, tmp_path):
    """One chart per best runway direction an obstacle limits (design day, dry), drawn from the
    run's stored inputs: the same case as explain, the net path below the gross one, every
    obstacle with its governing one; none for a run without obstacles."""
    from fieldlimits.pipeline.obstacle_path import flight_path_view
    from fieldlimits.pipeline.report import write_report
    from fieldlimits.pipeline.report_obstacles import flight_path_figure, load_flight_paths
    from fieldlimits.schemas.load import load_folder

    a = runs["with"]["results_airfield"]
    limited = a[(a["basis"] == "design_day") & (a["condition"] == "dry") & (a["limiting_factor"] == "obstacle_clearance")]
    expected = sorted(set(zip(limited["airfield_id"], limited["runway_id"])))
    assert expected
    views = load_flight_paths(runs["with"]["db"], 1)
    assert sorted((v.airfield_id, v.runway_id) for v in views) == expected
    t = load_folder(runs["with"]["folder"])
    for v in views:
        assert v.limiting_factor == "obstacle_clearance"
        again = flight_path_view(t, v.airfield_id, v.runway_id, v.month, v.aircraft_type_id, "dry")
        np.testing.assert_array_equal(again.net_h_m, v.net_h_m)  # stored inputs = the folder's
        np.testing.assert_array_equal(again.net_x_m, v.net_x_m)
        finite = np.isfinite(v.net_x_m) & np.isfinite(v.gross_x_m)
        assert (v.net_x_m[finite] >= v.gross_x_m[finite] - 1e-9).all()  # the net path is lower: later
        assert v.obstacles["governing"].sum() == 1
        fig = flight_path_figure(v, "footer")
        lines = {ln.get_label(): ln for ln in fig.axes[0].get_lines()}
        np.testing.assert_allclose(lines["net path (25.115)"].get_ydata(), v.net_h_m)
    result = write_report(runs["with"]["db"], tmp_path / "report")
    names = {p.name for p in result.charts}
    for aid, rid in expected:
        name = f"flightpath-{aid}-{rid}.png"
        assert name in names and (tmp_path / "report" / name).stat().st_size > 10_000
    page = (tmp_path / "report" / "index.html").read_text(encoding="utf-8")
    assert 'id="obstacles"' in page and "flightpath-" in page
    assert load_flight_paths(runs["without"]["db"], 1) == []
    plain = write_report(runs["without"]["db"], tmp_path / "plain")
    assert not any(p.name.startswith("flightpath-") for p in plain.charts)



def test_adding_obstacles_recomputes_only_their_airfields(runs, tmp_path):
    """A rerun after obstacles were added reuses every airfield without obstacles (their
    hashes are unchanged) and gives the same rows as a fresh run."""
    from fieldlimits.pipeline.steps import RunParams, run_local

    db = tmp_path / "reuse.duckdb"
    shutil.copyfile(runs["without"]["db"], db)
    summary = run_local(runs["with"]["folder"], db, RunParams(reliability_levels=LEVELS), progress=lambda *a: None)
    d = runs["with"]["results_direction"]
    design = d[d["basis"] == "design_day"]
    free = ~design["airfield_id"].isin(OBSTACLES["airfield_id"])
    assert summary.reused_cases == int(free.sum()) > 0
    with store.reader(db) as con:
        again = con.sql("SELECT * FROM latest_results_direction ORDER BY ALL").df()
    _same_to_the_bit(again, d, [c for c in d.columns if c not in ("run_id", "scenario")])
