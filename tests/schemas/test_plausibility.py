"""Feet typed where metres are asked for, inside the allowed ranges: warnings (issue 18).

The feet-to-metres factor 0.3048 is exact by definition (international foot, 1959); the
lapse rate 6.5 K/km is the ICAO standard atmosphere's (Doc 7488). Each test takes the demo
network, makes one mistake a user could make, and checks that ``check`` names the row, says
"feet" and gives the value converted from feet, while the unmodified demo draws no such
warning.
"""

from __future__ import annotations

import shutil

import pandas as pd
import pytest

from fieldlimits.schemas.validate import check_folder

FOOT_M = 0.3048


@pytest.fixture
def folder(tmp_path, demo_dir):
    out = tmp_path / "net"
    shutil.copytree(demo_dir, out)
    return out


@pytest.fixture(scope="module")
def demo_dir():
    from fieldlimits.demo_network import demo_path

    return demo_path()


def _edit(folder, table, edit):
    df = pd.read_csv(folder / f"{table}.csv", dtype=str, keep_default_na=False)
    edit(df)
    df.to_csv(folder / f"{table}.csv", index=False)
    return df


def _set(folder, table, where: dict, **values):
    """Set ``values`` (column → text) in the rows of ``table`` matching ``where``."""
    def edit(d):
        mask = pd.Series(True, index=d.index)
        for k, v in where.items():
            mask &= d[k] == v
        assert mask.any()
        for col, v in values.items():
            d.loc[mask, col] = v
    return _edit(folder, table, edit)


def _feet_warnings(folder):
    return [p for p in check_folder(folder, frames=False).problems
            if p.severity == "warning" and "in feet" in p.message]


def _row(df, **where) -> int:
    mask = pd.Series(True, index=df.index)
    for k, v in where.items():
        mask &= df[k] == v
    return int(df.index[mask][0]) + 1  # 1-based data row, as check reports it


def test_the_demo_draws_no_feet_warning(demo_dir):
    assert _feet_warnings(demo_dir) == []


def test_toda_in_feet_beside_tora_in_metres(folder):
    # kelpstone 02: TORA 1 500 m, TODA 1 560 m; TODA typed in feet: 1 560 / 0.3048 = 5 118
    df = _set(folder, "runways", {"airfield_id": "kelpstone", "runway_id": "02"}, toda_m="5118")
    found = _feet_warnings(folder)
    assert len(found) == 1
    w = found[0]
    assert (w.file, w.row, w.column) == ("runways.csv", _row(df, airfield_id="kelpstone", runway_id="02"), "toda_m")
    assert "3.41 × the TORA" in w.message and "(1 560 m)" in w.message
    assert all(p.severity != "error" for p in check_folder(folder, frames=False).problems)


def test_one_direction_of_a_strip_in_feet(folder):
    # sunscar 18/36 are 1 600 m each; 18 typed in feet: 5 249 / 5 446 / 5 249
    def edit(d):
        row = (d.airfield_id == "sunscar") & (d.runway_id == "18")
        d.loc[row, ["tora_m", "toda_m", "asda_m"]] = ["5249", "5446", "5249"]
    df = _edit(folder, "runways", edit)
    found = _feet_warnings(folder)
    assert [(w.row, w.column) for w in found] == [(_row(df, airfield_id="sunscar", runway_id="18"), "tora_m")]
    assert "reciprocal direction 36" in found[0].message and "(1 600 m)" in found[0].message


def test_a_long_runway_where_only_small_types_fly(folder):
    # every route from frostwick flown by the 1.1 t single; its runway, made 1 300 m, typed
    # in feet: 1 300 / 0.3048 = 4 265
    routes = pd.read_csv(folder / "routes.csv", dtype=str, keep_default_na=False)
    extra = routes.iloc[:1].copy()
    extra[["route_id", "origin_id", "destination_id", "aircraft_type_id"]] = [
        "frostwick-saltmere-single", "frostwick", "saltmere", "light-single-4"]
    routes = routes[routes.origin_id != "frostwick"]
    pd.concat([routes, extra]).to_csv(folder / "routes.csv", index=False)
    _set(folder, "runways", {"airfield_id": "frostwick"}, tora_m="1300", toda_m="1300", asda_m="1300")
    assert _feet_warnings(folder) == []  # 1 300 m: nothing to say
    _set(folder, "runways", {"airfield_id": "frostwick"}, tora_m="4265", toda_m="4265", asda_m="4265")
    found = _feet_warnings(folder)
    assert len(found) == 2 and all("only light-single-4 fly" in w.message for w in found)
    assert all("(1 300 m)" in w.message for w in found)


def test_an_elevation_in_feet_in_a_hot_climate(folder):
    # sunscar's hottest month (a hot-desert demo airfield): at 600 m it stays below 50 °C when
    # brought to sea level at 6.5 K/km; typed in feet, 1 969 "m" does not
    climate = pd.read_csv(folder / "climate_monthly.csv")
    hottest = float(climate.loc[climate.airfield_id == "sunscar", "mean_daily_max_c"].max())
    assert hottest + 0.0065 * 600 <= 50.0 < hottest + 0.0065 * 1969
    _set(folder, "airfields", {"airfield_id": "sunscar"}, elevation_m="600")
    assert _feet_warnings(folder) == []
    df = _set(folder, "airfields", {"airfield_id": "sunscar"}, elevation_m="1969")
    found = _feet_warnings(folder)
    assert [(w.file, w.row, w.column) for w in found] == [
        ("airfields.csv", _row(df, airfield_id="sunscar"), "elevation_m")]
    assert (f"{hottest:.1f} °C at 1,969 m would be {hottest + 0.0065 * 1969:.1f} °C at sea level"
            in found[0].message)
    assert "(600 m)" in found[0].message  # 1 969 ft × 0.3048


def test_a_misspelt_table_file_gets_a_suggestion(folder):
    (folder / "wind_rose.csv").rename(folder / "wind_roses.csv")
    (folder / "routes.csv").rename(folder / "route.csv")
    problems = check_folder(folder, frames=False).problems
    missing = [p for p in problems if p.file == "wind_rose.csv"]
    assert len(missing) == 1 and missing[0].severity == "error"
    assert "found wind_roses.csv: rename it to wind_rose.csv" in missing[0].message
    optional = [p for p in problems if p.file == "route.csv"]
    assert len(optional) == 1 and optional[0].severity == "warning"
    assert "rename it to routes.csv" in optional[0].message


def test_a_file_instead_of_the_folder_says_so(folder):
    problems = check_folder(folder / "runways.csv", frames=False).problems
    assert len(problems) == 1 and problems[0].severity == "error"
    assert "is a file, not a folder" in problems[0].message
