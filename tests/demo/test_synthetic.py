"""The synthetic network generator."""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pandas as pd
import pyarrow as pa
import pytest

from fieldlimits.demo_network.synthetic import (_check_specs, generate_network, rose_frequencies,
                                    speed_class_shares)
from fieldlimits.schemas.load import load_folder
from fieldlimits.schemas.validate import validate_folder


def test_same_seed_same_bytes_other_seed_other_tables(tmp_path):
    a = generate_network(60, 5, tmp_path / "a")
    b = generate_network(60, 5, tmp_path / "b")
    c = generate_network(60, 6, tmp_path / "c")
    for name in a:
        assert a[name].read_bytes() == b[name].read_bytes()
    assert a["runways"].read_bytes() != c["runways"].read_bytes()


def test_200_airfields_validate_cleanly_with_realistic_spreads(tmp_path):
    generate_network(200, 3, tmp_path)
    assert validate_folder(tmp_path) == []
    t = load_folder(tmp_path)
    assert len(t.airfields) == 200 and len(t.aircraft_types) == 8
    e = t.airfields["elevation_m"]
    assert e.median() < 300 and e.max() > 2000 and e.max() <= 4200
    rw = t.runways
    assert rw["tora_m"].between(800, 4000).all()
    assert len(rw) >= 200 * 1.5
    assert set(rw["surface"]) >= {"paved", "gravel", "grass"}
    cl = t.climate_monthly
    hot = cl.groupby("airfield_id")["mean_daily_max_k"].max() - 273.15
    assert hot.max() > 38 and hot.min() < 15
    assert len(t.routes) == 200
    assert (t.routes["origin_id"] != t.routes["destination_id"]).all()


def test_type_count_option(tmp_path):
    generate_network(20, 1, tmp_path / "few", n_types=3)
    generate_network(20, 1, tmp_path / "many", n_types=12)
    assert len(load_folder(tmp_path / "few").aircraft_types) == 3
    many = load_folder(tmp_path / "many").aircraft_types
    assert len(many) == 12 and many["aircraft_type_id"].is_unique


def test_command_line(tmp_path):
    out = tmp_path / "cli"
    res = subprocess.run([sys.executable, "-m", "fieldlimits.demo_network.synthetic", "--airfields", "30",
                          "--seed", "2", "--out", str(out), "--format", "parquet"],
                         capture_output=True, text=True, check=True)
    assert "30 airfields" in res.stdout
    assert validate_folder(out) == []
    assert pd.read_parquet(out / "airfields.parquet").shape[0] == 30
    assert np.isfinite(pd.read_parquet(out / "wind_rose.parquet")["frequency"]).all()


# --- valid output whatever the seed (issue 20) --------------------------------------------

def test_speed_class_shares_match_the_rayleigh_distribution():
    # Rayleigh (Weibull shape 2) survival S(v) = exp(-(v/c)^2) (textbook definition, common
    # practice); share of a class among winds >= 1.5 m/s is (S(lo) - S(hi)) / S(1.5), the top
    # class open-ended. With c = 5 m/s: lowest class 1 - exp(-(25 - 2.25)/25) = 0.59748.
    c = 5.0
    s = lambda v: np.exp(-(v / c) ** 2)
    expected = np.array([s(1.5) - s(5.0), s(5.0) - s(10.0), s(10.0)]) / s(1.5)
    np.testing.assert_allclose(speed_class_shares(c), expected, rtol=1e-12)
    np.testing.assert_allclose(speed_class_shares(c)[0], 0.59748, atol=5e-6)


def test_near_calm_wind_gives_finite_shares_in_the_lowest_class():
    # the case: a mean speed of 0.304 m/s (0.258 m/s in its calmest month) gave
    # 0/0 in the speed classes and blank frequencies; a mean speed of 0 is the limit
    scale = np.array([0.0, 1e-300, 1e-9, 0.01, 0.1, 0.22, 0.25, 0.3, 1.0, 1e6])
    shares = speed_class_shares(scale)
    assert np.isfinite(shares).all() and (shares >= 0).all()
    np.testing.assert_allclose(shares.sum(axis=-1), 1.0, rtol=0, atol=1e-12)
    # below 0.3 m/s the next class bound (5 m/s) is beyond 16 scales: all in the lowest class
    np.testing.assert_array_equal(shares[:8, 0], 1.0)


def test_rose_frequencies_sum_to_one_for_any_mean_speed():
    speed = np.array([0.0, 1e-12, 1e-3, 0.05, 0.3039 * 0.85, 0.3039, 0.5, 5.0, 25.0, 200.0])
    calm, freq = rose_frequencies(speed, prevailing_deg=np.linspace(0, 350, speed.size),
                                  kappa=np.linspace(0.3, 2.0, speed.size), calm_share=0.05)
    assert freq.shape == (speed.size, 16, 3)
    assert np.isfinite(calm).all() and np.isfinite(freq).all()
    assert (freq >= 0).all() and (calm > 0).all()
    # each share rounded to 5 decimals, the calm share takes the rest: the sum is 1 within
    # the rounding of the calm share (validation asks for 1 ± 0.01)
    np.testing.assert_allclose(calm + freq.sum(axis=(1, 2)), 1.0, rtol=0, atol=5e-6)
    np.testing.assert_allclose(calm, 0.05, atol=49 * 5e-6)
    # near calm: every non-calm wind in the lowest speed class
    assert (freq[:6, :, 1:] == 0).all()


@pytest.mark.parametrize("seed", range(5))
@pytest.mark.parametrize("n", [1, 7, 300])
def test_generated_networks_pass_validation(tmp_path, n, seed):
    written = generate_network(n, seed, tmp_path)
    assert validate_folder(tmp_path) == []
    # a route joins two different airfields: a single airfield has no routes table
    assert ("routes" in written) == (n >= 2)
    assert not (n == 1 and any(tmp_path.glob("routes.*")))


def test_a_single_airfield_removes_an_older_routes_table(tmp_path):
    generate_network(5, 0, tmp_path)
    assert (tmp_path / "routes.csv").exists()
    generate_network(1, 0, tmp_path, fmt="parquet")
    assert sorted(p.name for p in tmp_path.iterdir()) == [
        "aircraft_types.parquet", "airfields.parquet", "climate_monthly.parquet",
        "runways.parquet", "wind_rose.parquet"]
    assert validate_folder(tmp_path) == []


class _TailRng(np.random.Generator):
    """Draws pushed into the tails: each element at random the lowest value, a value far
    beyond anything a real seed gives (±40σ, 20 × the mean) or an ordinary draw."""

    def _side(self, size):
        return super().integers(0, 3, size)

    def _mix(self, low, high, ordinary):
        side = self._side(np.shape(ordinary))
        return np.where(side == 0, low, np.where(side == 1, high, ordinary))

    def uniform(self, low=0.0, high=1.0, size=None):
        return self._mix(low, np.nextafter(high, low), super().uniform(low, high, size))

    def random(self, size=None):
        return self._mix(0.0, np.nextafter(1.0, 0.0), super().random(size))

    def normal(self, loc=0.0, scale=1.0, size=None):
        return self._mix(loc - 40 * scale, loc + 40 * scale, super().normal(loc, scale, size))

    def lognormal(self, mean=0.0, sigma=1.0, size=None):
        return np.exp(self.normal(mean, sigma, size))

    def exponential(self, scale=1.0, size=None):
        return self._mix(0.0, 40 * scale, super().exponential(scale, size))

    def gamma(self, shape, scale=1.0, size=None):
        return self._mix(0.0, 20 * shape * scale, super().gamma(shape, scale, size))


def test_draws_in_the_tails_still_give_valid_tables(tmp_path):
    # what 100 000 airfields (or an unlucky seed) reach now and then, here in 60 airfields
    rng = _TailRng(np.random.PCG64(20))
    generate_network(60, rng, tmp_path)
    # valid tables; the tails pair the highest elevations with the hottest climates, which
    # schemas.plausibility rightly warns look like an elevation in feet (nothing else may show)
    problems = validate_folder(tmp_path)
    assert [p for p in problems if not (p.severity == "warning" and p.column == "elevation_m"
                                        and "in feet" in p.message)] == []
    t = load_folder(tmp_path)
    wind = pd.read_csv(tmp_path / "wind_rose.csv")
    windy = wind[wind["speed_low_mps"] >= 5.0].groupby(["airfield_id", "month"])["frequency"]
    assert (windy.sum() == 0).any()            # a calm site (mean speed 0) was drawn
    qnh = t.climate_monthly["qnh_pa"] / 100.0
    assert qnh.min() < 990.0 and qnh.max() > 1036.0   # clipped base ± the seasonal swing
    # the hottest site's annual mean stays at or below 39.5 °C (not read as °F)
    hot = t.climate_monthly.groupby("airfield_id")["mean_daily_max_k"].mean() - 273.15
    assert 39.0 < hot.max() <= 39.55


def test_many_aircraft_type_variants_stay_in_range(tmp_path):
    # 200 types = 25 scaled copies of each demo type: the scale stays within ±20 %
    generate_network(2, 0, tmp_path, n_types=200)
    assert validate_folder(tmp_path) == []
    types = load_folder(tmp_path).aircraft_types
    assert len(types) == 200 and types["aircraft_type_id"].is_unique
    ratio = types["mtow_kg"].to_numpy().reshape(25, 8) / types["mtow_kg"].to_numpy()[:8]
    assert ratio.min() >= 0.8 - 1e-3 and ratio.max() <= 1.2 + 1e-3


def test_a_generated_value_outside_its_limits_stops_before_writing():
    good = dict(airfield_id=np.array(["syn-1", "syn-2"]), name=np.array(["a", "b"]),
                latitude_deg=np.array([10.0, 20.0]), longitude_deg=np.array([0.0, 5.0]),
                elevation_m=np.array([0.0, 100.0]))
    _check_specs("airfields", good)
    for col, value, shown in (("elevation_m", np.nan, "nan"), ("longitude_deg", 180.5, "180.5"),
                              ("airfield_id", "", "''")):
        cols = {k: v.copy() for k, v in good.items()}
        cols[col] = cols[col].astype(object) if col == "airfield_id" else cols[col]
        cols[col][1] = value
        with pytest.raises(RuntimeError, match=rf"1 value\(s\) of {col} .*first: {shown}\)"):
            _check_specs("airfields", cols)
    wind = {"frequency": np.array([0.5, np.nan])}
    with pytest.raises(RuntimeError, match="frequency blank or outside 0 … 100"):
        _check_specs("wind_rose", {**wind, "airfield_id": pa.array(["a", "a"]),
                                   "month": np.array([1, 1]),
                                   "speed_low_mps": np.array([0.0, 1.5]),
                                   "speed_high_mps": np.array([1.5, 5.0])})


def test_generate_command_bad_options_and_one_airfield(tmp_path, capsys):
    from fieldlimits.pipeline.cli import main

    assert main(["generate", str(tmp_path / "neg"), "--airfields", "3", "--seed", "-1"]) == 2
    assert "--seed must be a whole number ≥ 0; got -1" in capsys.readouterr().err
    assert not (tmp_path / "neg").exists()
    assert main(["generate", str(tmp_path / "one"), "--airfields", "1", "--seed", "4"]) == 0
    assert "1 airfield to" in capsys.readouterr().out
    assert validate_folder(tmp_path / "one") == []


def test_runways_declare_landing_distances_some_blank(tmp_path):
    # lda_m: TORA, or TORA less a displaced threshold of 60 … 300 m, blank for about 15 % of
    # the directions (no landing check); drawn from a stream of its own
    generate_network(300, 11, tmp_path)
    rw = pd.read_csv(tmp_path / "runways.csv")
    lda, tora = rw["lda_m"].to_numpy(float), rw["tora_m"].to_numpy(float)
    given = np.isfinite(lda)
    assert 0.05 < 1 - given.mean() < 0.30
    assert np.all(lda[given] <= tora[given]) and np.all(lda[given] >= tora[given] - 300.0)
    assert np.any(lda[given] < tora[given])


def test_obstacles_for_a_share_of_runway_directions(tmp_path):
    from fieldlimits.schemas.departure import in_departure_area

    generate_network(300, 4, tmp_path / "a")
    assert validate_folder(tmp_path / "a") == []  # inside the area, under the path's end
    t = load_folder(tmp_path / "a")
    ob = t.obstacles
    per = ob.groupby(["airfield_id", "runway_id"]).size()
    share = len(per) / len(t.runways)
    assert 0.05 < share < 0.16                    # 10 % of the directions by default
    assert per.min() >= 1 and per.max() <= 10
    assert in_departure_area(ob["distance_from_toda_end_m"], ob["lateral_offset_m"]).all()
    assert (ob["distance_from_toda_end_m"] > 0).all() and (ob["height_m"] < 446.5).all()
    # a third of the directions (the benchmark's network); the other tables do not change
    generate_network(300, 4, tmp_path / "b", obstacle_share=1 / 3)
    for name in ("airfields", "runways", "climate_monthly", "wind_rose", "routes", "aircraft_types"):
        assert (tmp_path / "a" / f"{name}.csv").read_bytes() == (tmp_path / "b" / f"{name}.csv").read_bytes()
    share = load_folder(tmp_path / "b").obstacles.groupby(["airfield_id", "runway_id"]).ngroups / len(t.runways)
    assert 0.28 < share < 0.39
    # none: no obstacles table, and an older one is removed
    generate_network(300, 4, tmp_path / "b", obstacle_share=0.0)
    assert not any((tmp_path / "b").glob("obstacles.*"))
    with pytest.raises(ValueError, match="obstacle_share"):
        generate_network(3, 4, tmp_path / "c", obstacle_share=1.5)


def test_generate_command_obstacle_share(tmp_path, capsys):
    from fieldlimits.pipeline.cli import main

    assert main(["generate", str(tmp_path / "bad"), "--airfields", "3", "--obstacle-share", "40"]) == 2
    assert "--obstacle-share must be a share from 0 to 1; got 40" in capsys.readouterr().err
    assert main(["generate", str(tmp_path / "none"), "--airfields", "20", "--obstacle-share", "0"]) == 0
    assert not any((tmp_path / "none").glob("obstacles.*"))
    assert main(["generate", str(tmp_path / "all"), "--airfields", "20", "--obstacle-share", "1"]) == 0
    t = load_folder(tmp_path / "all")
    assert t.obstacles.groupby(["airfield_id", "runway_id"]).ngroups == len(t.runways)
