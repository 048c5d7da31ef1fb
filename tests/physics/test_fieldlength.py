"""All-engines takeoff distance properties for every thrust model (fleet of invented types)."""

import numpy as np
import pytest

from fieldlimits.physics import constants as c
from fieldlimits.physics import fieldlength
from fieldlimits.physics import weightlimit as wl
from tests.physics import fleet


def _tod(kind, mass_frac=0.8, **site):
    n = max([np.size(v) for v in site.values()] + [np.size(mass_frac)])
    a = fleet.aircraft([kind] * n)
    cases = wl.prepare_cases(a, fleet.site(n, **site))
    mass = a.oew_kg + np.asarray(mass_frac) * (a.mtow_kg - a.oew_kg)
    return wl.all_engines(cases, mass, {})


@pytest.mark.parametrize("kind", fleet.KINDS)
def test_takeoff_distance_properties(kind):
    # Rises with mass, temperature, elevation (lower pressure), uphill slope and tailwind;
    # falls with headwind (Raymer §17.8; common practice).
    assert np.all(np.diff(_tod(kind, mass_frac=np.array([0.2, 0.5, 0.8, 1.0])).takeoff_distance_m) > 0)
    assert np.all(np.diff(_tod(kind, temperature_k=np.array([260.0, 280.0, 300.0, 315.0])).takeoff_distance_m) > 0)
    assert np.all(np.diff(_tod(kind, pressure_pa=np.array([101325.0, 95000.0, 85000.0])).takeoff_distance_m) > 0)
    assert np.all(np.diff(_tod(kind, slope=np.array([-0.02, 0.0, 0.02])).takeoff_distance_m) > 0)
    assert np.all(np.diff(_tod(kind, headwind_mps=np.array([-5.0, 0.0, 5.0, 10.0])).takeoff_distance_m) < 0)


@pytest.mark.parametrize("kind", fleet.KINDS)
def test_mass_squared_rule_of_thumb(kind):
    # References file §9 [derived; common practice]: ground run ∝ about m² at fixed thrust,
    # +10 % mass → about +21 %. Speed-varying thrust makes it somewhat more; band 15–32 %.
    r = _tod(kind, mass_frac=np.array([0.5, 0.5]))
    a = fleet.aircraft([kind])
    m0 = a.oew_kg[0] + 0.5 * (a.mtow_kg[0] - a.oew_kg[0])
    cases = wl.prepare_cases(fleet.aircraft([kind] * 2), fleet.site(2))
    rr = wl.all_engines(cases, np.array([m0, 1.1 * m0]), {})
    ratio = rr.ground_run_m[1] / rr.ground_run_m[0]
    assert 1.15 < ratio < 1.32
    assert r.reason.tolist() == [0, 0]


def test_speeds_and_reason_codes():
    r = _tod("turbofan", headwind_mps=np.array([0.0]))
    assert r.vr_mps[0] < r.v_lof_mps[0] < r.v2_mps[0]
    assert r.v_lof_mps[0] / r.v_stall_mps[0] == pytest.approx(1.10)
    # No thrust: cannot accelerate → NaN and reason "no_acceleration".
    a = fleet.aircraft(["turbofan"])
    a = wl.Aircraft(**{**vars(a), "static_thrust_per_engine_n": np.array([1000.0])})
    cases = wl.prepare_cases(a, fleet.site(1))
    out = wl.all_engines(cases, a.mtow_kg, {})
    assert np.isnan(out.takeoff_distance_m[0])
    assert fieldlength.REASONS[out.reason[0]] == "no_acceleration"


def test_wet_screen_height_shortens_the_airborne_part():
    r = _tod("quadratic", screen_height_m=np.array([c.SCREEN_HEIGHT_35FT_M, c.SCREEN_HEIGHT_15FT_M]))
    assert r.airborne_m[1] < r.airborne_m[0]
    assert r.ground_run_m[1] == r.ground_run_m[0]
