"""The takeoff event sequence (physics.takeoffevents): recognition, stop actions, rotation,
line-up.

Delays are common flight-test practice (FAA AC 25-7: 1 s from the failure to the first action,
1 s between the stop actions, rotation at about 3 °/s); the regulation is 14 CFR 25.107 and
25.109. Each test checks that a delay lengthens what it should, by the distance one computes
by hand at that speed, and that zero times give the idealised model to the bit.
"""

import dataclasses

import numpy as np
import pytest
from numpy.testing import assert_allclose

from fieldlimits.physics import climb
from fieldlimits.physics import constants as c
from fieldlimits.physics import enginefailure as ef
from fieldlimits.physics import takeoffevents as te
from fieldlimits.physics import weightlimit as wl
from tests.physics import fleet

EVENTS = dict(engine_failure_recognition_s=1.0, stop_action_interval_s=1.0, rotation_pitch_deg=8.0,
              rotation_rate_deg_per_s=3.0)


def _with(a, **times):
    n = np.shape(a.mtow_kg)
    return dataclasses.replace(a, **{k: np.full(n, float(v)) for k, v in times.items()})


# --- the hand formulas ------------------------------------------------------------------

def test_timed_piece_is_the_constant_acceleration_formula():
    # s = v t + a t²/2 at ground speed v − w (any kinematics text)
    v, s = te.timed_piece(70.0, 2.0, 1.0, headwind_mps=5.0)
    assert_allclose([v, s], [72.0, 65.0 + 1.0])
    # braking that stops within the piece ends at rest: s = g²/(2|a|)
    v, s = te.timed_piece(10.0, -4.0, 5.0)
    assert_allclose([v, s], [0.0, 12.5])


def test_recognition_and_rotation_speeds():
    # 14 CFR 25.107(a)(2): V1 = V_EF + speed gained in the recognition time
    assert_allclose(te.recognition_v1_mps(60.0, 1.5, 1.0), 61.5)
    assert te.recognition_v1_mps(60.0, 1.5, 0.0) == 60.0
    # 8° at 3 °/s: 8/3 s of rotation; V_LOF = VR + a t unless the schedule is higher
    assert_allclose(te.rotation_time_s(8.0, 3.0), 8.0 / 3.0)
    assert_allclose(te.rotation_liftoff_speed_mps(70.0, 73.0, 2.0, 8.0 / 3.0), 70.0 + 16.0 / 3.0)
    assert te.rotation_liftoff_speed_mps(70.0, 76.0, 2.0, 8.0 / 3.0) == 76.0
    assert te.rotation_liftoff_speed_mps(70.0, 73.0, 2.0, 0.0) == 73.0


def test_stop_actions_are_two_hand_pieces():
    v, s = te.stop_actions(np.array([70.0]), interval_s=np.array([1.0]), accel_brakes_mps2=-1.0,
                           accel_idle_mps2=-3.0, headwind_mps=0.0)
    # first second at −1 m/s² (69.5 m, to 69 m/s), then the mean of −1 and −3 (−2 m/s²):
    # 69 − 1 = 68 m, to 67 m/s
    assert_allclose(v, 67.0)
    assert_allclose(s, 69.5 + 68.0)
    v0, s0 = te.stop_actions(np.array([70.0]), interval_s=np.array([0.0]), accel_brakes_mps2=-1.0,
                             accel_idle_mps2=-3.0)
    assert v0[0] == 70.0 and s0[0] == 0.0


def _timed_piece_numpy(v0, a, t, w):
    """The hand formula over whole arrays (the numpy path the compiled kernels replace)."""
    g0 = v0 - w
    v1 = v0 + a * t
    s = g0 * t + 0.5 * a * t * t
    stops = v1 < w
    with np.errstate(divide="ignore", invalid="ignore"):
        s = np.where(stops, g0 * g0 / (2.0 * np.abs(a)), s)
    return np.where(stops, w, v1), s


def test_compiled_stop_actions_equal_the_hand_formulas_written_with_numpy():
    # timed_piece, stop_actions and stop_actions_slope are compiled loops over the cases;
    # the formulas of their docstrings written with numpy over whole arrays give the same
    # numbers to the bit: stops inside a piece, zero and NaN intervals, tail- and headwinds.
    rng = np.random.default_rng(5)
    n = 5000
    v1 = rng.uniform(-5.0, 90.0, n)
    w = rng.uniform(-8.0, 10.0, n)
    a_1 = rng.uniform(-12.0, 3.0, n)
    a_idle = rng.uniform(-14.0, 1.0, n)
    dt = rng.choice([0.0, 0.5, 1.0, 3.0, 8.0, np.nan], n)
    d1, d_idle = rng.uniform(-0.05, 0.05, n), rng.uniform(-0.05, 0.05, n)
    v, s = te.timed_piece(v1, a_1, dt, w)
    v_ref, s_ref = _timed_piece_numpy(v1, a_1, dt, w)
    assert np.array_equal(v, v_ref, equal_nan=True) and np.array_equal(s, s_ref, equal_nan=True)
    assert np.any(v_ref == w) and np.any(v_ref > w)  # both kinds of piece present
    va, sa = _timed_piece_numpy(v1, a_1, dt, w)
    vb, sb = _timed_piece_numpy(va, 0.5 * (a_1 + a_idle), dt, w)
    some = dt > 0.0
    v, s = te.stop_actions(v1, interval_s=dt, accel_brakes_mps2=a_1, accel_idle_mps2=a_idle, headwind_mps=w)
    assert np.array_equal(v, np.where(some, vb, v1), equal_nan=True)
    assert np.array_equal(s, np.where(some, sa + sb, 0.0), equal_nan=True)
    d_mean = 0.5 * (d1 + d_idle)
    speed, dist = te.stop_actions_slope(interval_s=dt, accel_brakes_mps2=a_1, accel_brakes_slope=d1,
                                        accel_idle_slope=d_idle)
    assert np.array_equal(speed, np.where(some, 1.0 + (d1 + d_mean) * dt, 1.0))
    assert np.array_equal(dist, np.where(some, dt + 0.5 * d1 * dt * dt + (1.0 + d1 * dt) * dt
                                         + 0.5 * d_mean * dt * dt, 0.0))
    # scalars and broadcasting keep the shapes numpy gives
    v, s = te.timed_piece(70.0, np.array([2.0, -3.0]), 1.0)
    assert v.shape == (2,) and np.shape(te.timed_piece(70.0, 2.0, 1.0)[0]) == ()


def test_ground_acceleration_matches_the_ground_run_coefficients():
    from fieldlimits.physics import groundrun

    co = groundrun.acceleration_coefficients(mass_kg=50_000.0, wing_area_m2=110.0, density_kg_m3=1.2, cd=0.08,
                                             cl=0.4, mu=0.4, thrust0_n=120e3, thrust1_n_per_mps=-150.0,
                                             thrust2_n_per_mps2=0.3, slope=0.01)
    v = 60.0
    thrust = 120e3 - 150.0 * v + 0.3 * v * v
    a = te.ground_acceleration_mps2(thrust, mass_kg=50_000.0, airspeed_mps=v, density_kg_m3=1.2,
                                    wing_area_m2=110.0, cd=0.08, cl=0.4, mu=0.4, slope=0.01)
    assert_allclose(a, co[0] + co[1] * v + co[2] * v * v, rtol=1e-12)


# --- in the model -------------------------------------------------------------------------

def test_zero_times_give_the_idealised_model_to_the_bit():
    a, s = fleet.random_cases(400, seed=11)
    zero = _with(a, engine_failure_recognition_s=0, stop_action_interval_s=0, rotation_pitch_deg=0,
                 lineup_allowance_m=0)
    for rules in ("transport", "all_engines"):
        r0, r1 = wl.solve_takeoff_weight(a, s, rules=rules), wl.solve_takeoff_weight(zero, s, rules=rules)
        for f in dataclasses.fields(r0):
            assert np.array_equal(getattr(r0, f.name), getattr(r1, f.name), equal_nan=True), (rules, f.name)
    b0, v0 = ef.balanced_field_length_m(a, s, a.mtow_kg)
    b1, v1 = ef.balanced_field_length_m(zero, s, a.mtow_kg)
    assert np.array_equal(b0, b1, equal_nan=True) and np.array_equal(v0, v1, equal_nan=True)


def _stop_limited(a):
    # a long TODA and a short ASDA: the best V1 is the lowest allowed, V_EF = V_MCG
    return fleet.site(np.size(a.mtow_kg), tora_m=9000.0, toda_m=9000.0, asda_m=1500.0)


def test_recognition_interval_sets_v1_and_lengthens_the_engine_failure_stop():
    a = fleet.aircraft(["turbofan"])
    s = _stop_limited(a)
    mass = np.array([60_000.0])
    base = ef.engine_failure_takeoff(a, s, mass)
    r = ef.engine_failure_takeoff(_with(a, engine_failure_recognition_s=1.0), s, mass)
    model = ef.engine_failure_model(a, s, mass)
    vmcg = model.v1_min_mps
    assert_allclose(r.v_ef_mps, vmcg)  # V_EF ≥ V_MCG, at its floor on this runway
    a_oei = model.one_out.acceleration(vmcg)
    assert_allclose(r.v1_mps, vmcg + a_oei * 1.0, rtol=1e-12)  # 25.107(a)(2), 1 s common practice
    # the go case is unchanged (same V_EF); the engine-failure stop now also covers the
    # second on N − 1 engines, by hand (V_EF + a/2) · 1 s, and stops from the higher V1
    assert_allclose(r.takeoff_distance_m, base.takeoff_distance_m, rtol=1e-12)
    extra = r.accelerate_stop_engine_failure_m - base.accelerate_stop_engine_failure_m
    by_hand = (vmcg + 0.5 * a_oei) * 1.0 + 2.0 * (r.v1_mps - vmcg) \
        + model.stop_one_out.distance_m(r.v1_mps, 0.0) - model.stop_one_out.distance_m(vmcg, 0.0)
    assert_allclose(extra, by_hand, rtol=1e-9)


def test_stop_actions_lengthen_the_all_engines_stop_by_the_hand_pieces():
    a = fleet.aircraft(["turbofan", "quadratic", "propeller"])
    s = _stop_limited(a)
    mass = np.array([60_000.0, 34_000.0, 19_000.0])
    base = ef.engine_failure_takeoff(a, s, mass)
    r = ef.engine_failure_takeoff(_with(a, stop_action_interval_s=1.0), s, mass)
    v1 = base.v1_mps
    assert_allclose(r.v1_mps, v1)  # V1 = V_MCG on both
    # by hand, from the forces at V1 (Raymer Eq. 17.100): 1 s braking against takeoff thrust
    # without lift dumpers, 1 s with the thrust half way to idle, then full braking
    su = ef.engine_failure_setup(a, s)
    acc = lambda law, v: te.ground_acceleration_mps2(  # noqa: E731
        law.thrust_n(v), mass_kg=mass, airspeed_mps=v, density_kg_m3=su.density_kg_m3, wing_area_m2=su.wing_area_m2,
        cd=su.cd_roll, cl=su.cl_roll, mu=su.mu_brake, slope=su.slope)
    v_a, s_a = te.timed_piece(v1, acc(su.law_all, v1), 1.0)
    v_b, s_b = te.timed_piece(v_a, 0.5 * (acc(su.law_all, v1) + acc(su.law_idle_all, v1)), 1.0)
    model = ef.engine_failure_model(a, s, mass)
    by_hand = s_a + s_b + model.stop_all.distance_m(v_b, 0.0) - model.stop_all.distance_m(v1, 0.0)
    extra = r.accelerate_stop_all_engines_m - base.accelerate_stop_all_engines_m
    assert_allclose(extra, by_hand, rtol=1e-9)
    # the two seconds are flown at a little under V1: between 1 and 2 s worth of V1
    assert np.all((extra > 1.0 * v1) & (extra < 2.0 * v1))


def test_rotation_raises_vlof_and_lengthens_the_all_engines_run():
    a = fleet.aircraft(["turbofan"])
    s = fleet.site(1, tora_m=4000.0, toda_m=4000.0)
    cases = wl.prepare_cases(a, s)
    slow = _with(a, rotation_pitch_deg=12.0, rotation_rate_deg_per_s=2.0)  # 6 s of rotation
    r0 = wl.all_engines(cases, np.array([70_000.0]), {})
    r1 = wl.all_engines(wl.prepare_cases(slow, s), np.array([70_000.0]), {})
    a_vr = cases.thrust_all_engines.thrust_n(r0.vr_mps)  # a(VR) by hand from the forces
    q_s = 0.5 * cases.density_kg_m3 * r0.vr_mps ** 2 * 122.0
    accel = (a_vr - q_s * (cases.cd_ground_roll - 0.03 * 0.30)) / 70_000.0 - c.G0 * 0.03
    assert_allclose(r1.v_lof_mps, r0.vr_mps + accel * 6.0, rtol=1e-9)
    assert r1.v_lof_mps > r0.v_lof_mps and r1.ground_run_m > r0.ground_run_m


def test_lineup_allowance_is_the_shorter_runway():
    a, s = fleet.random_cases(60, seed=2)
    lined = _with(a, lineup_allowance_m=45.0)
    shorter = dataclasses.replace(s, tora_m=s.tora_m - 45.0, toda_m=s.toda_m - 45.0, asda_m=s.asda_m - 45.0)
    r1, r2 = wl.solve_takeoff_weight(lined, s), wl.solve_takeoff_weight(a, shorter)
    assert np.array_equal(r1.tow_limit_kg, r2.tow_limit_kg, equal_nan=True)
    assert np.array_equal(r1.limiting_factor, r2.limiting_factor)


# the share of cases whose limit falls: rotation binds only where VR + a t_rot passes the
# scheduled VLOF, and lowers distance-limited cases only (measured shares 0.08 … 0.9)
@pytest.mark.parametrize("name, value, share", [("engine_failure_recognition_s", 1.0, 0.2),
                                                ("stop_action_interval_s", 1.0, 0.2),
                                                ("rotation_pitch_deg", 8.0, 0.05),
                                                ("lineup_allowance_m", 60.0, 0.2)])
def test_each_time_lowers_or_keeps_every_limit(name, value, share):
    a, s = fleet.random_cases(300, seed=7)
    r0 = wl.solve_takeoff_weight(a, s)
    r1 = wl.solve_takeoff_weight(_with(a, **{name: value}), s)
    both = np.isfinite(r0.tow_limit_kg) & np.isfinite(r1.tow_limit_kg)
    assert np.all(r1.tow_limit_kg[both] <= r0.tow_limit_kg[both] + 1.0)  # 1 kg: the search tolerance
    assert np.mean(r1.tow_limit_kg[both] < r0.tow_limit_kg[both] - 1.0) > share
    assert not np.any(np.isnan(r0.tow_limit_kg) & np.isfinite(r1.tow_limit_kg))


def _torenbeek_bfl_m(a, mass, rho, climb_gradient):
    """Torenbeek's statistical balanced field length as given by Raymer, §17.8, Eq. 17.113
    (from memory; SI form: 655 ft = 199.6 m, screen 35 ft)."""
    n = a.engine_count
    g_min = np.select([n == 2, n == 3], [0.024, 0.027], 0.030)
    cl_climb = a.cl_max_takeoff / 1.44  # at 1.2 V_S
    u = 0.01 * a.cl_max_takeoff + 0.02  # takeoff flaps
    t_av = 0.75 * n * a.static_thrust_per_engine_n * (5.0 + a.bypass_ratio) / (4.0 + a.bypass_ratio)
    wing_loading = mass * c.G0 / a.wing_area_m2
    return (0.863 / (1.0 + 2.3 * (climb_gradient - g_min)) * (wing_loading / (rho * c.G0 * cl_climb) + 10.668)
            * (1.0 / (t_av / (mass * c.G0) - u) + 2.7) + 199.6 / np.sqrt(rho / c.RHO0_KG_M3))


def test_balanced_field_length_against_torenbeek_over_thrust_to_weight():
    # twins, tris and quads of the invented 72 t turbofan at thrust-to-weight 0.28 … 0.40
    tw = np.tile([0.28, 0.32, 0.36, 0.40], 3)
    n_eng = np.repeat([2.0, 3.0, 4.0], 4)
    a = fleet.aircraft(["turbofan"] * tw.size)
    a = dataclasses.replace(a, engine_count=n_eng, static_thrust_per_engine_n=tw * 72_000.0 * c.G0 / n_eng)
    s = fleet.site(tw.size)
    mass = a.mtow_kg
    grad = climb.takeoff_climb_gradient(a, mass_kg=mass, pressure_pa=s.pressure_pa, temperature_k=s.temperature_k)
    ref = _torenbeek_bfl_m(a, mass, c.RHO0_KG_M3, grad)
    ideal = ef.balanced_field_length_m(a, s, mass)[0] / ref
    real = ef.balanced_field_length_m(_with(a, **EVENTS), s, mass)[0] / ref
    # the timed sequence lengthens every balanced field length (about 2-6 %); a statistical
    # formula is good to about ±15 % (Raymer's own caution), and this invented type brakes at
    # the dry-concrete 0.4 of Raymer Table 17.1, the upper half of real braking: the band
    # below is what we measured and hold, not a claim of agreement to a few per cent
    assert np.all(real > ideal * 1.01)
    assert np.all((real > 0.80) & (real < 1.05)), np.round(real, 3)
