"""The bundled demo network: complete, clean, invented, and varied as the design asks."""

from __future__ import annotations

import re

import numpy as np
import pytest

from fieldlimits.demo_network import demo_path
from fieldlimits.schemas.load import load_folder
from fieldlimits.schemas.validate import validate_folder


@pytest.fixture(scope="module")
def demo():
    return load_folder(demo_path())


def test_demo_validates_with_no_problem_at_all():
    assert validate_folder(demo_path()) == []


def test_demo_path_is_inside_the_package_and_has_a_note():
    p = demo_path()
    assert (p / "airfields.csv").is_file()
    note = (p.parent / "NOTE.md").read_text(encoding="utf-8")
    assert "invented" in note.lower()


def test_demo_csv_files_match_their_builder(tmp_path):
    from fieldlimits.demo_network.build_demo import write

    write(tmp_path)
    for f in sorted(demo_path().glob("*.csv")):
        assert (tmp_path / f.name).read_bytes() == f.read_bytes(), (
            f"{f.name} differs from `python -m fieldlimits.demo_network.build_demo`")


def test_sizes(demo):
    assert len(demo.airfields) >= 30
    assert len(demo.runways) >= 50
    assert len(demo.aircraft_types) >= 5
    assert len(demo.routes) >= 30
    assert (demo.climate_monthly.groupby("airfield_id").size() == 12).all()
    assert demo.wind_rose.groupby("airfield_id")["month"].nunique().eq(12).all()


def test_identifiers_are_lowercase_slugs_not_codes(demo):
    slug = re.compile(r"^[a-z0-9]+(-[a-z0-9]+)*$")
    ids = (list(demo.airfields["airfield_id"]) + list(demo.aircraft_types["aircraft_type_id"])
           + list(demo.routes["route_id"]))
    assert all(slug.match(i) for i in ids)
    # never something that looks like a 3- or 4-letter location code
    assert not any(re.fullmatch(r"[a-z]{3,4}", i) for i in demo.airfields["airfield_id"])


def test_the_required_kinds_of_airfield(demo):
    af = demo.airfields.set_index("airfield_id")
    cl = demo.climate_monthly
    hottest = cl.groupby("airfield_id")["mean_daily_max_k"].max() - 273.15
    annual = cl.groupby("airfield_id")["mean_daily_max_k"].mean() - 273.15
    assert (af["elevation_m"] < 20).sum() >= 5                      # sea-level coast
    assert ((hottest > 42) & (af["elevation_m"] < 1200)).sum() >= 3  # hot desert
    assert (af["elevation_m"] > 2500).sum() >= 3                     # high plateau
    assert (af.loc[af["elevation_m"] > 4000]).shape[0] >= 1
    cold = annual[annual < 8].index
    assert (af.loc[cold, "latitude_deg"] > 50).sum() >= 5            # cold northern strips
    rw = demo.runways
    assert {"gravel", "grass", "dirt", "paved"} <= set(rw["surface"])
    assert ((rw["surface"] != "paved") & (rw["tora_m"] <= 1000)).sum() >= 4  # short strips
    assert (rw["slope"].abs() >= 0.02).any()                          # a sloping strip
    assert (rw["toda_m"] > rw["tora_m"]).any() and (rw["asda_m"] > rw["tora_m"]).any()
    # one-way strip: an airfield with a single direction
    assert (rw.groupby("airfield_id").size() == 1).any()


def test_aircraft_types_span_the_models(demo):
    from fieldlimits.physics.thrust import MODEL_CODES

    ac = demo.aircraft_types
    assert set(ac["thrust_model"]) == set(MODEL_CODES.values())
    assert ac["engine_count"].max() == 4 and ac["engine_count"].min() == 1
    assert ac["mtow_kg"].max() / ac["mtow_kg"].min() > 100
    long_range = ac.loc[ac["mtow_kg"].idxmax()]
    assert long_range["engine_count"] == 2 and long_range["thrust_model"] == MODEL_CODES["turbofan"]
    small_prop = ac[(ac["thrust_model"] == MODEL_CODES["propeller"]) & (ac["engine_count"] == 2)]
    assert small_prop["mtow_kg"].min() < 10000


def test_wet_day_shares_and_percentiles(demo):
    cl = demo.climate_monthly
    assert cl["wet_day_share"].between(0, 1).all()
    assert cl["wet_day_share"].max() > 0.4 and cl["wet_day_share"].min() < 0.05
    given = cl["p95_daily_max_k"].notna()
    assert 0 < given.sum() < len(cl)  # explicit percentiles at some airfields only
    np.testing.assert_array_less(cl.loc[given, "p50_daily_max_k"],
                                 cl.loc[given, "p95_daily_max_k"])


def test_routes_reach_long_range_distances(demo):
    from pyproj import Geod

    af = demo.airfields.set_index("airfield_id")
    r = demo.routes
    o, d = af.loc[r["origin_id"]], af.loc[r["destination_id"]]
    _, _, dist = Geod(ellps="WGS84").inv(o["longitude_deg"].to_numpy(),
                                         o["latitude_deg"].to_numpy(),
                                         d["longitude_deg"].to_numpy(),
                                         d["latitude_deg"].to_numpy())
    assert dist.max() > 5_000_000 and dist.min() < 300_000


def test_obstacles_at_highland_and_coastal_airfields(demo):
    ob = demo.obstacles
    af = demo.airfields.set_index("airfield_id")
    elevation = af.loc[ob["airfield_id"], "elevation_m"].to_numpy()
    assert (elevation > 1000).sum() >= 3 and (elevation < 50).sum() >= 3
    # every obstacle on a runway direction of its airfield, past the end of TODA
    directions = set(zip(demo.runways["airfield_id"], demo.runways["runway_id"]))
    assert set(zip(ob["airfield_id"], ob["runway_id"])) <= directions
    assert (ob["distance_from_toda_end_m"] > 0).all()
    assert ob["airfield_id"].nunique() >= 6
