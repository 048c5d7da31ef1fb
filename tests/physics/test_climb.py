"""Takeoff climb: required gradients, the gradient itself and the climb-limited mass."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from fieldlimits.physics import aerodynamics, climb, thrust
from fieldlimits.physics import constants as c
from tests.physics._transport_fixtures import SEA_LEVEL_ISA, make_aircraft, quad_of_same_thrust


def test_required_gradients_by_engine_count():
    # 14 CFR 25.121(b)(1): 2.4 % / 2.7 % / 3.0 % for two / three / four engines [verified,
    # REFERENCES §5]; single-engine: 8.3 % all engines, 14 CFR 23.65(a) before amendment
    # 23-64 (from memory).
    assert_allclose(climb.required_climb_gradient([1, 2, 3, 4, 6]),
                    [0.083, 0.024, 0.027, 0.030, 0.030])
    assert np.isnan(climb.required_climb_gradient(0))


def test_gradient_from_first_principles():
    # Raymer §17.3: sin(gamma) = T/W − D/W. 60 kN on 40 t with C_D/C_L = 0.1:
    # sin = 60000/(40000 × 9.80665) − 0.1 = 0.052957 → tan = 0.053032 (hand computation).
    g = climb.climb_gradient(thrust_n=60_000.0, mass_kg=40_000.0, drag_coefficient=0.1,
                             lift_coefficient=1.0)
    s = 60_000.0 / (40_000.0 * c.G0) - 0.1
    assert_allclose(g, s / np.sqrt(1 - s * s), rtol=1e-12)
    assert_allclose(g, 0.053032, atol=2e-6)


def test_aircraft_gradient_matches_hand_calculation():
    # Second segment of the invented twin at 55 t, ISA sea level, rebuilt by hand from the
    # definitions: one engine's quadratic thrust at V2, gear up, flaps, engine-out drag.
    a = make_aircraft()
    m = 55_000.0
    rho = c.RHO0_KG_M3
    vs = np.sqrt(2 * m * c.G0 / (rho * 105.0 * 2.3))
    v2 = 1.2 * vs
    cl = 2.3 / 1.2**2
    k = 1 / (np.pi * 0.8 * 32.0**2 / 105.0)
    cd = 0.020 + 0.013 + 0.006 + k * cl**2
    t = 100_000.0 - 150.0 * v2 + 0.2 * v2**2  # one engine, sea level, below flat rating
    s = t / (m * c.G0) - cd / cl
    got = climb.takeoff_climb_gradient(a, mass_kg=m, **SEA_LEVEL_ISA)
    assert_allclose(got, s / np.sqrt(1 - s * s), rtol=1e-9)


def test_climb_limited_mass_meets_requirement_with_equality():
    a = make_aircraft()
    m = climb.climb_limited_mass_kg(a, pressure_pa=80_000.0, temperature_k=313.15,
                                    mass_min_kg=20_000.0, mass_max_kg=200_000.0)
    assert 20_000.0 < m < 200_000.0
    g = climb.takeoff_climb_gradient(a, mass_kg=m, pressure_pa=80_000.0, temperature_k=313.15)
    assert_allclose(g, 0.024, atol=1e-9)


def test_climb_limited_mass_edges():
    a = make_aircraft()
    # plenty of thrust: capped at the top of the range; no thrust: NaN (never an exception)
    hi = climb.climb_limited_mass_kg(a, mass_min_kg=1_000.0, mass_max_kg=2_000.0, **SEA_LEVEL_ISA)
    assert_allclose(hi, 2_000.0)
    weak = make_aircraft(static_thrust_per_engine_n=1_000.0)
    assert np.isnan(climb.climb_limited_mass_kg(weak, mass_min_kg=30_000.0, mass_max_kg=60_000.0,
                                                **SEA_LEVEL_ISA))


def test_climb_limit_falls_with_temperature_above_flat_rating():
    # Flat rating (common practice): thrust held up to the corner temperature (30 °C here),
    # falling above it; the climb limit falls much faster above the corner than below.
    a = make_aircraft()
    temps = np.array([278.15, 293.15, 303.15, 313.15, 323.15])
    m = climb.climb_limited_mass_kg(a, pressure_pa=np.full(5, 90_000.0), temperature_k=temps,
                                    mass_min_kg=10_000.0, mass_max_kg=500_000.0)
    assert np.all(np.diff(m) < 0)
    below = (m[0] - m[2]) / 25.0
    above = (m[2] - m[4]) / 20.0
    assert above > 5 * below


def test_climb_limit_falls_with_altitude():
    a = make_aircraft()
    p = np.array([101_325.0, 90_000.0, 80_000.0])
    m = climb.climb_limited_mass_kg(a, pressure_pa=p, temperature_k=288.15,
                                    mass_min_kg=10_000.0, mass_max_kg=500_000.0)
    assert np.all(np.diff(m) < 0)


def test_quad_climbs_better_than_twin_of_same_total_thrust():
    # One engine of four lost keeps 3/4 of the thrust, one of two only 1/2 (common practice;
    # the reason 25.121 asks more of a quad: 3.0 % against 2.4 %).
    twin, quad = make_aircraft(), quad_of_same_thrust()
    g2 = climb.takeoff_climb_gradient(twin, mass_kg=55_000.0, **SEA_LEVEL_ISA)
    g4 = climb.takeoff_climb_gradient(quad, mass_kg=55_000.0, **SEA_LEVEL_ISA)
    assert g4 > g2 + 0.05


def test_single_engine_uses_all_engines_and_no_engine_out_drag():
    single = make_aircraft(engine_count=1.0, engine_out_drag_cd=0.05, static_thrust_per_engine_n=200_000.0,
                           thrust_linear_per_engine_n_per_mps=-300.0,
                           thrust_quadratic_per_engine_n_per_mps2=0.4)
    twin = make_aircraft(engine_out_drag_cd=0.0)  # N − 1 = 1 engine of half that thrust
    g1 = climb.takeoff_climb_gradient(single, mass_kg=55_000.0, **SEA_LEVEL_ISA)
    g2 = climb.takeoff_climb_gradient(twin, mass_kg=55_000.0, **SEA_LEVEL_ISA)
    # twice the operating thrust at the same drag: the gradient rises by T/W of one engine
    law = thrust.thrust_law_for_aircraft(twin, c.P0_PA, c.T0_K, engines_operating=1.0)
    vs = aerodynamics.stall_speed_mps(55_000.0, c.RHO0_KG_M3, 105.0, 2.3)
    extra = law.thrust_n(1.2 * vs) / (55_000.0 * c.G0)
    sin1, sin2 = g1 / np.sqrt(1 + g1**2), g2 / np.sqrt(1 + g2**2)
    assert_allclose(sin1 - sin2, extra, rtol=1e-9)


def test_scalar_equals_array_element():
    a = make_aircraft()
    temps = np.array([288.15, 300.0, 315.0])
    arr = climb.takeoff_climb_gradient(a, mass_kg=50_000.0, pressure_pa=95_000.0, temperature_k=temps)
    one = climb.takeoff_climb_gradient(a, mass_kg=50_000.0, pressure_pa=95_000.0, temperature_k=300.0)
    assert_allclose(one, arr[1], rtol=1e-14)


@pytest.mark.parametrize("modname", ["enginefailure", "climb"])
def test_numpydoc_sections_and_units(modname):
    # House style (STYLE.md §4), with the checker of tests/physics/test_docstrings.py; the
    # model objects of these modules carry no unit.
    import importlib
    import inspect
    import re

    from tests.physics import test_docstrings as td

    objects = ("EngineFailureSetup", "EngineFailureModel", "EngineFailureTakeoff", "TakeoffSpeeds")
    mod = importlib.import_module(f"fieldlimits.physics.{modname}")
    assert mod.__doc__ and "References" in mod.__doc__
    for name, fn in td._public_functions(mod):
        doc = inspect.getdoc(fn) or ""
        for section in ("Parameters", "Returns", "Notes", "References"):
            assert f"\n{section}\n" in doc, f"{modname}.{name}: no {section} section"
        for header, body in td._blocks(doc, "Parameters") + td._blocks(doc, "Returns"):
            if any(k in header for k in td.NOT_PHYSICAL + objects):
                continue
            assert re.search(r"\[[^\]]+\]", body), f"{modname}.{name}: no [unit] for '{header}'"


def _scheduled_speeds_with_numpy(a, mass, rho):
    # V_S = sqrt(2 m g/(rho S C_Lmax)), the ratio speeds, all raised by max(1, V_MCG/VR) with
    # V_MCG (≈ EAS) as a true airspeed (14 CFR 25.107): the numpy path the compiled pass replaced.
    vs = aerodynamics.stall_speed_mps(mass, rho, a.wing_area_m2, a.cl_max_takeoff)
    vr, vlof, v2 = aerodynamics.takeoff_speeds_mps(vs, a.vr_over_vs, a.vlof_over_vs, a.v2_over_vs)
    vmcg = np.where(np.asarray(a.engine_count) > 1, a.vmcg_mps * np.sqrt(c.RHO0_KG_M3 / rho), 0.0)
    raise_by = np.maximum(1.0, vmcg / vr)
    return vs, vmcg, vr * raise_by, vlof * raise_by, v2 * raise_by, raise_by > 1.0


def test_compiled_speeds_and_climb_gradient_equal_the_formulas_written_with_numpy():
    # The scheduled speeds and the second-segment gradient are compiled passes per case; the
    # same formulas written with numpy (V2 as above; C_L = 2W/(rho V2² S), climb_drag_coefficient,
    # the thrust of N − 1 engines at V2, climb_gradient: sin = T/W − C_D/C_L, tan = sin/sqrt(1 −
    # sin²), ±inf at |sin| ≥ 1) give the same numbers to the bit: every thrust model, V2 raised
    # by V_MCG and not, gradients negative, positive and vertical.
    from fieldlimits.physics import atmosphere, enginefailure
    from tests.physics import fleet

    n = 5000
    a, s = fleet.random_cases(n, seed=14)
    rng = np.random.default_rng(14)
    mass = rng.uniform(0.3, 1.1, n) * a.mtow_kg
    rho = atmosphere.density_kg_m3(s.pressure_pa, s.temperature_k)
    got = enginefailure.scheduled_speeds_mps(a, mass_kg=mass, density_kg_m3=rho)
    ref = _scheduled_speeds_with_numpy(a, mass, rho)
    assert np.any(ref[5]) and not np.all(ref[5])
    for name, x in zip(("vs_mps", "vmcg_mps", "vr_mps", "vlof_mps", "v2_mps", "vmcg_limited"), ref):
        np.testing.assert_array_equal(getattr(got, name), x)
    law = climb.climb_thrust_law(a, s.pressure_pa, s.temperature_k)
    law = thrust.ThrustLaw(law.t0_n * rng.choice([1.0, 1.0, 40.0], n), law.t1_n_per_mps, law.t2_n_per_mps2,
                           law.propeller_power_w, law.is_propeller)  # some cases far above the vertical
    g = climb.takeoff_climb_gradient(a, mass_kg=mass, pressure_pa=s.pressure_pa, temperature_k=s.temperature_k,
                                     thrust_law=law)
    v2 = ref[4]
    cl = 2.0 * mass * c.G0 / (rho * v2 * v2 * a.wing_area_m2)
    k = aerodynamics.induced_drag_factor(a.oswald_efficiency, aerodynamics.aspect_ratio(a.wing_span_m, a.wing_area_m2))
    cd = climb.climb_drag_coefficient(cd0_clean=a.cd0_clean, cd0_takeoff_flaps=a.cd0_takeoff_flaps,
                                      engine_out_drag_cd=a.engine_out_drag_cd, engine_count=a.engine_count,
                                      lift_coefficient=cl, induced_drag_factor=k)
    want = climb.climb_gradient(thrust_n=law.thrust_n(v2), mass_kg=mass, drag_coefficient=cd, lift_coefficient=cl)
    assert np.any(want < 0.0) and np.any((want > 0.0) & np.isfinite(want)) and np.any(want == np.inf)
    assert np.any(law.is_propeller & np.isfinite(want))
    np.testing.assert_array_equal(g, want)
    # a given V2, and a scalar case
    v2_given = v2 * 1.05
    cl = 2.0 * mass * c.G0 / (rho * v2_given * v2_given * a.wing_area_m2)
    cd = climb.climb_drag_coefficient(cd0_clean=a.cd0_clean, cd0_takeoff_flaps=a.cd0_takeoff_flaps,
                                      engine_out_drag_cd=a.engine_out_drag_cd, engine_count=a.engine_count,
                                      lift_coefficient=cl, induced_drag_factor=k)
    np.testing.assert_array_equal(
        climb.takeoff_climb_gradient(a, mass_kg=mass, pressure_pa=s.pressure_pa, temperature_k=s.temperature_k,
                                     v2_mps=v2_given, thrust_law=law),
        climb.climb_gradient(thrust_n=law.thrust_n(v2_given), mass_kg=mass, drag_coefficient=cd, lift_coefficient=cl))
    one = make_aircraft()
    assert np.shape(climb.takeoff_climb_gradient(one, mass_kg=55_000.0, **SEA_LEVEL_ISA)) == ()
