"""Airborne segment and all-engines takeoff (Anderson 1999 Example 6.6; Raymer §17.8)."""

import numpy as np
import pytest

from fieldlimits.physics import aerodynamics as aero
from fieldlimits.physics import airborne
from fieldlimits.physics import constants as c
from fieldlimits.physics import fieldlength, thrust

VS_FT = 186.4  # Anderson (1999) Example 6.6: V_stall = 186.4 ft/s


def test_anderson_transition_radius_and_airborne_distance():
    # Anderson (1999) Example 6.6 / Eq. 6.95: n = 1.19, V = 1.15 V_stall → R = 6.96 V_stall²/g
    # = 7 510 ft; obstacle (35 ft) cleared inside the arc: theta_OB = 5.534°, s_a = 724 ft.
    # Tolerance 1 %: Anderson uses g = 32.2 ft/s² and rounds R.
    v_tr = 1.15 * VS_FT * c.FT_M
    r = airborne.transition_radius_m(v_tr, 1.19)
    assert r / c.FT_M == pytest.approx(7510.0, rel=0.01)
    s = airborne.airborne_distance_m(v_transition_mps=v_tr, climb_sine=np.sin(np.radians(12.0)),
                                     screen_height_m=c.SCREEN_HEIGHT_35FT_M, load_factor=1.19)
    assert s / c.FT_M == pytest.approx(724.0, rel=0.01)
    theta = np.degrees(np.arccos(1.0 - c.SCREEN_HEIGHT_35FT_M / r))
    assert theta == pytest.approx(5.534, rel=0.01)


def test_arc_and_climb_forms_meet_and_distance_falls_with_gradient():
    # Raymer §17.8, Eqs. 17.109–17.112: continuity where the screen is just reached at the
    # end of the arc (h = h_TR); distance falls as the climb gradient rises.
    v = 70.0
    r = airborne.transition_radius_m(v)
    sg = np.sin(np.radians(4.0))
    h_tr = r * (1 - np.cos(np.radians(4.0)))
    s = airborne.airborne_distance_m(v_transition_mps=v, climb_sine=sg, screen_height_m=np.array([h_tr * (1 - 1e-9),
                                                                                                  h_tr * (1 + 1e-9)]))
    assert s[0] == pytest.approx(s[1], rel=1e-6)
    grads = airborne.airborne_distance_m(v_transition_mps=v, climb_sine=np.array([0.02, 0.05, 0.1]))
    assert np.all(np.diff(grads) < 0)
    # 50 ft > 35 ft > 15 ft screen heights give decreasing distances.
    hs = airborne.airborne_distance_m(v_transition_mps=v, climb_sine=0.05, screen_height_m=np.array(
        [c.SCREEN_HEIGHT_50FT_M, c.SCREEN_HEIGHT_35FT_M, c.SCREEN_HEIGHT_15FT_M]))
    assert np.all(np.diff(hs) < 0)


def test_cannot_climb_is_nan():
    s = airborne.airborne_distance_m(v_transition_mps=70.0, climb_sine=np.array([-0.01, 0.0, 0.03]))
    assert np.isnan(s[:2]).all() and np.isfinite(s[2])


def test_wind_on_airborne_ground_distance():
    assert airborne.airborne_ground_distance_m(700.0, 70.0, np.array([7.0, -7.0])).tolist() == pytest.approx(
        [630.0, 770.0])


def test_anderson_example_total_takeoff_distance():
    # Anderson (1999) Example 6.6 end to end: ground roll 2 857 ft (with N = 3 s) + airborne
    # 724 ft = 3 581 ft. Inputs as published (US units converted): W 73 000 lb, W/S 76.84,
    # rho 0.002377, T/W = 0.341, mu 0.04, C_L 0.1, polar C_D0 0.015 + 0.0177, K = 0.02 +
    # 1/(pi 0.9 5.92), phi 0.588; V_LO = 1.1 V_stall, transition at 1.15 V_stall with n 1.19.
    # C_Lmax = 2 (W/S)/(rho V_stall²) [computed]. Within 1 %.
    w_n = 73000.0 * c.LBF_N
    area = 73000.0 / 76.84 * c.FT_M**2
    rho = 0.002377 * c.SLUG_FT3_KG_M3
    k = 0.02 + aero.induced_drag_factor(0.9, 5.92)
    cd_ground = 0.0327 + aero.ground_effect_factor(5.6, 75.0) * k * 0.01
    law = thrust.ThrustLaw(np.array([0.341 * w_n]), np.zeros(1), np.zeros(1), np.zeros(1), np.array([False]))
    res = fieldlength.all_engines_takeoff(
        thrust_law=law, mass_kg=np.array([w_n / c.G0]), wing_area_m2=area, density_kg_m3=rho, cd_ground=cd_ground,
        cl_ground=0.1, mu=0.04, cl_max=2 * 76.84 / (0.002377 * VS_FT**2), vr_over_vs=1.05, vlof_over_vs=1.1,
        v2_over_vs=1.2, cd0_airborne=0.0327, induced_factor=k, load_factor=1.19, rotation_time_s=3.0)
    assert res.v_lof_mps[0] / c.FT_M == pytest.approx(205.1, rel=1e-3)
    assert res.ground_run_m[0] / c.FT_M == pytest.approx(2857.0, rel=0.01)
    assert res.airborne_m[0] / c.FT_M == pytest.approx(724.0, rel=0.01)
    assert res.takeoff_distance_m[0] / c.FT_M == pytest.approx(3581.0, rel=0.01)
    assert res.reason[0] == 0


def test_takeoff_run_with_and_without_clearway():
    # 14 CFR 25.113(b)-(c): with a clearway the run ends midway between lift-off and 35 ft.
    out = fieldlength.takeoff_run_m(1500.0, 400.0, np.array([0.0, 150.0]))
    assert out.tolist() == [1900.0, 1700.0]


def _airborne_with_numpy(v_tr, sin_g, h, load_factor):
    # The transition arc and climb (Raymer Eqs. 17.107-17.112) written with numpy over whole
    # arrays: the path the compiled pass replaced, kept here as its reference.
    r = v_tr * v_tr / (c.G0 * (load_factor - 1.0))
    ok = (sin_g > 0.0) & (sin_g < 1.0)
    sg = np.where(ok, sin_g, 0.5)
    cg = np.sqrt(1.0 - sg * sg)
    h_tr = r * (1.0 - cg)
    s_arc = np.sqrt(np.maximum(h * (2.0 * r - h), 0.0))
    s_climb = r * sg + (h - h_tr) * cg / sg
    return np.where(ok, np.where(h <= h_tr, s_arc, s_climb), np.nan)


def test_compiled_climb_out_equals_the_formulas_written_with_numpy():
    # airborne_distance_m and climb_out are compiled passes per case; the same formulas
    # written with numpy (C_L = W/(qS), D = qS (C_D0 + K C_L²), sin gamma = (T(V_TR) − D)/W,
    # the arc or the climb, ground distance × (V − w)/V) give the same numbers to the bit:
    # polynomial and propeller thrust, screens inside the arc and beyond it, and cases that
    # cannot climb (NaN in the same places).
    from tests.physics import fleet

    n = 5000
    a, site = fleet.random_cases(n, seed=12)
    rng = np.random.default_rng(12)
    law = thrust.thrust_law_for_aircraft(a, site.pressure_pa, site.temperature_k,
                                         engines_operating=rng.choice([1.0, 2.0], n), throttle=1.0)
    rho = site.pressure_pa / (c.R_AIR * site.temperature_k)
    m = rng.uniform(0.5, 1.1, n) * a.mtow_kg
    v_tr = rng.uniform(40.0, 110.0, n)
    cd0, k = rng.uniform(0.02, 0.09, n), rng.uniform(0.03, 0.06, n)
    h = rng.choice([4.572, 10.668, 15.24, 60.0], n)
    w = rng.uniform(-8.0, 12.0, n)
    sin_g, air, ground = airborne.climb_out(law, mass_kg=m, density_kg_m3=rho, wing_area_m2=a.wing_area_m2,
                                            v_transition_mps=v_tr, cd0=cd0, induced_factor=k, screen_height_m=h,
                                            headwind_mps=w)
    weight = m * c.G0
    q_s = 0.5 * rho * v_tr * v_tr * a.wing_area_m2
    cl = weight / q_s
    ref_sin = (law.thrust_n(v_tr) - q_s * aero.drag_coefficient(cd0, k, cl)) / weight
    ref_air = _airborne_with_numpy(v_tr, ref_sin, h, airborne.TRANSITION_LOAD_FACTOR)
    assert np.any(np.isnan(ref_air)) and np.any(law.is_propeller & np.isfinite(ref_air))
    r = airborne.transition_radius_m(v_tr)
    h_tr = r * (1.0 - np.sqrt(1.0 - np.clip(ref_sin, 0.0, 1.0) ** 2))
    assert np.any(np.isfinite(ref_air) & (h <= h_tr)) and np.any(np.isfinite(ref_air) & (h > h_tr))
    np.testing.assert_array_equal(sin_g, ref_sin)
    np.testing.assert_array_equal(air, ref_air)
    np.testing.assert_array_equal(ground, ref_air * (v_tr - w) / v_tr)
    np.testing.assert_array_equal(airborne.airborne_distance_m(v_transition_mps=v_tr, climb_sine=ref_sin,
                                                               screen_height_m=h), ref_air)
    # a scalar stays a float
    assert isinstance(airborne.airborne_distance_m(v_transition_mps=70.0, climb_sine=0.05), float)


def test_climb_out_load_factor_per_case_or_one_for_all():
    # climb_out takes one load factor for every case without spreading it over them, or one
    # per case: both give the numpy formulas' arc and climb (Raymer Eqs. 17.107-17.112,
    # R = V²/(g (n − 1))) at each case's own load factor, to the bit.
    n = 400
    rng = np.random.default_rng(5)
    law = thrust.ThrustLaw(np.full(n, 180e3), np.zeros(n), np.zeros(n), np.zeros(n), np.zeros(n, dtype=bool))
    m, rho, area = rng.uniform(40e3, 70e3, n), np.full(n, 1.225), np.full(n, 120.0)
    v_tr = rng.uniform(60.0, 80.0, n)
    cd0, k, h, w = np.full(n, 0.03), np.full(n, 0.04), np.full(n, 10.668), np.zeros(n)
    lf = rng.choice([1.1, 1.15, 1.2], n)
    kw = dict(mass_kg=m, density_kg_m3=rho, wing_area_m2=area, v_transition_mps=v_tr, cd0=cd0, induced_factor=k,
              screen_height_m=h, headwind_mps=w)
    sin_g, air, _ = airborne.climb_out(law, load_factor=lf, **kw)
    np.testing.assert_array_equal(air, _airborne_with_numpy(v_tr, sin_g, h, lf))
    for one in (1.15, np.array([1.15]), np.full(n, 1.15)):
        np.testing.assert_array_equal(airborne.climb_out(law, load_factor=one, **kw)[1],
                                      _airborne_with_numpy(v_tr, sin_g, h, 1.15))
    # each case's own load factor is read: a larger one (smaller radius) gives a shorter distance
    same = airborne.climb_out(law, load_factor=1.15, **kw)[1]
    assert np.all(np.isfinite(air)) and np.all((air < same) == (lf > 1.15)) and np.all((air > same) == (lf < 1.15))
