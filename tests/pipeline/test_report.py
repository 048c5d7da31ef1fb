"""Tests of the report: charts are valid non-trivial images, the page and CSV carry the caution."""

import hashlib
from pathlib import Path

import duckdb
import matplotlib.image as mpimg
import numpy as np
import pandas as pd
import pytest

from pipeline import report, routes
from pipeline.errors import BadInput
from schemas.caution import CAUTION

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
    assert lines[0] == f"# {CAUTION}"
    csv = pd.read_csv(result.planning_csv, comment=None, skiprows=1)
    assert len(csv) == 4 * 12  # one row per route x type x month
    assert "payload_dry_design_day_kg" in csv.columns and "air_distance_km" in csv.columns
    assert result.seconds < 30


def test_not_possible_month_is_shown_and_counted(tmp_path):
    data = _data()
    rp = data.route_payload
    july = rp[(rp["route_id"] == "dunegate-farcliff-jet") & (rp["month"] == 7)]
    assert (~july["possible"]).all()
    summary = report.route_summary(data, ["dunegate-farcliff-jet"])
    assert summary["months not possible"].iloc[0] == 1
    m = report.airfield_restriction_matrix(data, ["saltmere", "dunegate"])
    assert m.loc["dunegate", 7] == 1.0  # no takeoff: all payload lost
    assert 0.0 <= np.nanmin(m.to_numpy()) and np.nanmax(m.to_numpy()) <= 1.0
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


def test_report_reads_a_run_from_the_store(tmp_path):
    data = _data()
    db = tmp_path / "store.duckdb"
    con = duckdb.connect(str(db))
    runs = pd.DataFrame({"run_id": [2, 3], "status": ["complete", "complete"],
                         "finished_at": pd.to_datetime(["2030-01-01", "2030-01-02"]),
                         "input_dir": ["/data/a", "/data/b"]})
    af = data.airfield_results.assign(run_id=3)
    rp = data.route_payload.assign(run_id=3)
    ac = data.aircraft.assign(input_sha256="abc")
    inputs = pd.DataFrame({"run_id": [3], "table_name": ["aircraft_types"], "sha256": ["abc"]})
    for name, frame in (("runs", runs), ("results_airfield", af), ("route_payload", rp),
                        ("input_aircraft_types", ac), ("run_inputs", inputs)):
        con.register("f", frame)
        con.execute(f"CREATE TABLE {name} AS SELECT * FROM f")
        con.unregister("f")
    con.close()
    loaded = report.load_report_data(db)
    assert loaded.run_id == 3 and len(loaded.route_payload) == len(rp)
    assert set(loaded.aircraft["aircraft_type_id"]) == {"twinjet-m", "prop-s"}
    result = report.write_report(db, tmp_path / "out")
    assert result.index.exists() and len(result.charts) == 8
    with pytest.raises(BadInput, match="run 9"):
        report.load_report_data(db, run_id=9)


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
    con.close()
    assert n_fields >= 30 and n_routes >= 1
    assert len(pngs) == n_fields + n_routes + 2  # + the two network views
    for p in pngs:
        _assert_real_image(p)
    page = (out / "index.html").read_text(encoding="utf-8")
    assert html_caution() in page
    csv = pd.read_csv(out / "payload_planning.csv", skiprows=1)
    assert len(csv) == n_rows * 12
    assert (out / "payload_planning.csv").read_text(encoding="utf-8").startswith(f"# {CAUTION}")
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
