"""Takeoff flight path over obstacles (physics.flightpath) and the obstacle limit."""

import dataclasses

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import optimize

from fieldlimits.physics import climb
from fieldlimits.physics import constants as c
from fieldlimits.physics import enginefailure as ef
from fieldlimits.physics import flightpath as fp
from fieldlimits.physics import limits
from fieldlimits.physics import weightlimit as wl
from tests.physics import fleet

OBSTACLE = limits.code("obstacle_clearance")


def test_net_gradient_reduction_per_engine_count():
    # 14 CFR 25.115(b): 0.8 % (two engines), 0.9 % (three), 1.0 % (four)
    assert_allclose(fp.net_gradient_reduction([2, 3, 4]), [0.008, 0.009, 0.010])
    assert fp.net_gradient_reduction(1) == 0.0


def test_steady_gradient_is_thrust_minus_drag_over_weight():
    # sin γ = (T − D)/W (Raymer §17.3): W = 500 kN, T = 60 kN, D = q S (CD0 + K CL²)
    rho, v, area, mass = 1.225, 80.0, 120.0, 500e3 / c.G0
    q_s = 0.5 * rho * v * v * area
    cl = 500e3 / q_s
    drag = q_s * (0.05 + 0.04 * cl * cl)
    sin_g = (60e3 - drag) / 500e3
    assert_allclose(fp.steady_gradient(60e3, mass, rho, v, area, 0.05, 0.04), np.tan(np.arcsin(sin_g)), rtol=1e-12)


def test_level_acceleration_distance_by_kinematics():
    # V² = V0² + 2 a s: from 80 to 100 m/s at 0.5 m/s² takes (100² − 80²)/1 = 3 600 m
    assert_allclose(fp.level_acceleration_distance_m(80.0, 100.0, 0.5), 3600.0)
    assert fp.level_acceleration_distance_m(80.0, 100.0, -0.1) == np.inf
    assert fp.level_acceleration_distance_m(90.0, 90.0, 0.5) == 0.0


def test_path_breakpoints_by_hand():
    # calm air; 8 s of gear-down climb at 2 %, second segment 3 % to 400 ft, level acceleration
    # from 80 to 100 m/s at 0.4 m/s² (gross), final segment 2.5 % to 1 500 ft; net: each
    # gradient 0.8 % lower and the acceleration g·0.008 lower (25.115)
    kw = dict(screen_m=10.668, v2_mps=80.0, v_final_mps=100.0, headwind_mps=0.0, gradient_gear_down=0.02,
              gradient_second=0.03, accel_mps2=0.4, gradient_final=0.025, gear_time_s=8.0,
              acceleration_height_m=121.92)
    gross = fp.takeoff_flight_path(**kw)
    h1 = 10.668 + 0.02 * 640.0
    x2 = 640.0 + (121.92 - h1) / 0.03
    x3 = x2 + (100.0**2 - 80.0**2) / (2 * 0.4)
    x4 = x3 + (457.2 - 121.92) / 0.025
    assert_allclose(gross.x_m, [0.0, 640.0, x2, x3, x4], rtol=1e-12)
    assert_allclose(gross.h_m, [10.668, h1, 121.92, 121.92, 457.2], rtol=1e-12)
    net = fp.takeoff_flight_path(**kw, reduction=0.008)
    h1n = 10.668 + 0.012 * 640.0
    x2n = 640.0 + (121.92 - h1n) / 0.022
    x3n = x2n + (100.0**2 - 80.0**2) / (2 * (0.4 - c.G0 * 0.008))
    assert_allclose(net.x_m[:4], [0.0, 640.0, x2n, x3n], rtol=1e-12)
    # a headwind shortens ground distances by (V − w)/V
    windy = fp.takeoff_flight_path(**{**kw, "headwind_mps": 8.0})
    assert_allclose(windy.x_m[1], 640.0 * 72.0 / 80.0, rtol=1e-12)
    # height between breakpoints is linear; past the end there is no path
    assert_allclose(gross.height_at(np.array([320.0])), [10.668 + 0.02 * 320.0])
    assert np.isnan(gross.height_at(np.array([x4 + 1.0]))[0])


def _one_obstacle_case(distance_m, height_m):
    a = fleet.aircraft(["turbofan"])
    a = dataclasses.replace(a, gear_retraction_s=np.array([0.0]))  # no first segment
    s = fleet.site(1, tora_m=3500.0, toda_m=3500.0, asda_m=3500.0)
    return a, s, fp.Obstacles(np.array([[distance_m]]), np.array([[height_m]]))


def test_one_obstacle_in_the_second_segment_against_an_independent_brentq():
    # The obstacle lies in the second segment (below 400 ft): the net path there is
    # 35 ft + (TODA + d − TOD(m)) · (γ2(m) − 0.008); the limit is where that equals h + 35 ft.
    # TOD from the engine-failure takeoff at the runway's best V1 and γ2 from the second-segment
    # climb, each tested on its own (tests/physics/test_enginefailure.py, test_climb.py).
    d, h = 1500.0, 70.0
    a, s, obstacles = _one_obstacle_case(d, h)
    r = wl.solve_takeoff_weight(a, s, obstacles=obstacles)
    assert r.limiting_factor[0] == OBSTACLE

    def clearance(m):
        mass = np.array([m])
        tod = ef.engine_failure_takeoff(a, s, mass, iterations=12).takeoff_distance_m[0]
        gamma = climb.takeoff_climb_gradient(a, mass_kg=mass, pressure_pa=s.pressure_pa,
                                             temperature_k=s.temperature_k)[0]
        return c.SCREEN_HEIGHT_35FT_M + (3500.0 + d - tod) * (gamma - 0.008) - (h + fp.OBSTACLE_CLEARANCE_M)

    root = optimize.brentq(clearance, 45_000.0, 72_000.0, xtol=0.01)
    # 1 kg: the search tolerance (the net height here stays below 400 ft, second segment only)
    assert abs(r.tow_limit_kg[0] - root) <= 1.0
    assert abs(r.obstacle_clearance_m[0]) < 0.05 and r.governing_obstacle[0] == 0


def test_an_obstacle_far_below_the_path_changes_nothing_to_the_bit():
    a, s = fleet.random_cases(200, seed=4)
    base = wl.solve_takeoff_weight(a, s)
    far = fp.Obstacles(np.full((200, 2), 20_000.0), np.array([[0.0, -50.0]] * 200))
    r = wl.solve_takeoff_weight(a, s, obstacles=far)
    for f in ("tow_limit_kg", "limiting_factor", "takeoff_distance_m", "accelerate_stop_m", "v1_mps"):
        assert np.array_equal(getattr(r, f), getattr(base, f), equal_nan=True), f
    none = fp.Obstacles(np.full((200, 1), np.nan), np.full((200, 1), np.nan))
    r2 = wl.solve_takeoff_weight(a, s, obstacles=none)
    for f in dataclasses.fields(base):
        assert np.array_equal(getattr(r2, f.name), getattr(base, f.name), equal_nan=True), f.name


@pytest.mark.parametrize("height", [95.0, 105.0])
def test_an_obstacle_in_reach_lowers_the_limit_and_higher_lowers_it_more(height):
    a, s, _ = _one_obstacle_case(0.0, 0.0)
    base = wl.solve_takeoff_weight(a, s).tow_limit_kg[0]
    lower = wl.solve_takeoff_weight(a, s, obstacles=fp.Obstacles(np.array([[2500.0]]), np.array([[height]])))
    higher = wl.solve_takeoff_weight(a, s, obstacles=fp.Obstacles(np.array([[2500.0]]),
                                                                   np.array([[height + 10.0]])))
    assert lower.tow_limit_kg[0] < base
    assert higher.tow_limit_kg[0] < lower.tow_limit_kg[0]
    assert lower.limiting_factor[0] == OBSTACLE


def test_raising_the_acceleration_height_helps_past_the_level_segment():
    # An obstacle just past where the net path levels off at 400 ft: with the acceleration
    # height allowed up to 1 000 ft the path keeps climbing over it and the limit is higher.
    a, s, _ = _one_obstacle_case(0.0, 0.0)
    obstacles = fp.Obstacles(np.array([[9000.0]]), np.array([[140.0]]))
    fixed = dataclasses.replace(a, max_acceleration_height_m=np.array([400.0 * c.FT_M]))
    r_fixed = wl.solve_takeoff_weight(fixed, s, obstacles=obstacles)
    r_free = wl.solve_takeoff_weight(a, s, obstacles=obstacles)
    assert r_free.tow_limit_kg[0] > r_fixed.tow_limit_kg[0]
    assert r_free.acceleration_height_m[0] > 400.0 * c.FT_M
    assert r_fixed.acceleration_height_m[0] == pytest.approx(400.0 * c.FT_M)


def test_wet_cases_with_obstacles_are_never_better_than_dry():
    a = fleet.aircraft(["turbofan", "quadratic"])
    dry = fleet.site(2, tora_m=2600.0, toda_m=2600.0, asda_m=2600.0)
    wet = dataclasses.replace(dry, mu_brake=np.full(2, 0.2), screen_height_m=np.full(2, c.SCREEN_HEIGHT_15FT_M),
                              mu_roll_dry=dry.mu_roll, mu_brake_dry=dry.mu_brake)
    obstacles = fp.Obstacles(np.array([[2000.0], [2000.0]]), np.array([[45.0], [45.0]]))
    r_dry = wl.solve_takeoff_weight(a, dry, obstacles=obstacles)
    r_wet = wl.solve_takeoff_weight(a, wet, obstacles=obstacles)
    assert np.all(r_wet.tow_limit_kg <= r_dry.tow_limit_kg + 1e-9)


def test_height_along_the_path_is_numpys_linear_interpolation():
    # Between its breakpoints the path is linear: numpy.interp on the five breakpoints is an
    # independent evaluation (rtol 1e-12: rounding only). Behind the screen the height falls
    # back at the first segment's gradient (at least BEHIND_SCREEN_GRADIENT); past the end and
    # at a NaN distance there is no height.
    rng = np.random.default_rng(3)
    n, k = 400, 12
    v2 = rng.uniform(40.0, 90.0, (n, 1))
    path = fp.takeoff_flight_path(
        screen_m=10.668, v2_mps=v2, v_final_mps=v2 + rng.uniform(5.0, 30.0, (n, 1)),
        headwind_mps=rng.uniform(-5.0, 10.0, (n, 1)), gradient_gear_down=rng.uniform(0.005, 0.04, (n, 1)),
        gradient_second=rng.uniform(0.01, 0.06, (n, 1)), accel_mps2=rng.uniform(0.1, 0.8, (n, 1)),
        gradient_final=rng.uniform(0.01, 0.05, (n, 1)), gear_time_s=rng.uniform(2.0, 8.0, (n, 1)),
        acceleration_height_m=np.array([121.92, 200.0, 304.8]), reduction=0.008)  # (n, 3, 5)
    xs, hs = path.x_m, path.h_m
    assert np.all(np.isfinite(xs)) and np.all(np.diff(xs, axis=-1) > 0)
    x = rng.uniform(0.0, 1.0, (n, 1, k)) * xs[..., -1:].max(axis=1, keepdims=True)
    h = path.height_at(x)
    for i in range(0, n, 37):
        for j in range(3):
            inside = x[i, 0] <= xs[i, j, -1]
            assert_allclose(h[i, j, inside], np.interp(x[i, 0, inside], xs[i, j], hs[i, j]), rtol=1e-12)
            assert np.all(np.isnan(h[i, j, ~inside]))
    behind = path.height_at(np.full((n, 1, 1), -100.0))[:, :, 0]
    first = (hs[..., 1] - hs[..., 0]) / (xs[..., 1] - xs[..., 0])
    assert_allclose(behind, hs[..., 0] - 100.0 * np.fmax(first, fp.BEHIND_SCREEN_GRADIENT), rtol=1e-12)
    assert np.all(np.isnan(path.height_at(np.full((n, 1, 1), np.nan))))


def _obstacle_fleet(n, seed, **site_over):
    """Random cases on 2 000-3 500 m runways with 1-6 obstacles each, 300-9 000 m past TODA."""
    rng = np.random.default_rng(seed)
    a = fleet.aircraft(rng.choice(fleet.KINDS, size=n))
    tora = rng.uniform(2000.0, 3500.0, n)
    s = fleet.site(n, tora_m=tora, toda_m=tora + rng.uniform(0.0, 200.0, n), asda_m=tora,
                   temperature_k=rng.uniform(270.0, 315.0, n), headwind_mps=rng.uniform(-3.0, 8.0, n), **site_over)
    k = 6
    d = np.sort(rng.uniform(300.0, 9000.0, (n, k)), axis=1)
    h = d * rng.uniform(0.005, 0.035, (n, k))
    d[rng.random((n, k)) < 0.4] = np.nan  # fewer obstacles on some directions
    h[np.isnan(d)] = np.nan
    return a, s, fp.Obstacles(d, h)


def _least_margin_converged(a, s, obstacles, mass):
    """Least margin of every transport requirement and the obstacles, V1 converged from cold."""
    cases = wl.prepare_cases(a, s, vmcg_floor=True)
    cases._cache["obstacles"] = obstacles
    cases._cache["engine_failure_final"] = True
    m, _ = wl.requirement_margins(cases, mass, wl.REQUIREMENTS + [wl.OBSTACLE_REQUIREMENT])
    return m.min(axis=0)


def test_obstacle_limits_are_the_root_of_the_converged_margins():
    # An independent bisection (60 halvings in mass, every requirement and the obstacles,
    # V1 converged from a cold start at each step) on the obstacle-limited cases: the solver's
    # limit is within its 1 kg tolerance of that root (plus 0.1 kg for the V1 iterations of
    # the search, which are not converged).
    a, s, obstacles = _obstacle_fleet(240, seed=11)
    r = wl.solve_takeoff_weight(a, s, obstacles=obstacles)
    limited = np.flatnonzero(r.limiting_factor == OBSTACLE)
    assert limited.size >= 40  # the fleet is built so that many cases are obstacle limited
    sub = lambda obj: wl._gather(obj, limited, 240)  # noqa: E731
    a1, s1, o1 = sub(a), sub(s), obstacles.take_cases(limited)
    lo, hi = r.tow_limit_kg[limited] - 30.0, r.tow_limit_kg[limited] + 30.0
    assert np.all(_least_margin_converged(a1, s1, o1, lo) >= 0.0)
    assert np.all(_least_margin_converged(a1, s1, o1, hi) < 0.0)
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        ok = _least_margin_converged(a1, s1, o1, mid) >= 0.0
        lo, hi = np.where(ok, mid, lo), np.where(ok, hi, mid)
    assert np.max(np.abs(r.tow_limit_kg[limited] - lo)) <= 1.1


def test_wet_obstacle_limit_is_the_lower_of_wet_and_dry():
    # Wet never better than dry (the wet case given its dry friction keeps the lower limit):
    # the combined solve equals the lower of the wet case solved alone and the same runway
    # dry, each to its 1 kg tolerance (both within 1 kg of their roots: 2 kg apart at most).
    a, dry, obstacles = _obstacle_fleet(160, seed=5)
    wet = dataclasses.replace(dry, mu_brake=np.full(160, 0.2), screen_height_m=np.full(160, c.SCREEN_HEIGHT_15FT_M))
    both = dataclasses.replace(wet, mu_roll_dry=dry.mu_roll, mu_brake_dry=dry.mu_brake)
    r = wl.solve_takeoff_weight(a, both, obstacles=obstacles)
    r_wet = wl.solve_takeoff_weight(a, wet, obstacles=obstacles)
    r_dry = wl.solve_takeoff_weight(a, dry, obstacles=obstacles)
    assert np.sum(r_wet.limiting_factor == OBSTACLE) >= 20 and np.sum(r_dry.limiting_factor == OBSTACLE) >= 20
    lower = np.fmin(r_wet.tow_limit_kg, r_dry.tow_limit_kg)
    assert np.array_equal(np.isnan(r.tow_limit_kg), np.isnan(r_wet.tow_limit_kg) | np.isnan(r_dry.tow_limit_kg))
    assert np.nanmax(np.abs(r.tow_limit_kg - lower)) <= 2.0


def test_obstacle_margin_is_the_best_over_every_acceleration_height():
    # The requirement tries the higher acceleration heights only where they can change the
    # answer; a direct evaluation of every height's net path (takeoff_flight_path and
    # obstacle_margins per height, least over the obstacles, best over the heights) gives the
    # same margin, and the same height used wherever some height clears.
    a, s, obstacles = _obstacle_fleet(300, seed=8)
    a = dataclasses.replace(a, max_acceleration_height_m=np.full(300, 1500.0 * c.FT_M))
    mass = np.asarray(a.oew_kg) + np.random.default_rng(2).uniform(0.3, 1.0, 300) * (a.mtow_kg - a.oew_kg)
    for final in (False, True):
        cases = wl.prepare_cases(a, s, vmcg_floor=True)
        cases._cache["obstacles"] = obstacles
        if final:
            cases._cache["engine_failure_final"] = True
        memo = {}
        got = fp.weight_limit_flight_path(cases, mass, memo)
        ef_r = memo["engine_failure"]
        law = climb.climb_thrust_law(a, s.pressure_pa, s.temperature_k)
        inp = fp.path_inputs(a, mass_kg=mass, density_kg_m3=cases.density_kg_m3, v2_mps=ef_r.speeds.v2_mps,
                             thrust_fn=law.thrust_n)
        x = (s.toda_m - ef_r.takeoff_distance_m)[:, None] + obstacles.distance_m
        heights = fp.acceleration_heights_m(a.acceleration_height_m, a.max_acceleration_height_m)
        per_height = []
        for j in range(heights.shape[1]):
            path = fp.takeoff_flight_path(
                screen_m=s.screen_height_m, v2_mps=inp.v2_mps, v_final_mps=inp.v_final_mps,
                headwind_mps=s.headwind_mps, gradient_gear_down=inp.gradient_gear_down,
                gradient_second=inp.gradient_second, accel_mps2=inp.accel_mps2, gradient_final=inp.gradient_final,
                gear_time_s=a.gear_retraction_s, acceleration_height_m=heights[:, j],
                reduction=fp.net_gradient_reduction(a.engine_count))
            per_height.append(fp.obstacle_margins(path, x, obstacles.height_m).min(axis=1))
        per_height = np.stack(per_height, axis=1)
        best = per_height.max(axis=1)
        clears = per_height >= 0.0
        some = clears.any(axis=1)
        assert 0 < some.sum() < 300 and np.any(np.argmax(clears, axis=1)[some] > 0)
        assert np.array_equal(got["margin"] >= 0.0, some)
        lowest = np.take_along_axis(heights, np.argmax(clears, axis=1)[:, None], axis=1)[:, 0]
        assert_allclose(got["height_m"][some], lowest[some], rtol=0, atol=0)
        if not final:  # the closing evaluation needs only the sign where the default clears
            assert_allclose(got["margin"], best, rtol=1e-12, atol=1e-12)
