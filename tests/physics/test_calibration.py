"""physics.calibration: the model value of a reference point and the fit of coefficients to points.

Outside checks: the field length is the greater of 1.15 × the all-engines takeoff distance
and the balanced field length where V1 lies inside [V_MCG, VR] (14 CFR 25.109, 25.113;
Raymer, Aircraft Design, §17.8); at the climb-limited mass of a twin the gradient is 2.4 %
(14 CFR 25.121(b)). The fit tests are round trips: points made by the model from known
coefficients (invented types of tests/physics/fleet.py).
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from fieldlimits.physics import calibration as cal
from fieldlimits.physics import climb, enginefailure, limits
from fieldlimits.physics import weightlimit as wl
from tests.physics import fleet

# the coefficients a calibration fits by default (pipeline.calibration.FIT_COLUMNS)
NAMES = ("cl_max_takeoff", "cl_ground_roll", "cd0_clean", "cd0_gear", "cd0_takeoff_flaps", "oswald_efficiency",
         "vr_over_vs", "v2_over_vs", "engine_out_drag_cd", "braking_cl", "braking_cd_increment",
         "idle_thrust_fraction")
EVENTS = dict(engine_failure_recognition_s=1.0, stop_action_interval_s=1.0, rotation_pitch_deg=8.0,
              rotation_rate_deg_per_s=3.0)


def one_type(kind, **over):
    """A fleet type as scalars, with the default takeoff event sequence of aircraft_types."""
    a = fleet.aircraft([kind])
    values = {f.name: float(np.ravel(getattr(a, f.name))[0]) for f in dataclasses.fields(a)}
    return wl.Aircraft(**{**values, **EVENTS, **over})


def points(n, *, seed=0, mtow=72000.0, climb_points=4, wet_every=5, altitudes=(0.0, 1000.0, 2000.0),
           offsets=(0.0, 15.0, 25.0), shares=(0.8, 0.9, 1.0)):
    """n reference points (published = 1 for now) spread over altitude, temperature and mass."""
    rng = np.random.default_rng(seed)
    alt = rng.choice(altitudes, n)
    oat = 288.15 - 0.0065 * alt + rng.choice(offsets, n)
    kind = np.where(np.arange(n) < n - climb_points, "field_length", "climb_limited_mass")
    cond = np.where((np.arange(n) % wet_every == wet_every - 1) & (kind == "field_length"), "wet", "dry")
    return cal.reference_points(kind=kind, mass_kg=mtow * rng.choice(shares, n), pressure_altitude_m=alt,
                                temperature_k=oat, reported_headwind_mps=0.0, slope=0.0, surface="paved",
                                condition=cond, published=np.ones(n))


def published_by(aircraft, pts):
    values, _ = cal.model_values(aircraft, pts)
    assert np.all(np.isfinite(values)), "every invented point must have a model value"
    return dataclasses.replace(pts, published=values)


def coefficients(truth, names, *, scale=0.15, seed=3, prior_share=0.2):
    """Coefficients starting off the truth by up to ±scale (relative), inside their limits."""
    rng = np.random.default_rng(seed)
    out = []
    for name in names:
        t = getattr(truth, name)
        lower = dict(cl_max_takeoff=1.0, oswald_efficiency=0.5, vr_over_vs=1.0, v2_over_vs=truth.vlof_over_vs,
                     cd0_clean=0.01, braking_cl=-0.5).get(name, 0.0)
        upper = dict(cl_max_takeoff=3.5, oswald_efficiency=1.0, vr_over_vs=truth.vlof_over_vs, v2_over_vs=1.6,
                     cl_ground_roll=0.9, cd0_clean=0.1, cd0_gear=0.05, cd0_takeoff_flaps=0.08,
                     engine_out_drag_cd=0.05, braking_cl=1.5, braking_cd_increment=0.1,
                     idle_thrust_fraction=0.2)[name]
        sd = prior_share * abs(t) + 0.005
        start = float(np.clip(t * (1.0 + scale * rng.uniform(-1.0, 1.0)), lower + 0.1 * sd, upper - 0.1 * sd))
        out.append(cal.Coefficient(name, start, sd, lower, upper))
    return out


def started(truth, coefs):
    return dataclasses.replace(truth, **{c.name: c.start for c in coefs})


# --- the model value of a point ----------------------------------------------------------------

def test_the_module_follows_the_docstring_rules():
    from tests.physics import test_docstrings

    test_docstrings.test_numpydoc_sections_and_units("calibration")


@pytest.mark.parametrize("kind", fleet.KINDS)
def test_field_length_is_the_shortest_runway_the_weight_solve_accepts(kind):
    """A runway of the field length gives back the mass as its limit; 0.2 % shorter does not."""
    a = one_type(kind)
    # the propeller twin of the fleet cannot lift off near MTOW at all: lighter masses for it
    shares = (0.6, 0.65, 0.7) if kind == "propeller" else (0.8, 0.9, 1.0)
    pts = points(12, mtow=a.mtow_kg, climb_points=0, altitudes=(0.0, 1000.0), offsets=(0.0, 10.0), shares=shares)
    length, factor = cal.model_values(a, pts)
    ok = np.isfinite(length)
    assert ok.sum() >= 10
    p = pts.take(np.flatnonzero(ok))
    mass, L = p.mass_kg, length[ok]

    def limit(runway):
        site = wl.Site(tora_m=runway, toda_m=runway, asda_m=runway, slope=p.slope, mu_roll=p.mu_roll,
                       mu_brake=p.mu_brake, pressure_pa=p.pressure_pa, temperature_k=p.temperature_k,
                       headwind_mps=p.headwind_mps, screen_height_m=p.screen_height_m, mu_roll_dry=p.mu_roll_dry,
                       mu_brake_dry=p.mu_brake_dry)
        return wl.solve_takeoff_weight(a, site, tol_kg=0.01, requirements=cal.distance_requirements())

    at = limit(L)
    # the search stops within its 0.01 kg bracket; its V1 is the fully converged one while the
    # margins the field length comes from use the search's V1 (a few 1e-5 of the length)
    np.testing.assert_allclose(at.tow_limit_kg, mass, rtol=1e-4)
    assert np.all(limit(0.998 * L).tow_limit_kg < mass)
    assert set(limits.name(factor[ok])) <= set(cal.DISTANCE_FACTORS)


def test_field_length_is_the_greater_of_115_percent_all_engines_and_the_balanced_field():
    """14 CFR 25.113(a) and 25.109 on a runway without clearway or stopway (Raymer §17.8)."""
    a = one_type("turbofan")
    pts = points(9, mtow=a.mtow_kg, climb_points=0, wet_every=100, altitudes=(0.0, 1500.0))
    length, _ = cal.model_values(a, pts)
    site = wl.Site(tora_m=0.0, toda_m=0.0, asda_m=0.0, slope=pts.slope, mu_roll=pts.mu_roll, mu_brake=pts.mu_brake,
                   pressure_pa=pts.pressure_pa, temperature_k=pts.temperature_k, headwind_mps=pts.headwind_mps,
                   screen_height_m=pts.screen_height_m)
    bfl, v1 = enginefailure.balanced_field_length_m(a, site, pts.mass_kg)
    cases = wl.prepare_cases(a, site, vmcg_floor=True)
    tod = wl.all_engines(cases, pts.mass_kg, {}).takeoff_distance_m
    expected = np.maximum(1.15 * tod, bfl)
    speeds = enginefailure.scheduled_speeds_mps(a, mass_kg=pts.mass_kg, density_kg_m3=cases.density_kg_m3)
    free = (v1 > speeds.vmcg_mps + 0.5) & (v1 < speeds.vr_mps - 0.5)
    assert free.any() and (1.15 * tod < bfl).any()  # some balanced with V1 free, and not all
    # the balanced field length is max(TOD, ASD) at V1 held to [V_MCG, VR] too; the two V1
    # searches converge differently (the weight solve's margins use its search V1)
    np.testing.assert_allclose(length, expected, rtol=2e-4)


def test_lineup_allowance_adds_to_the_field_length():
    a = one_type("turbofan")
    pts = points(6, mtow=a.mtow_kg, climb_points=0)
    base, _ = cal.model_values(a, pts)
    more, _ = cal.model_values(dataclasses.replace(a, lineup_allowance_m=45.0), pts)
    np.testing.assert_allclose(more - base, 45.0, atol=1e-6)


def test_wet_field_length_is_never_shorter_than_dry():
    """14 CFR 25.113(b)/25.109(b): the wet distances are the greater of the dry and the wet ones."""
    a = one_type("turbofan")
    dry = points(8, mtow=a.mtow_kg, climb_points=0, wet_every=100)
    wet = cal.reference_points(kind=["field_length"] * 8, mass_kg=dry.mass_kg, pressure_altitude_m=0.0,
                               temperature_k=dry.temperature_k, reported_headwind_mps=0.0, slope=0.0,
                               surface="paved", condition="wet", published=np.ones(8))
    dry = dataclasses.replace(dry, pressure_pa=wet.pressure_pa)
    d, _ = cal.model_values(a, dry)
    w, _ = cal.model_values(a, wet)
    assert np.all(w >= d - 1e-9)


def test_headwind_is_factored_and_shortens_the_field_length():
    """14 CFR 25.105(d)(1): 50 % of a headwind, 150 % of a tailwind."""
    pts = cal.reference_points(kind=["field_length"] * 3, mass_kg=70000.0, pressure_altitude_m=0.0,
                               temperature_k=288.15, reported_headwind_mps=[10.0, 0.0, -4.0], slope=0.0,
                               surface="paved", condition="dry", published=np.ones(3))
    np.testing.assert_allclose(pts.headwind_mps, [5.0, 0.0, -6.0])
    length, _ = cal.model_values(one_type("turbofan"), pts)
    assert length[0] < length[1] < length[2]


def test_climb_limited_mass_meets_the_twin_gradient_exactly():
    """14 CFR 25.121(b): 2.4 % gross gradient for a twin at the climb-limited mass."""
    a = one_type("turbofan")
    pts = cal.reference_points(kind=["climb_limited_mass"] * 3, mass_kg=np.nan, pressure_altitude_m=[0.0, 1500.0, 2500.0],
                               temperature_k=[318.15, 313.15, 303.15], reported_headwind_mps=0.0, slope=0.0,
                               surface="paved", condition="dry", published=np.ones(3))
    mass, factor = cal.model_values(a, pts)
    assert np.all(np.isfinite(mass)) and np.all(limits.name(factor) == "climb_gradient")
    gradient = climb.takeoff_climb_gradient(a, mass_kg=mass, pressure_pa=pts.pressure_pa,
                                            temperature_k=pts.temperature_k)
    np.testing.assert_allclose(gradient, 0.024, atol=1e-9)


def test_unknown_kind_is_refused():
    with pytest.raises(ValueError, match="unknown kind"):
        cal.reference_points(kind=["takeoff"], mass_kg=1.0, pressure_altitude_m=0.0, temperature_k=288.15,
                             reported_headwind_mps=0.0, slope=0.0, surface="paved", condition="dry",
                             published=1.0)


def test_a_mass_no_runway_accepts_has_no_value():
    a = one_type("propeller")
    pts = cal.reference_points(kind=["field_length"] * 2, mass_kg=[21000.0, 21000.0],
                               pressure_altitude_m=[0.0, 2500.0], temperature_k=[288.15, 318.15],
                               reported_headwind_mps=0.0, slope=0.0, surface="paved", condition="dry",
                               published=np.ones(2))
    length, factor = cal.model_values(a, pts)
    assert np.isfinite(length[0]) and np.isnan(length[1])
    assert limits.name(factor[1]) == "no_takeoff"


# --- the fit ----------------------------------------------------------------------------------

@pytest.fixture(scope="module")
def round_trip():
    truth = one_type("turbofan")
    pts = published_by(truth, points(20, mtow=truth.mtow_kg))
    coefs = coefficients(truth, NAMES)
    # points 0.1 %: the data dominate the priors where they can see a coefficient
    fit = cal.fit_coefficients(started(truth, coefs), pts, coefs, point_share_sd=0.001)
    return truth, pts, coefs, fit


def test_round_trip_reproduces_the_points(round_trip):
    truth, pts, coefs, fit = round_trip
    start_miss = np.abs(fit.model_start / fit.published - 1.0)
    assert start_miss.max() > 0.02  # the start was visibly off
    assert fit.success
    assert np.abs(fit.residual).max() < 0.005  # the bar: 0.5 %


def test_round_trip_recovers_the_coefficients_the_points_determine(round_trip):
    truth, pts, coefs, fit = round_trip
    determined = [n for n, d in zip(fit.names, fit.determined) if d]
    # the stall speed (CL,max), VR and the drag these points depend on most
    assert {"cl_max_takeoff", "vr_over_vs"} <= set(determined)
    for j, name in enumerate(fit.names):
        if fit.determined[j]:
            assert abs(fit.value[j] - getattr(truth, name)) < 3.0 * fit.posterior_sd[j], name


def test_posterior_is_never_wider_than_the_prior(round_trip):
    _, _, _, fit = round_trip
    assert np.all(fit.posterior_sd <= fit.prior_sd * (1 + 1e-12))
    assert cal.determined_combinations(fit) >= 3


def test_values_stay_within_their_limits(round_trip):
    _, _, coefs, fit = round_trip
    for c, v in zip(coefs, fit.value):
        assert c.lower <= v <= c.upper


def test_a_coefficient_the_points_cannot_see_is_reported_and_left_alone():
    """Engine-out drag of a single: no point depends on it."""
    truth = one_type("propeller", engine_count=1.0, vmcg_mps=0.0, engine_out_drag_cd=0.0)
    pts = published_by(truth, points(10, mtow=truth.mtow_kg, climb_points=2, shares=(0.85, 0.9),
                                     altitudes=(0.0, 500.0), offsets=(0.0, 10.0)))
    coefs = coefficients(truth, ("cl_max_takeoff", "engine_out_drag_cd", "oswald_efficiency"))
    eo = [c for c in coefs if c.name == "engine_out_drag_cd"][0]
    fit = cal.fit_coefficients(started(truth, coefs), pts, coefs, point_share_sd=0.001)
    j = fit.names.index("engine_out_drag_cd")
    assert not fit.determined[j]
    assert fit.posterior_sd[j] == pytest.approx(fit.prior_sd[j], rel=1e-9)
    assert fit.value[j] == pytest.approx(eo.start, abs=1e-12)  # not invented
    assert fit.determined[fit.names.index("cl_max_takeoff")]


def test_noisy_points_get_honest_residuals():
    """±2 % noise on 20 points: the residuals reported are the model's misses, not hidden."""
    truth = one_type("turbofan")
    pts = published_by(truth, points(20, mtow=truth.mtow_kg, seed=5))
    noise = 0.02 * np.random.default_rng(9).uniform(-1.0, 1.0, pts.n)
    noisy = dataclasses.replace(pts, published=pts.published * (1.0 + noise))
    coefs = coefficients(truth, NAMES, scale=0.05)
    fit = cal.fit_coefficients(started(truth, coefs), noisy, coefs, point_share_sd=0.01)
    again, _ = cal.model_values(dataclasses.replace(truth, **dict(zip(fit.names, fit.value))), noisy)
    np.testing.assert_allclose(fit.residual, again / noisy.published - 1.0, rtol=0, atol=1e-9)
    np.testing.assert_allclose(fit.model_value, again, rtol=1e-12)
    rms_noise = np.sqrt(np.mean(noise ** 2))
    rms = np.sqrt(np.mean(fit.residual ** 2))
    # a handful of effective coefficients cannot absorb noise on 20 points
    assert 0.5 * rms_noise < rms < 1.2 * rms_noise


def test_no_coefficient_gives_the_model_values():
    truth = one_type("quadratic")
    pts = published_by(truth, points(5, mtow=truth.mtow_kg, climb_points=1))
    fit = cal.fit_coefficients(truth, pts, [])
    assert fit.names == () and np.allclose(fit.residual, 0.0, atol=1e-12)


def test_a_start_outside_its_limits_is_refused():
    truth = one_type("turbofan")
    pts = published_by(truth, points(4, mtow=truth.mtow_kg, climb_points=0))
    with pytest.raises(ValueError, match="vr_over_vs"):
        cal.fit_coefficients(truth, pts, [cal.Coefficient("vr_over_vs", 1.2, 0.03, 1.0, 1.1)])
