"""The demo network is designed so that the design-day limits vary in interesting ways.

Every limiting factor the solver can report on a calm dry design day shows up somewhere,
and some airfield / type pairs are possible in winter but not in the hottest months.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pandas as pd
import pytest

from fieldlimits.demo_network import demo_path
from fieldlimits.schemas.load import load_folder

wl = pytest.importorskip("fieldlimits.physics.weightlimit")
from fieldlimits.physics import atmosphere, friction, limits  # noqa: E402

SCREEN_DRY_M = 35 * 0.3048  # 35 ft screen, 14 CFR 25.113


@pytest.fixture(scope="module")
def design_day() -> pd.DataFrame:
    t = load_folder(demo_path())
    rw = t.runways.merge(t.airfields[["airfield_id", "elevation_m"]], on="airfield_id")
    rc = rw.merge(t.climate_monthly[["airfield_id", "month", "mean_daily_max_k", "qnh_pa"]],
                  on="airfield_id")
    ac = t.aircraft_types
    n_ac = len(ac)
    rc = rc.loc[rc.index.repeat(n_ac)].reset_index(drop=True)
    ai = np.tile(np.arange(n_ac), len(rc) // n_ac)
    aircraft = wl.Aircraft(**{f.name: ac[f.name].to_numpy()[ai]
                              for f in dataclasses.fields(wl.Aircraft)})
    surface = friction.surface_code(rc["surface"].to_numpy())
    dry = np.zeros(len(rc), dtype=int)
    site = wl.Site(
        tora_m=rc["tora_m"].to_numpy(), toda_m=rc["toda_m"].to_numpy(),
        asda_m=rc["asda_m"].to_numpy(), slope=rc["slope"].to_numpy(),
        mu_roll=friction.rolling_friction(surface, dry),
        mu_brake=friction.braking_friction(surface, dry),
        pressure_pa=atmosphere.station_pressure_pa(rc["elevation_m"].to_numpy(),
                                                   rc["qnh_pa"].to_numpy()),
        temperature_k=rc["mean_daily_max_k"].to_numpy(),
        headwind_mps=np.zeros(len(rc)), screen_height_m=np.full(len(rc), SCREEN_DRY_M))
    res = wl.solve_takeoff_weight(aircraft, site)
    rc["aircraft_type_id"] = ac["aircraft_type_id"].to_numpy()[ai]
    rc["factor"] = limits.name(res.limiting_factor)
    rc["tow_limit_kg"] = res.tow_limit_kg
    return rc


def test_every_reportable_factor_appears(design_day):
    expected = {r.factor for r in wl.REQUIREMENTS} | {"structural", "no_takeoff"}
    seen = set(design_day["factor"])
    assert expected <= seen, f"never limiting in the demo: {expected - seen}"


def test_mix_is_not_dominated_by_one_factor(design_day):
    share = design_day["factor"].value_counts(normalize=True)
    assert share.max() < 0.85
    assert share.get("structural", 0) > 0.15


def test_some_pairs_lose_the_hottest_months(design_day):
    best = design_day.groupby(["airfield_id", "aircraft_type_id", "month"])["tow_limit_kg"].max()
    possible = best.notna().groupby(level=[0, 1]).agg(["sum"])["sum"]
    assert ((possible > 0) & (possible < 12)).any()
