"""Tests of the report: charts are valid non-trivial images, the page and CSV carry the caution."""

import hashlib
from pathlib import Path

import duckdb
import matplotlib.image as mpimg
import numpy as np
import pandas as pd
import pytest

from fieldlimits.pipeline import report, routes
from fieldlimits.pipeline.errors import BadInput
from fieldlimits.schemas.caution import CAUTION

from tests.pipeline.test_routes import _airfield_results, _tables


def _data():
    """Two airfields with results (one with a no-takeoff month), three routes."""
    t = _tables()
    res = _airfield_results()
    other = res[res["airfield_id"] == "saltmere"].copy()
    other["airfield_id"] = "dunegate"
    other["tow_limit_kg"] = other["tow_limit_kg"] - 4_000.0
    other.loc[(other["month"] == 7) & (other["aircraft_type_id"] == "twinjet-m"),
              ["tow_limit_kg", "limiting_factor"]] = (np.nan, "no_takeoff")
    res = pd.concat([res, other], ignore_index=True)
    t["routes"] = pd.concat([t["routes"], pd.DataFrame(
        [("dunegate-farcliff-jet", "dunegate", "farcliff", "twinjet-m")],
        columns=t["routes"].columns)], ignore_index=True)
    rp = routes.route_payload_frame(t, res, None)
    aircraft = t["aircraft_types"][["aircraft_type_id", "mtow_kg", "max_payload_kg"]].assign(
        name=["Medium twin", "Small turboprop"])
    return report.ReportData(res, rp, aircraft, t["airfields"], run_id=3)


def _assert_real_image(path: Path):
    img = mpimg.imread(path)  # decodes the PNG (raises on a broken file)
    assert img.ndim == 3 and img.shape[0] >= 200 and img.shape[1] >= 400
    rgb = (img[..., :3] * 255).astype(np.uint32)
    packed = (rgb[..., 0] << 16) | (rgb[..., 1] << 8) | rgb[..., 2]
    assert np.unique(packed).size > 20  # drawn content, not a blank or single-colour canvas
    assert img[..., :3].std() > 0.02


def test_report_builds_with_valid_images_page_and_csv(tmp_path):
    result = report.build_report(_data(), tmp_path)
    names = sorted(p.name for p in result.charts)
    assert names == sorted([
        "network-airfields.png", "network-routes.png",
        "route-saltmere-dunegate-jet.png", "route-saltmere-farcliff-jet.png",
        "route-saltmere-pinehollow-prop.png", "route-dunegate-farcliff-jet.png",
        "airfield-saltmere.png", "airfield-dunegate.png"])
    for p in result.charts:
        _assert_real_image(p)
    page = result.index.read_text(encoding="utf-8")
    assert html_caution() in page
    for p in result.charts:
        assert f'src="{p.name}"' in page
    assert "payload_planning.csv" in page
    lines = result.planning_csv.read_text(encoding="utf-8").splitlines()
    assert lines[0].startswith("run_id,scenario,route_id,")  # a plain header, no comment line
    csv = pd.read_csv(result.planning_csv)  # default settings (issue 18)
    assert len(csv) == 4 * 12  # one row per route x type x month
    assert "payload_dry_design_day_kg" in csv.columns and "air_distance_km" in csv.columns
    assert (csv["caution"] == CAUTION).all() and (csv["scenario"] == "baseline").all()
    assert result.seconds < 30


def test_not_possible_month_is_shown_and_counted(tmp_path):
    data = _data()
    rp = data.route_payload
    july = rp[(rp["route_id"] == "dunegate-farcliff-jet") & (rp["month"] == 7)]
    assert (~july["possible"]).all()
    summary = report.route_summary(data, ["dunegate-farcliff-jet"])
    assert summary["months not possible (design day)"].iloc[0] == 1
    m = report.airfield_restriction_matrix(data, ["saltmere", "dunegate"])
    assert m.loc["dunegate", 7] == report.IMPOSSIBLE  # no takeoff: its own value, not 100 %
    shares = m.to_numpy()[np.isfinite(m.to_numpy())]
    assert 0.0 <= shares.min() and shares.max() <= 1.0
    assert m.loc["saltmere", 1] == pytest.approx(0.0)


def test_file_names_are_deterministic_and_charts_repeatable(tmp_path):
    a = report.build_report(_data(), tmp_path / "a", route_ids=["saltmere-farcliff-jet"])
    b = report.build_report(_data(), tmp_path / "b", route_ids=["saltmere-farcliff-jet"])
    assert [p.name for p in a.charts] == [p.name for p in b.charts]
    for pa, pb in zip(a.charts, b.charts):
        assert hashlib.sha256(pa.read_bytes()).digest() == hashlib.sha256(pb.read_bytes()).digest()


def test_filters_select_airfields_and_routes(tmp_path):
    r = report.build_report(_data(), tmp_path, airfield_ids=["dunegate"])
    names = {p.name for p in r.charts}
    assert "airfield-dunegate.png" in names and "airfield-saltmere.png" not in names
    # routes touching dunegate follow the airfield filter
    assert "route-saltmere-dunegate-jet.png" in names
    assert "route-saltmere-pinehollow-prop.png" not in names
    with pytest.raises(BadInput, match="nowhere"):
        report.build_report(_data(), tmp_path, airfield_ids=["nowhere"])
    with pytest.raises(BadInput, match="no-such-route"):
        report.build_report(_data(), tmp_path, route_ids=["no-such-route"])


def test_slugs_are_file_safe_and_unique():
    s = report.unique_slugs(["North Field/2", "north-field-2", "plain"])
    assert s["plain"] == "plain"
    assert len(set(s.values())) == 3
    assert all(c.isalnum() or c == "-" for v in s.values() for c in v)


def _store(tmp_path, runs) -> Path:
    """A store (the real schema) holding ``runs``: (run_id, temperature offset [K], data)."""
    from fieldlimits.pipeline import store
    from fieldlimits.schemas import results

    db = tmp_path / "store.duckdb"
    with store.writer(db) as con:
        for i, (run_id, offset, data) in enumerate(runs):
            af = data.airfield_results.assign(run_id=run_id)
            rp = data.route_payload.assign(run_id=run_id)
            store.run_sql(con, "INSERT INTO runs (run_id, status, started_at, finished_at, input_dir, "
                               "parameters, temperature_offset_k, rows_airfield, rows_route_payload) "
                               "VALUES ($r, 'complete', $t, $t, '/data/a', $p, $o, $na, $nr)",
                          {"r": run_id, "t": pd.Timestamp("2030-01-01") + pd.Timedelta(days=i),
                           "o": offset, "na": len(af), "nr": len(rp),
                           "p": '{"conditions": ["dry", "wet"], "reliability_levels": [0.85, 0.95], '
                                '"reliability_conditions": ["dry"]}'})
            for name, frame in (("results_airfield", af), ("route_payload", rp)):
                con.register("f", frame)  # rows are stored once; each run reads its own
                store.run_sql(con, f"INSERT INTO {results.stored_name(name)} BY NAME SELECT * FROM f")
                con.unregister("f")
            store.run_sql(con, store.sql("load_run_sources_computed"), {"run_id": run_id})
            store.run_sql(con, "INSERT INTO run_inputs VALUES ($r, 'aircraft_types', NULL, 2, 'abc')",
                          {"r": run_id})
        con.register("f", runs[0][2].aircraft.assign(input_sha256="abc"))
        store.run_sql(con, "CREATE TABLE input_aircraft_types AS SELECT * FROM f")
        con.unregister("f")
    return db


def _warmer(data, less_kg=1_500.0):
    """The same network with every takeoff limit ``less_kg`` lower and July at dunegate
    impossible for the jet: a made-up warmer scenario."""
    t = _tables()
    res = data.airfield_results.copy()
    res["tow_limit_kg"] = res["tow_limit_kg"] - less_kg
    t["routes"] = pd.concat([t["routes"], pd.DataFrame(
        [("dunegate-farcliff-jet", "dunegate", "farcliff", "twinjet-m")],
        columns=t["routes"].columns)], ignore_index=True)
    return report.ReportData(res, routes.route_payload_frame(t, res, None), data.aircraft,
                             data.airfields)


def test_report_reads_a_run_from_the_store(tmp_path):
    data = _data()
    db = _store(tmp_path, [(2, 0.0, data), (3, 0.0, data)])
    loaded = report.load_report_data(db)
    assert loaded.run_id == 3 and len(loaded.route_payload) == len(data.route_payload)
    assert set(loaded.aircraft["aircraft_type_id"]) == {"twinjet-m", "prop-s"}
    assert loaded.scenario == "baseline"
    assert loaded.scenario_details == ("conditions dry, wet; reliability levels 0.85, 0.95 on dry")
    result = report.write_report(db, tmp_path / "out", compare_with=None)
    assert result.index.exists() and len(result.charts) == 8
    with pytest.raises(BadInput, match="run 9"):
        report.load_report_data(db, run_id=9)


def test_default_report_is_the_baseline_and_a_scenario_says_so(tmp_path):
    """A scenario run never passes for the baseline: the default report draws the last
    baseline run; drawn on request, the scenario is in the heading, the charts and the CSV."""
    data = _data()
    db = _store(tmp_path, [(2, 0.0, data), (3, 2.0, _warmer(data))])
    assert report.load_report_data(db, compare_with=None).run_id == 2  # not the newer run 3
    out = tmp_path / "warm"
    result = report.write_report(db, out, run_id=3, compare_with=None)
    page = result.index.read_text(encoding="utf-8")
    assert "<h1>fieldlimits: takeoff-weight limits and route payloads, temperature +2 K</h1>" in page
    assert "Scenario: <b>temperature +2 K</b>" in page and "not the results for the climate" in page
    csv = pd.read_csv(result.planning_csv)
    assert (csv["scenario"] == "temperature +2 K").all() and (csv["run_id"] == 3).all()
    warm = report.load_report_data(db, run_id=3, compare_with=None)
    assert report.footer_text(warm).startswith("Run 3, scenario temperature +2 K. ")
    assert report.footer_text(warm).endswith(CAUTION)
    only_scenarios = _store(tmp_path / "s", [(4, 2.0, data)]) if (tmp_path / "s").mkdir() is None else None
    with pytest.raises(BadInput, match=r"no complete baseline run.*4 \(temperature \+2 K\).*--run"):
        report.load_report_data(only_scenarios)


def test_report_of_a_scenario_shows_the_changes_since_the_baseline(tmp_path):
    data = _data()
    db = _store(tmp_path, [(2, 0.0, data), (3, 2.0, _warmer(data))])
    out = tmp_path / "warm"
    result = report.write_report(db, out, run_id=3)
    names = {p.name for p in result.charts}
    assert {"changes-routes.png", "changes-airfields.png"} <= names
    for name in ("changes-routes.png", "changes-airfields.png"):
        _assert_real_image(out / name)
    page = result.index.read_text(encoding="utf-8")
    assert "Changes since run 2 (baseline)" in page
    changes = pd.read_csv(out / "changes.csv")
    jet = changes[(changes["kind"] == "airfield_month") & (changes["airfield_id"] == "saltmere")
                  & (changes["level"] == "design_day")]
    # every limit 1 500 kg lower (by construction in _warmer)
    assert len(jet) == 2 * 12 * 2 and (jet["change_kg"] == -1500).all()
    assert (changes["after_scenario"] == "temperature +2 K").all()
    m, n = report.change_matrix(result_comparison(db), "airfield")
    assert n == 2 and (m.to_numpy() == -1500.0).all()


def result_comparison(db):
    from fieldlimits.pipeline import compare

    return compare.compare_runs(db, 2, 3)


def test_not_possible_marks_say_their_level(tmp_path):
    """Each cross sits in the row of its level: July not possible on 95 % of days only, June
    not possible at any level (issue 18)."""
    data = _data()
    rp = data.route_payload
    one = rp[(rp["route_id"] == "saltmere-farcliff-jet") & (rp["condition"] == "dry")].copy()
    july95 = (one["month"] == 7) & (one["reliability"] == 0.95)
    june = one["month"] == 6
    one.loc[july95 | june, ["possible", "payload_kg"]] = (False, np.nan)
    fig = report.route_figure(one, "saltmere-farcliff-jet", {"twinjet-m": "#2b5f8a"})
    strip = fig.axes[1]
    labels = {round(t.get_position()[1]): t.get_text() for t in strip.get_yticklabels()}
    assert sorted(labels.values()) == ["85 % of days", "95 % of days", "design day"]
    crosses = {}
    for line in strip.get_lines():
        for x, y in zip(line.get_xdata(), line.get_ydata()):
            crosses.setdefault(labels[round(y)], []).append(round(x))
    assert crosses == {"design day": [6], "85 % of days": [6], "95 % of days": [6, 7]}


def test_percent_axis_does_not_magnify_a_small_dip():
    # a 0.4 % dip on an axis of at least 80 ... 104 % is under 2 % of the axis height
    assert report.percent_axis_floor(np.array([99.6, 100.0])) == 80.0
    assert report.percent_axis_floor(np.array([63.0, 100.0])) == 60.0
    data = _data()
    res = data.airfield_results
    res = res[(res["airfield_id"] == "saltmere") & (res["basis"] == "design_day")].copy()
    mtow = {"twinjet-m": 70_000.0, "prop-s": 21_000.0}
    res["tow_limit_kg"] = res["aircraft_type_id"].map(mtow) * np.where(res["month"] == 7, 0.996, 1.0)
    fig = report.airfield_figure(res, "saltmere", {"twinjet-m": "#2b5f8a", "prop-s": "#c8782a"}, mtow)
    low, high = fig.axes[0].get_ylim()
    assert low <= 80.0 and 0.4 / (high - low) < 0.02


def test_colour_scale_gives_each_value_one_meaning(tmp_path):
    """A shortfall of the whole max payload (takeoff possible) and no takeoff are different
    values, and different colours in the chart."""
    data = _data()
    res = data.airfield_results
    pick = (res["airfield_id"] == "saltmere") & (res["month"] == 3) & (res["aircraft_type_id"] == "twinjet-m")
    res.loc[pick, "tow_limit_kg"] = 1_000.0  # far below MTOW - max payload, still a takeoff
    m = report.airfield_restriction_matrix(data, ["saltmere", "dunegate"])
    assert m.loc["saltmere", 3] == 1.0 and np.isinf(m.loc["dunegate", 7])
    path = report.draw_matrix(m, tmp_path / "m.png", "t", "s", "shortfall")
    img = mpimg.imread(path)[..., :3]
    dark = (img.sum(axis=2) < 0.35)  # the no-takeoff colour is near black, no scale colour is
    assert dark.any()
    full = np.array(report.RESTRICTION_CMAP(1.0)[:3])
    assert np.abs(full - np.array(matplotlib_colour(report.IMPOSSIBLE_COLOUR))).sum() > 0.3


def matplotlib_colour(hex_colour):
    from matplotlib.colors import to_rgb

    return to_rgb(hex_colour)


def test_tables_keep_ids_on_one_line():
    page = report._page(_data(), {"network": [], "routes": [], "airfields": []},
                        {"routes": report.route_summary(_data(), ["saltmere-farcliff-jet"]),
                         "airfields": pd.DataFrame(), "csv": False, "changes": pd.DataFrame()})
    assert "td { white-space: nowrap; }" in page
    assert '<td class="text">saltmere-farcliff-jet</td>' in page and 'class="num"' in page


# --- the demo network, end to end -----------------------------------------------------------

def test_report_command_builds_for_the_demo_network(tmp_path, demo_run):
    from tests.pipeline.conftest import cli

    db, _ = demo_run
    out = tmp_path / "report"
    done = cli("report", "--db", db, "--out", out, "--quiet")
    assert done.returncode == 0, done.stderr
    pngs = sorted(out.glob("*.png"))
    con = duckdb.connect(str(db), read_only=True)
    n_fields = con.execute("SELECT count(DISTINCT airfield_id) FROM latest_results_airfield").fetchone()[0]
    n_routes = con.execute("SELECT count(DISTINCT route_id) FROM latest_route_payload").fetchone()[0]
    n_rows = con.execute("SELECT count(DISTINCT (route_id, aircraft_type_id)) FROM latest_route_payload").fetchone()[0]
    n_paths = con.execute("""SELECT count(DISTINCT (airfield_id, runway_id)) FROM latest_results_airfield
                             WHERE basis = 'design_day' AND condition = 'dry'
                               AND limiting_factor = 'obstacle_clearance'""").fetchone()[0]
    con.close()
    assert n_fields >= 30 and n_routes >= 1 and n_paths >= 1
    # + the two network views and a flight path per obstacle-limited best runway direction
    assert len(pngs) == n_fields + n_routes + 2 + n_paths
    assert len(list(out.glob("flightpath-*.png"))) == n_paths
    for p in pngs:
        _assert_real_image(p)
    page = (out / "index.html").read_text(encoding="utf-8")
    assert html_caution() in page and "Scenario: <b>baseline</b>" in page
    csv = pd.read_csv(out / "payload_planning.csv")
    assert len(csv) == n_rows * 12
    assert (csv["caution"] == CAUTION).all()
    # filters (plain function: no second process)
    one = tmp_path / "one"
    report.write_report(db, one, airfield_ids=["saltmere"], route_ids=["saltmere-southreach"])
    assert sorted(p.name for p in one.glob("*.png")) == [
        "airfield-saltmere.png", "network-airfields.png", "network-routes.png",
        "route-saltmere-southreach.png"]
    bad = cli("report", "--db", db, "--out", one, "--route", "no-such-route")
    assert bad.returncode == 2 and "no-such-route" in bad.stderr


def html_caution() -> str:
    import html

    return html.escape(CAUTION)


def test_report_help_carries_the_caution():
    from tests.pipeline.conftest import cli

    done = cli("report", "--help")
    assert done.returncode == 0
    assert "Planning estimates only" in " ".join(done.stdout.split())


def test_report_without_routes_draws_airfields_only(tmp_path):
    data = _data()
    data.route_payload = pd.DataFrame()
    r = report.build_report(data, tmp_path, airfield_ids=["saltmere"])
    assert sorted(p.name for p in r.charts) == ["airfield-saltmere.png", "network-airfields.png"]
    assert r.planning_csv is None
    assert "payload_planning.csv" not in r.index.read_text(encoding="utf-8")
