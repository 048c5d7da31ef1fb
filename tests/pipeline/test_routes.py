"""Tests of pipeline.routes: geodesic distances, the route-payload frame and the planning frame."""

import math

import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose

from fieldlimits.pipeline import routes
from fieldlimits.pipeline.errors import BadInput

# WGS84 semi-major axis a = 6 378 137 m (NIMA TR8350.2, Table 3.1; exact by definition).
WGS84_A_M = 6_378_137.0


def test_one_degree_of_longitude_on_the_equator():
    # Along the equator the geodesic is an arc of the circle of radius a (true for
    # separations below (1 - f) * 180 deg on an oblate ellipsoid): a * pi/180 = 111 319.49 m
    # [computed from the WGS84 definition].
    d = routes.great_circle_km(0.0, 10.0, 0.0, 11.0)
    assert_allclose(d * 1000.0, WGS84_A_M * math.pi / 180.0, atol=1e-3)
    assert_allclose(d * 1000.0, 111_319.49, atol=0.01)


def test_meridian_arc_equator_to_pole():
    # Quarter meridian of WGS84: 10 001 965.729 m (Karney 2013, "Algorithms for geodesics",
    # and the GeographicLib documentation; from memory). Tolerance 1 cm.
    d = routes.great_circle_km(0.0, 30.0, 90.0, 30.0)
    assert_allclose(d * 1000.0, 10_001_965.729, atol=0.01)


def test_meridian_arc_by_series_expansion():
    # Independent check: meridian arc from the equator to latitude phi by the classical
    # series in the third flattening n (Helmert; e.g. Karney 2011, Eq. 4 / Bowring) [computed],
    # with f = 1/298.257223563 (WGS84 definition).
    f = 1.0 / 298.257223563
    n = f / (2.0 - f)
    phi = math.radians(45.0)
    a1 = WGS84_A_M / (1.0 + n) * (1.0 + n**2 / 4.0 + n**4 / 64.0)
    b2 = -3.0 / 2.0 * n + 9.0 / 16.0 * n**3
    b4 = 15.0 / 16.0 * n**2 - 15.0 / 32.0 * n**4
    b6 = -35.0 / 48.0 * n**3
    b8 = 315.0 / 512.0 * n**4
    arc = a1 * (phi + b2 * math.sin(2 * phi) + b4 * math.sin(4 * phi) + b6 * math.sin(6 * phi)
                + b8 * math.sin(8 * phi))
    d = routes.great_circle_km(0.0, -20.0, 45.0, -20.0)
    assert_allclose(d * 1000.0, arc, atol=1e-3)


def test_distances_are_vectorised_and_symmetric():
    lat1, lon1 = np.array([10.0, -33.0, 60.0]), np.array([20.0, 151.0, -5.0])
    lat2, lon2 = np.array([12.0, -37.0, 61.0]), np.array([25.0, 145.0, 10.0])
    d = routes.great_circle_km(lat1, lon1, lat2, lon2)
    assert_allclose(d, routes.great_circle_km(lat2, lon2, lat1, lon1), rtol=1e-12)
    assert_allclose(d[1], routes.great_circle_km(-33.0, 151.0, -37.0, 145.0), rtol=1e-12)
    assert np.all(d > 0)


# --- route payload frame -------------------------------------------------------------------

def _tables(routes_rows=None):
    airfields = pd.DataFrame({
        "airfield_id": ["saltmere", "dunegate", "farcliff", "pinehollow"],
        "name": ["Saltmere", "Dunegate", "Farcliff", "Pine Hollow"],
        "latitude_deg": [10.0, 10.0, 10.0, 11.0],
        "longitude_deg": [20.0, 25.0, 40.0, 20.5],
        "elevation_m": [5.0, 300.0, 50.0, 800.0],
    })
    aircraft = pd.DataFrame({
        "aircraft_type_id": ["twinjet-m", "prop-s"],
        "mtow_kg": [70_000.0, 21_000.0], "oew_kg": [40_000.0, 13_000.0],
        "max_payload_kg": [18_000.0, 6_500.0], "max_fuel_kg": [20_000.0, 4_500.0],
        "max_landing_mass_kg": [62_000.0, 20_500.0], "taxi_fuel_kg": [200.0, 60.0],
        "cruise_tas_mps": [230.0, 140.0], "cruise_lift_to_drag": [16.0, 14.0],
        "cruise_tsfc_kg_per_n_s": [1.6e-5, np.nan],
        "cruise_psfc_kg_per_w_s": [np.nan, 0.30 / 3.6e6],
        "propeller_efficiency": [np.nan, 0.82], "max_passengers": [150, 68],
    })
    if routes_rows is None:
        routes_rows = [
            ("saltmere-dunegate-jet", "saltmere", "dunegate", "twinjet-m"),
            ("saltmere-farcliff-jet", "saltmere", "farcliff", "twinjet-m"),
            ("saltmere-pinehollow-prop", "saltmere", "pinehollow", "prop-s"),
        ]
    rt = pd.DataFrame(routes_rows, columns=["route_id", "origin_id", "destination_id",
                                            "aircraft_type_id"])
    return {"airfields": airfields, "aircraft_types": aircraft, "routes": rt}


def _airfield_results(jet_tow=None, prop_tow=None):
    months = np.arange(1, 13)
    jet_tow = np.linspace(70_000.0, 58_000.0, 12) if jet_tow is None else jet_tow
    prop_tow = np.full(12, 21_000.0) if prop_tow is None else prop_tow
    rows = []
    for ac, tows in (("twinjet-m", jet_tow), ("prop-s", prop_tow)):
        for m, tow in zip(months, tows):
            for cond, wet in (("dry", 0.0), ("wet", 2_000.0)):
                rows.append(("run-1", "saltmere", "09", ac, m, cond, "design_day", None,
                             tow - wet, "takeoff_distance"))
                for p, less in ((0.85, 500.0), (0.95, 900.0)):
                    rows.append(("run-1", "saltmere", "27", ac, m, cond, "reliability", p,
                                 tow - wet - less, "takeoff_distance"))
    return pd.DataFrame(rows, columns=["run_id", "airfield_id", "runway_id", "aircraft_type_id",
                                       "month", "condition", "basis", "reliability",
                                       "tow_limit_kg", "limiting_factor"])


def test_route_payload_frame_shape_and_columns():
    df = routes.route_payload_frame(_tables(), _airfield_results(), {})
    assert list(df.columns) == ["run_id"] + list(routes.ROUTE_PAYLOAD_COLUMNS)
    # 3 routes x 12 months x 2 conditions x 3 levels
    assert len(df) == 3 * 12 * 2 * 3
    assert not df.duplicated(["route_id", "aircraft_type_id", "month", "condition", "basis",
                              "reliability"]).any()


def test_route_distance_is_geodesic_times_route_factor():
    df = routes.route_payload_frame(_tables(), _airfield_results(), {"route_factor": 1.08})
    one = df[df["route_id"] == "saltmere-dunegate-jet"].iloc[0]
    gc = routes.great_circle_km(10.0, 20.0, 10.0, 25.0)
    assert_allclose(one["great_circle_km"], gc, rtol=1e-12)
    assert_allclose(one["air_distance_km"], 1.08 * gc, rtol=1e-12)


def test_payload_bounded_and_falls_with_length_and_takeoff_limit():
    df = routes.route_payload_frame(_tables(), _airfield_results(), None)
    ok = df["possible"]
    assert (df.loc[ok, "payload_kg"] >= 0).all()
    assert (df.loc[ok, "payload_kg"] <= df.loc[ok, "max_payload_kg"] + 1e-9).all()
    dry = df[(df["condition"] == "dry") & (df["basis"] == "design_day")]
    near = dry[dry["route_id"] == "saltmere-dunegate-jet"].set_index("month")["payload_kg"]
    far = dry[dry["route_id"] == "saltmere-farcliff-jet"].set_index("month")["payload_kg"]
    assert (far <= near).all() and (far < near).any()
    # the takeoff limit falls month by month in the fixture, so payload does not rise
    assert np.all(np.diff(far.to_numpy()) <= 1e-9)
    assert far.iloc[-1] < far.iloc[0]
    # reliability 0.95 (a lower takeoff limit) carries no more than 0.85
    jet = df[df["route_id"] == "saltmere-farcliff-jet"]
    p85 = jet[jet["reliability"] == 0.85].set_index(["month", "condition"])["payload_kg"]
    p95 = jet[jet["reliability"] == 0.95].set_index(["month", "condition"])["payload_kg"]
    assert (p95 <= p85 + 1e-9).all()


def test_restriction_is_payload_lost_to_the_origin_limit():
    df = routes.route_payload_frame(_tables(), _airfield_results(), None)
    jan = df[(df["route_id"] == "saltmere-farcliff-jet") & (df["month"] == 1)
             & (df["condition"] == "dry") & (df["basis"] == "design_day")].iloc[0]
    assert_allclose(jan["origin_tow_limit_kg"], 70_000.0)
    assert_allclose(jan["payload_restriction_kg"], 0.0, atol=1e-6)
    dec = df[(df["route_id"] == "saltmere-farcliff-jet") & (df["month"] == 12)
             & (df["condition"] == "dry") & (df["basis"] == "design_day")].iloc[0]
    assert dec["payload_restriction_kg"] > 0
    assert_allclose(dec["payload_at_mtow_kg"] - dec["payload_kg"], dec["payload_restriction_kg"])
    assert dec["payload_limiting_factor"] == "takeoff_limit"
    assert_allclose(dec["takeoff_mass_kg"], dec["origin_tow_limit_kg"], rtol=1e-9)


def test_route_row_overrides_run_defaults():
    t = _tables()
    t["routes"]["contingency_pct"] = [np.nan, 10.0, np.nan]
    df = routes.route_payload_frame(t, _airfield_results(), {"contingency_pct": 5.0})
    got = df.groupby("route_id")["contingency_pct"].first()
    assert got["saltmere-dunegate-jet"] == 5.0 and got["saltmere-farcliff-jet"] == 10.0
    row = df[df["route_id"] == "saltmere-farcliff-jet"].iloc[0]
    assert_allclose(row["contingency_fuel_kg"], 0.10 * row["trip_fuel_kg"], rtol=1e-12)


def test_passengers_at_standard_mass_capped_by_seats():
    df = routes.route_payload_frame(_tables(), _airfield_results(), {"passenger_mass_kg": 95.0})
    ok = df[df["possible"]]
    assert (ok["passengers"] == np.minimum(np.floor(ok["payload_kg"] / 95.0 + 1e-9),
                                           ok["max_passengers"])).all()


def test_no_takeoff_and_impossible_routes_say_why():
    res = _airfield_results(jet_tow=np.r_[np.full(11, 70_000.0), np.nan])
    res.loc[res["tow_limit_kg"].isna(), "limiting_factor"] = "no_takeoff"
    df = routes.route_payload_frame(_tables(), res, None)
    dec = df[(df["route_id"] == "saltmere-dunegate-jet") & (df["month"] == 12)]
    assert (~dec["possible"]).all()
    assert dec["payload_kg"].isna().all()
    assert (dec["payload_limiting_factor"] == "no_takeoff").all()
    assert dec["not_possible_reason"].str.contains("no takeoff").all()
    assert df.loc[df["possible"], "not_possible_reason"].isna().all()
    # a takeoff limit below empty mass plus fuel: not possible, named takeoff_limit
    low = _airfield_results(jet_tow=np.full(12, 41_000.0))
    df = routes.route_payload_frame(_tables(), low, None)
    far = df[df["route_id"] == "saltmere-farcliff-jet"]
    assert (~far["possible"]).all() and (far["payload_limiting_factor"] == "takeoff_limit").all()


def test_bad_references_are_named():
    t = _tables([("lost-route", "saltmere", "nowhere-field", "twinjet-m")])
    with pytest.raises(BadInput, match="nowhere-field"):
        routes.route_payload_frame(t, _airfield_results(), None)
    t = _tables([("odd-route", "saltmere", "dunegate", "mystery-type")])
    with pytest.raises(BadInput, match="mystery-type"):
        routes.route_payload_frame(t, _airfield_results(), None)
    with pytest.raises(BadInput, match="route_factor"):
        routes.RouteParams.from_mapping({"route_factor": 0.9})


def test_empty_routes_give_an_empty_frame():
    t = _tables()
    t["routes"] = t["routes"].iloc[0:0]
    df = routes.route_payload_frame(t, _airfield_results(), None)
    assert df.empty and "payload_kg" in df.columns


def test_payload_planning_frame_one_row_per_route_type_month():
    df = routes.route_payload_frame(_tables(), _airfield_results(), None)
    plan = routes.payload_planning_frame(df)
    assert len(plan) == 3 * 12
    assert not plan.duplicated(["route_id", "aircraft_type_id", "month"]).any()
    for col in ("payload_dry_design_day_kg", "payload_dry_p85_kg", "payload_dry_p95_kg",
                "payload_wet_design_day_kg", "air_distance_km", "block_fuel_dry_design_day_kg",
                "payload_limiting_factor_dry_design_day"):
        assert col in plan.columns
    cols = [c for c in plan.columns if c.startswith("payload_") and c.endswith("_kg")]
    assert cols.index("payload_dry_design_day_kg") < cols.index("payload_dry_p85_kg")
    src = df[(df["route_id"] == "saltmere-farcliff-jet") & (df["month"] == 7)
             & (df["condition"] == "wet") & (df["reliability"] == 0.95)]["payload_kg"].iloc[0]
    got = plan[(plan["route_id"] == "saltmere-farcliff-jet")
               & (plan["month"] == 7)]["payload_wet_p95_kg"].iloc[0]
    assert_allclose(got, src, atol=0.5)  # whole kilograms in the planning frame


def test_si_policy_columns_of_the_loaded_routes_table_are_read():
    # schemas.load gives contingency_fraction, alternate_distance_m and final_reserve_s
    t = _tables()
    t["routes"]["contingency_fraction"] = [0.03, 0.05, 0.05]
    t["routes"]["alternate_distance_m"] = [100e3, 370e3, 370e3]
    t["routes"]["final_reserve_s"] = [2700.0, 1800.0, 1800.0]
    df = routes.route_payload_frame(t, _airfield_results(), None)
    row = df[df["route_id"] == "saltmere-dunegate-jet"].iloc[0]
    assert_allclose([row["contingency_pct"], row["alternate_distance_km"],
                     row["final_reserve_min"]], [3.0, 100.0, 45.0])



def test_route_step_reads_only_the_origin_type_pairs_flown(tmp_path):
    # Two origins × two types stored; the routes fly A with t1 and B with t2 only: the
    # route step reads those two pairs' rows (not origins × every route type).
    import pandas as pd

    from fieldlimits.pipeline import steps

    rows = pd.DataFrame({"run_id": 1, "airfield_id": ["A", "A", "B", "B", "C"],
                         "runway_id": "09", "aircraft_type_id": ["t1", "t2", "t1", "t2", "t1"],
                         "month": 1, "condition": "dry", "basis": "design_day",
                         "reliability": float("nan"), "tow_limit_kg": [1.0, 2.0, 3.0, 4.0, 5.0],
                         "limiting_factor": "structural"})
    part = tmp_path / "part.parquet"
    rows.to_parquet(part, index=False)
    routes = pd.DataFrame({"route_id": ["r1", "r2", "r3"], "origin_id": ["A", "B", "A"],
                           "destination_id": ["B", "A", "C"], "aircraft_type_id": ["t1", "t2", "t1"]})
    got = steps._route_airfield_rows(routes, [part])
    assert sorted(zip(got["airfield_id"], got["aircraft_type_id"], got["tow_limit_kg"])) == \
        [("A", "t1", 1.0), ("B", "t2", 4.0)]


def test_route_step_in_blocks_of_routes_stores_the_same_rows(tmp_path, demo_dir, demo_run, monkeypatch):
    # The route step builds the payloads in blocks of whole routes (route_id order, the order
    # of the stored rows), so a large network never holds all payload frames at once: the
    # demo's 44 routes in blocks of 5 must store the same rows, in the same order, as in one
    # block (the shared demo run).
    import duckdb

    from fieldlimits.pipeline import steps

    import pandas as pd

    from fieldlimits.pipeline import routes

    monkeypatch.setattr(steps, "ROUTE_BLOCK_ROUTES", 5)
    frames = []
    whole_frame = routes.route_payload_frame
    monkeypatch.setattr(routes, "route_payload_frame",
                        lambda tables, *a, **k: frames.append(len(tables["routes"])) or whole_frame(tables, *a, **k))
    db = tmp_path / "blocks.duckdb"
    steps.run_local(demo_dir, db, steps.RunParams(reliability_levels=()), progress=lambda *a: None)
    assert frames == [5] * 8 + [4]  # the demo's 44 routes
    query = "SELECT * EXCLUDE (run_id) FROM route_payload_stored ORDER BY rowid"
    one, _ = demo_run
    with duckdb.connect(str(one), read_only=True) as a, duckdb.connect(str(db), read_only=True) as b:
        whole, blocks = a.sql(query).df(), b.sql(query).df()
    assert len(whole) > 1000
    pd.testing.assert_frame_equal(blocks, whole, check_exact=True)
