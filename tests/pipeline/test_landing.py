"""Landing at the destination through the pipeline: pipeline.landing, the route payloads and
the stored landing tables."""

from __future__ import annotations

import shutil

import duckdb
import numpy as np
import pandas as pd
import pytest

from fieldlimits.physics import reliabilitylevels
from fieldlimits.physics import landing as physics_landing
from fieldlimits.pipeline import landing, routes
from fieldlimits.pipeline.errors import BadInput
from fieldlimits.pipeline.steps import RunParams, run_local
from fieldlimits.schemas.caution import CAUTION
from fieldlimits.schemas.load import load_folder
from tests.pipeline.conftest import needs_physics

pytestmark = needs_physics

RESULT_KEYS = ["airfield_id", "runway_id", "aircraft_type_id", "month", "condition", "basis", "reliability"]
ROUTE_KEYS = ["route_id", "aircraft_type_id", "month", "condition", "basis", "reliability"]
#: route_payload columns from before the landing check (their values must not move)
OLD_ROUTE_COLUMNS = [c for c in routes.ROUTE_PAYLOAD_COLUMNS if c not in (
    "destination_runway_id", "destination_landing_limit_kg", "destination_limiting_factor", "limiting_end",
    "payload_landing_restriction_kg")]


@pytest.fixture(scope="module")
def demo_tables(demo_dir):
    return dict(load_folder(demo_dir))


def _with_lda(tables, values: dict | None = None, default=np.nan):
    """A copy of the tables with runways.lda_m set: ``values`` {(airfield, runway): m}."""
    out = dict(tables)
    rw = tables["runways"].copy()
    rw["lda_m"] = default
    for (af, r), v in (values or {}).items():
        rw.loc[(rw["airfield_id"] == af) & (rw["runway_id"] == r), "lda_m"] = v
    out["runways"] = rw
    return out


def _airfield_rows(tables, params):
    """Origin takeoff rows for the route step: a small stand-in (a fixed limit per origin)."""
    rt = tables["routes"]
    ac = tables["aircraft_types"].set_index("aircraft_type_id")
    rows = []
    for (o, t) in rt[["origin_id", "aircraft_type_id"]].drop_duplicates().itertuples(index=False):
        for m in range(1, 13):
            for cond in ("dry", "wet"):
                for basis, rel in [("design_day", np.nan)] + [("reliability", p) for p in params.get(
                        "reliability_levels", ())]:
                    rows.append((o, t, m, cond, basis, rel, "01", 0.97 * ac.loc[t, "mtow_kg"], "takeoff_distance"))
    return pd.DataFrame(rows, columns=["airfield_id", "aircraft_type_id", "month", "condition", "basis",
                                       "reliability", "runway_id", "tow_limit_kg", "limiting_factor"])


# ------------------------------------------------------------------------------------------
# no LDA anywhere: everything as before, to the bit


def _copy_demo(demo_dir, dst, lda: str):
    shutil.copytree(demo_dir, dst)
    rw = pd.read_csv(dst / "runways.csv", dtype=str, keep_default_na=False)
    if lda == "absent":
        rw = rw.drop(columns="lda_m")
    else:
        rw["lda_m"] = ""
    rw.to_csv(dst / "runways.csv", index=False)
    return dst


def _read(db, table):
    with duckdb.connect(str(db), read_only=True) as con:
        return con.sql(f"SELECT * FROM {table}").df()


def test_without_lda_every_earlier_result_is_reproduced_to_the_bit(demo_dir, tmp_path):
    """With lda_m absent or blank everywhere, every result of earlier versions comes out to
    the bit: takeoff rows, airfield rows and route payloads (design day and reliability
    levels), and the route payloads equal those of the route step without any landing
    check (the earlier code path: the destination limited by its structural landing mass
    only)."""
    params = RunParams(reliability_levels=(0.5, 0.9))
    dbs = {}
    for lda in ("absent", "blank"):
        net = _copy_demo(demo_dir, tmp_path / f"net-{lda}", lda)
        dbs[lda] = tmp_path / f"{lda}.duckdb"
        run_local(net, dbs[lda], params, progress=lambda *a: None)
    for table, keys in (("results_direction", RESULT_KEYS), ("results_airfield", RESULT_KEYS),
                        ("route_payload", ROUTE_KEYS)):
        a, b = (_read(dbs[k], table).drop(columns="run_id").sort_values(keys, ignore_index=True)
                for k in ("absent", "blank"))
        assert len(a) > 0
        pd.testing.assert_frame_equal(a, b, check_exact=True)
    rp = _read(dbs["blank"], "route_payload")
    assert set(rp["basis"]) == {"design_day", "reliability"}
    assert (rp["destination_limiting_factor"] == "not_checked").all()
    assert rp["destination_landing_limit_kg"].isna().all()
    assert set(rp["payload_limiting_factor"]) <= {"max_payload", "takeoff_limit", "fuel_capacity", "landing_mass",
                                                  "no_takeoff", "no_cruise_data"}
    # the earlier path: the route step with no landing rows at all
    tables = load_folder(tmp_path / "net-blank")
    airfield = _read(dbs["blank"], "results_airfield")
    old = routes.route_payload_frame(tables, airfield, params.as_dict(), landing=None)
    new = rp.sort_values(ROUTE_KEYS, ignore_index=True)
    old = old.sort_values(ROUTE_KEYS, ignore_index=True)
    for c in OLD_ROUTE_COLUMNS:
        if c == "run_id":
            continue
        pd.testing.assert_series_equal(new[c], old[c], check_exact=True, check_dtype=False, check_names=False,
                                       obj=c)
    # the landing tables say why: every destination not checked
    la = _read(dbs["blank"], "landing_airfield")
    assert len(la) and set(la["limiting_factor"]) == {"not_checked"}
    assert la["landing_limit_kg"].isna().all() and la["runway_id"].isna().all()


# ------------------------------------------------------------------------------------------
# one route, its destination runway shortened


ROUTE = "saltmere-kelpstone"  # regional-jet90 to a short coastal runway (two directions: 02, 20)


def _route_payload(tables, params, design_only=True):
    airfield = _airfield_rows(tables, params)
    lf = landing.landing_frames(tables, params)
    out = routes.route_payload_frame(tables, airfield, params, landing=lf.airfield)
    out = out[out["route_id"] == ROUTE]
    if design_only:
        out = out[out["basis"] == "design_day"]
    return out.sort_values(ROUTE_KEYS, ignore_index=True)


def test_long_destination_runway_keeps_the_payload_to_the_bit_and_shortening_lowers_it(demo_tables):
    params = {"reliability_levels": ()}
    base = _with_lda(demo_tables)  # no LDA anywhere: today's payloads
    today = _route_payload(base, params)
    long = _route_payload(_with_lda(demo_tables, {("kelpstone", "02"): 5000.0, ("kelpstone", "20"): 5000.0}), params)
    for c in OLD_ROUTE_COLUMNS:
        if c in today:
            pd.testing.assert_series_equal(long[c], today[c], check_exact=True, obj=c)
    assert (long["destination_limiting_factor"] == "max_landing_mass").all()
    assert (long["payload_landing_restriction_kg"] == 0.0).all()
    previous = long["payload_kg"].to_numpy()
    named = set()
    for lda in (3000.0, 2400.0, 2000.0, 1800.0, 1700.0, 1600.0, 1500.0, 1450.0):
        got = _route_payload(_with_lda(demo_tables, {("kelpstone", "02"): lda, ("kelpstone", "20"): lda}), params)
        p = got["payload_kg"].to_numpy()
        both = np.isfinite(p) & np.isfinite(previous)
        assert np.all(p[both] <= previous[both])
        assert not np.any(np.isfinite(p) & ~np.isfinite(previous))  # never possible again
        limited = got["payload_kg"] < today["payload_kg"]
        named |= set(got.loc[limited, "payload_limiting_factor"])
        assert (got.loc[limited, "limiting_end"] == "destination").all()
        # the restriction is what the destination costs
        ok = np.isfinite(p)
        np.testing.assert_allclose(got.loc[ok, "payload_landing_restriction_kg"],
                                   np.maximum(today.loc[ok, "payload_kg"] - got.loc[ok, "payload_kg"], 0.0),
                                   rtol=0, atol=1e-6)
        previous = np.where(np.isfinite(p), p, -np.inf)
    assert "landing_distance" in named
    # at 1 450 m the dry design day is landing limited, lower than at 1 700 m
    short = _route_payload(_with_lda(demo_tables, {("kelpstone", "02"): 1450.0, ("kelpstone", "20"): 1450.0}),
                           params)
    dry = short[short["condition"] == "dry"]
    assert (dry["payload_limiting_factor"] == "landing_distance").all()
    np.testing.assert_allclose(dry["landing_mass_kg"], dry["destination_landing_limit_kg"], rtol=1e-12)


def test_a_destination_without_lda_is_not_checked_and_says_so(demo_tables):
    tables = _with_lda(demo_tables, {("kelpstone", "02"): 1400.0})  # 20 has none
    lf = landing.landing_frames(tables, {"reliability_levels": ()})
    d = lf.direction[lf.direction["airfield_id"] == "kelpstone"]
    assert set(d.loc[d["runway_id"] == "20", "limiting_factor"]) == {"not_checked"}
    a = lf.airfield[lf.airfield["airfield_id"] == "kelpstone"]
    assert set(a["runway_id"]) == {"02"}  # the best among the directions checked
    other = lf.airfield[lf.airfield["airfield_id"] == "lastlight"]
    assert set(other["limiting_factor"]) == {"not_checked"} and other["landing_limit_kg"].isna().all()


def test_the_landing_rule_is_a_run_option(demo_tables):
    tables = _with_lda(demo_tables, {("lastlight", "16"): 1400.0, ("lastlight", "34"): 1400.0})
    sixty = landing.landing_frames(tables, {"reliability_levels": ()}).airfield
    seventy = landing.landing_frames(tables, {"reliability_levels": (), "landing_turboprop_share": 0.7}).airfield
    pick = lambda f: f[(f["airfield_id"] == "lastlight") & (f["condition"] == "dry")]["landing_limit_kg"].to_numpy()  # noqa: E731
    assert np.all(pick(seventy) > pick(sixty))  # regional-tp70 (propeller): the 70 % rule
    assert RunParams().landing_jet_share == 0.6 and RunParams().landing_wet_increase == 0.15
    for bad in (dict(landing_jet_share=0.0), dict(landing_turboprop_share=1.2), dict(landing_wet_increase=-0.1)):
        with pytest.raises(BadInput, match="landing"):
            RunParams(**bad)


def test_demo_run_stores_landing_rows_matching_the_route_payloads(demo_run):
    db, _ = demo_run
    la = _read(db, "landing_airfield")
    ld = _read(db, "landing_direction")
    rp = _read(db, "route_payload")
    assert len(ld) and len(la)
    # the latest_* views carry the last baseline run's landing rows with its scenario
    for table, rows in (("landing_airfield", la), ("landing_direction", ld)):
        latest = _read(db, f"latest_{table}")
        last = rows[rows["run_id"] == rows["run_id"].max()]
        assert len(latest) == len(last) and set(latest["scenario"]) == {"baseline"}
        assert list(latest.columns[2:]) == [c for c in rows.columns if c != "run_id"]
    # the demo: some destinations checked, some not, some routes landing-limited
    assert {"not_checked", "max_landing_mass", "landing_distance"} <= set(la["limiting_factor"])
    assert "landing_distance" in set(rp["payload_limiting_factor"])
    assert set(rp["limiting_end"].dropna()) <= {"origin", "destination", "aircraft"}
    m = rp.merge(la, left_on=["destination_id", "aircraft_type_id", "month", "condition", "basis"],
                 right_on=["airfield_id", "aircraft_type_id", "month", "condition", "basis"], suffixes=("", "_l"))
    assert len(m) == len(rp)
    np.testing.assert_array_equal(m["destination_landing_limit_kg"].to_numpy(float), m["landing_limit_kg"].to_numpy(float))
    assert (m["destination_limiting_factor"] == m["limiting_factor"]).all()


# ------------------------------------------------------------------------------------------
# reliability levels


def test_reliability_levels_against_direct_solves_of_every_wind_point(demo_tables):
    """The grid (temperature nodes × headwind nodes, interpolated to the wind points) against
    the landing limit solved directly at every wind point and temperature node: the level
    masses agree within 0.1 % (the accuracy the module docstring states)."""
    tables = _with_lda(demo_tables, {("kelpstone", "02"): 1500.0, ("kelpstone", "20"): 1500.0,
                                     ("lastlight", "16"): 1400.0, ("lastlight", "34"): 1400.0,
                                     ("saltmere", "08"): 3400.0, ("saltmere", "26"): 3400.0})
    pairs = pd.DataFrame({"airfield_id": ["kelpstone", "lastlight", "saltmere"],
                          "aircraft_type_id": ["regional-jet90", "regional-tp70", "narrowbody-180"]})
    cases = landing.landing_cases(tables, pairs, 0.0, ("dry",))
    cases = cases[cases["month"].isin([1, 7])].reset_index(drop=True)
    ac = tables["aircraft_types"].reset_index(drop=True)
    details = {}
    levels = (0.5, 0.85, 0.95)
    frame = landing.reliability_frame(cases, ac, tables["climate_monthly"], tables["wind_rose"], levels=levels,
                                      conditions=("dry",), rule=landing.LandingRule(), details=details)
    lv = details["levels"]
    grp = details["group_case"]
    checked = cases[cases["lda_m"].notna()].reset_index(drop=True)
    n, n_pts = len(checked), details["point_headwind"].shape[1]
    scores = details["scores"]
    t_nodes = details["temperature"](np.arange(n)[:, None], scores[None, :])
    rep = np.repeat(np.arange(n), n_pts * scores.size)
    direct = landing.solve(checked, ac, landing.LandingRule(), rep,
                           temperature_k=np.repeat(t_nodes, n_pts, axis=0).ravel(),
                           headwind_mps=np.repeat(details["point_headwind"], scores.size, axis=1).ravel(),
                           figures=False).landing_limit_kg.reshape(n, n_pts, scores.size)
    valid = grp >= 0
    safe = np.where(valid, grp, 0)
    raw = np.where(valid[:, :, None, None], direct[safe], np.nan)
    us = details["usable"][safe]
    _, m, lost = reliabilitylevels.flown_direction(raw, ~us, np.zeros_like(us), valid)
    ac_i = checked["aircraft_index"].to_numpy()[safe[:, 0]]
    exact = reliabilitylevels.reliability_masses(m, scores, details["weight"], ac["oew_kg"].to_numpy()[ac_i],
                                           ac["max_landing_mass_kg"].to_numpy()[ac_i], levels=levels,
                                           lost_reason=lost)
    both = np.isfinite(exact.mass_kg) & np.isfinite(lv.mass_kg)
    assert both.sum() >= 6
    np.testing.assert_array_equal(np.isfinite(exact.mass_kg), np.isfinite(lv.mass_kg))
    rel_err = np.abs(lv.mass_kg[both] - exact.mass_kg[both]) / exact.mass_kg[both]
    assert rel_err.max() < 1e-3
    # the rows: levels never rise with p, and each is the direct solve of its binding day
    rows = frame[frame["landing_limit_kg"].notna()]
    for _, g in rows.groupby(list(landing.GROUP_KEYS)):
        assert np.all(np.diff(g.sort_values("reliability")["landing_limit_kg"].to_numpy()) <= 0)
    assert set(frame["limiting_factor"]) <= set(physics_landing.LANDING_FACTORS)


def test_reliability_rows_by_blocks_of_destinations_equal_all_at_once(demo_tables):
    """A large run solves the landing levels a few destinations at a time, reading their
    wind-rose rows as it goes: the rows equal those of one block to the bit."""
    tables = _with_lda(demo_tables, default=2000.0)
    routes = tables["routes"]
    cases = landing.landing_cases(tables, landing.destination_pairs(routes), 0.0, ("dry", "wet"))
    ac = tables["aircraft_types"].reset_index(drop=True)
    rose = tables["wind_rose"]
    asked = []

    def rose_of(ids):
        asked.append(sorted(ids))
        return rose[rose["airfield_id"].isin(ids)]

    kw = dict(levels=(0.5, 0.95), conditions=("dry",), rule=landing.LandingRule())
    whole = landing.reliability_frame(cases, ac, tables["climate_monthly"], rose, block_airfields=None, **kw)
    blocks = landing.reliability_frame(cases, ac, tables["climate_monthly"], rose_of, block_airfields=2, **kw)
    n_dest = cases["airfield_id"].nunique()
    assert n_dest >= 3 and len(asked) == -(-n_dest // 2) and all(len(a) <= 2 for a in asked)
    pd.testing.assert_frame_equal(blocks, whole)


# ------------------------------------------------------------------------------------------
# explain --landing


def test_explain_landing_matches_the_run_and_shows_every_step(demo_run):
    from fieldlimits.pipeline.explain_landing import explain_landing

    db, _ = demo_run
    ld = _read(db, "landing_direction")
    row = ld[(ld["airfield_id"] == "kelpstone") & (ld["runway_id"] == "02") & (ld["month"] == 7)
             & (ld["aircraft_type_id"] == "regional-jet90") & (ld["condition"] == "dry")].iloc[0]
    out = explain_landing(None, "kelpstone", "02", 7, "regional-jet90", "dry")
    assert out.limiting_factor == row["limiting_factor"] == "landing_distance"
    assert out.landing_limit_kg == pytest.approx(row["landing_limit_kg"], abs=1e-6)
    assert out.vref_kt == pytest.approx(row["vref_kt"], rel=1e-9)
    for part in ("1. Atmosphere", "2. Runway direction", "VREF = 1.23 V_SR0", "flare radius", "free roll",
                 "braking roll to rest", "required landing distance", "approach climb", "landing climb",
                 "landing-mass limit", "14 CFR 121.195", CAUTION):
        assert part in out.text, part
    # a direction without LDA says it is not checked
    blank = explain_landing(None, "southreach", "13", 7, "longrange-twin300", "wet")
    assert blank.limiting_factor == "not_checked" and "not_checked" in blank.text


def test_explain_landing_command_line():
    from tests.pipeline.conftest import cli

    r = cli("explain", "--airfield", "lastlight", "--runway", "34", "--month", "1", "--type", "regional-tp70",
            "--landing", "--landing-turboprop-share", "0.7")
    assert r.returncode == 0, r.stderr
    assert "0.7" in r.stdout and "landing-mass limit" in r.stdout
    bad = cli("explain", "--airfield", "lastlight", "--runway", "34", "--month", "1", "--type", "regional-tp70",
              "--landing", "--landing-jet-share", "1.5")
    assert bad.returncode == 2 and "landing-jet-share" in bad.stderr


def test_run_command_takes_the_landing_rule(tmp_path):
    import json

    from tests.pipeline.conftest import cli

    db = tmp_path / "rule.duckdb"
    r = cli("run", "--no-prefect", "--quiet", "--db", db, "--reliability", "none", "--conditions", "dry",
            "--landing-turboprop-share", "0.7")
    assert r.returncode == 0, r.stderr
    with duckdb.connect(str(db), read_only=True) as con:
        params = json.loads(con.sql("SELECT parameters FROM runs").fetchall()[0][0])
        lastlight = con.sql("SELECT landing_limit_kg FROM landing_airfield WHERE airfield_id = 'lastlight' "
                            "AND month = 1").fetchall()
    assert params["landing_turboprop_share"] == 0.7 and params["landing_jet_share"] == 0.6
    assert lastlight and all(v[0] is not None for v in lastlight)
    bad = cli("run", "--no-prefect", "--quiet", "--db", tmp_path / "bad.duckdb", "--landing-wet-increase", "2")
    assert bad.returncode == 2 and "landing-wet-increase" in bad.stderr
    assert not (tmp_path / "bad.duckdb").exists()


def test_report_route_charts_and_table_say_which_end_limits(demo_run, tmp_path):
    from fieldlimits.pipeline import report

    db, _ = demo_run
    data = report.load_report_data(db)
    table = report.route_summary(data, ["saltmere-kelpstone", "saltmere-southreach"]).set_index("route")
    assert table.loc["saltmere-kelpstone", "months limited at the destination (design day)"] == 12
    assert table.loc["saltmere-kelpstone", "destination landing check"] == "checked"
    assert table.loc["saltmere-southreach", "destination landing check"] == "not checked (no LDA)"
    rp = data.route_payload
    part = rp[(rp["route_id"] == "saltmere-kelpstone") & (rp["condition"] == "dry")]
    fig = report.route_figure(part, "saltmere-kelpstone", {"regional-jet90": "#336699"})
    ax = fig.axes[0]
    down = [ln for ln in ax.get_lines() if ln.get_marker() == report.END_MARKERS["destination"]]
    assert down and sum(len(ln.get_xdata()) for ln in down) == 12  # every design-day month
    texts = [t.get_text() for leg in fig.legends for t in leg.get_texts()]
    assert report.END_LABELS["destination"] in texts
    far = rp[(rp["route_id"] == "saltmere-southreach") & (rp["condition"] == "dry")]
    assert "not checked" in report.route_figure(far, "saltmere-southreach", {"longrange-twin300": "#669933"}
                                                ).axes[0].get_title()
