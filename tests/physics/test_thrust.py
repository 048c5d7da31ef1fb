"""Thrust models: Bartel & Young (2008), Mattingly flat rating, propeller, quadratic."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from fieldlimits.physics import constants as c
from fieldlimits.physics import thrust
from fieldlimits.physics.atmosphere import isa, speed_of_sound_mps


def test_bartel_young_check_values():
    # Bartel & Young (2008), J. Aircraft 45(4), takeoff thrust model, [computed] check values
    # in the references file §6: BPR 5, sea level, M 0.1/0.2/0.3 → 0.9024/0.8178/0.7464.
    r = thrust.bartel_young_thrust_ratio(np.array([0.1, 0.2, 0.3]), 1.0, 5.0)
    assert_allclose(r, [0.9024, 0.8178, 0.7464], atol=5e-5)
    # BPR 5, delta 0.7846, M 0 → 0.8679.
    assert thrust.bartel_young_thrust_ratio(0.0, 0.7846, 5.0) == pytest.approx(0.8679, abs=5e-5)
    # At sea level static the model gives 1 (A(1) = 1.0000).
    assert thrust.bartel_young_thrust_ratio(0.0, 1.0, 8.0) == pytest.approx(1.0, abs=1e-12)


def test_mattingly_flat_rating_check():
    # Mattingly, Aircraft Engine Design, 2nd ed. (2002), theta-break lapse, flat-rated to
    # ISA+15 (TR = 303.15/288.15): static at 40 °C → 0.9305 [computed, references file §6].
    f = thrust.flat_rating_factor(313.15, 303.15)
    assert f == pytest.approx(0.9305, abs=1e-4)
    assert thrust.flat_rating_factor(np.array([250.0, 303.15]), 303.15).tolist() == [1.0, 1.0]


def _model(code, **kw):
    base = dict(thrust_model=code, static_thrust_per_engine_n=100e3, pressure_pa=c.P0_PA,
                temperature_k=c.T0_K, engines_operating=2.0, flat_rate_oat_k=303.15,
                thrust_linear_per_engine_n_per_mps=-150.0, thrust_quadratic_per_engine_n_per_mps2=0.4,
                bypass_ratio=5.0, shaft_power_per_engine_w=2.0e6, propeller_efficiency=0.8)
    base.update(kw)
    return base


def test_turbofan_is_exactly_quadratic_in_airspeed():
    # Bartel & Young in Mach at a fixed temperature: T(V) = T0 B&Y(V/a); coefficients exact.
    kw = _model(1, pressure_pa=90000.0, temperature_k=300.0)
    v = np.array([0.0, 30.0, 60.0, 90.0])
    t0, t1, t2 = thrust.thrust_coefficients(**kw)
    expected = 2 * 100e3 * thrust.bartel_young_thrust_ratio(v / speed_of_sound_mps(300.0), 90000.0 / c.P0_PA, 5.0)
    assert_allclose(t0 + t1 * v + t2 * v**2, expected, rtol=1e-13)
    assert_allclose(thrust.total_thrust_n(v, **kw), expected, rtol=1e-13)


def test_quadratic_model_scaling():
    # Model definition (module docstring): T = N [T0 delta f + T1 V + T2 V²].
    kw = _model(0, pressure_pa=80000.0, temperature_k=313.15)
    v = np.array([0.0, 50.0])
    f = thrust.flat_rating_factor(313.15, 303.15)
    expected = 2 * (100e3 * 80000.0 / c.P0_PA * f - 150.0 * v + 0.4 * v**2)
    assert_allclose(thrust.total_thrust_n(v, **kw), expected, rtol=1e-13)


def test_propeller_cap_power_and_kink():
    # Anderson (1999) §3.3: T = eta P / V above the speed where it equals the static cap.
    kw = _model(2)
    law = thrust.thrust_law(**kw)
    vk = float(law.kink_airspeed_mps)
    assert vk == pytest.approx(0.8 * 2.0e6 / 100e3)  # sea-level ISA: no lapse
    v = np.array([0.0, 0.5 * vk, vk, 2 * vk, -5.0])
    assert_allclose(law.thrust_n(v), [200e3, 200e3, 200e3, 100e3, 200e3], rtol=1e-12)
    assert np.isnan(thrust.thrust_coefficients(**kw)).all()
    # Power lapse sigma^0.7 (common practice) at 2 000 m ISA.
    _, p, rho = isa(2000.0)
    hot = thrust.thrust_law(**_model(2, pressure_pa=p, temperature_k=isa(2000.0)[0]))
    sigma = rho / c.RHO0_KG_M3
    assert float(hot.propeller_power_w) == pytest.approx(2 * 0.8 * 2.0e6 * sigma**0.7, rel=1e-10)


def test_engine_out_throttle_and_mixed_models():
    codes = np.array([0, 1, 2])
    kw = _model(codes, engines_operating=np.array([2.0, 2.0, 2.0]))
    v = np.array([40.0, 40.0, 40.0])
    all_eng = thrust.total_thrust_n(v, **kw)
    one_out = thrust.total_thrust_n(v, **dict(kw, engines_operating=1.0))
    idle = thrust.total_thrust_n(v, **dict(kw, throttle=0.07))
    assert_allclose(one_out, all_eng / 2, rtol=1e-13)
    assert_allclose(idle, all_eng * 0.07, rtol=1e-13)
    for i, code in enumerate(codes):  # scalar call equals the mixed array element
        assert thrust.total_thrust_n(40.0, **_model(int(code))) == pytest.approx(all_eng[i], rel=1e-14)


@pytest.mark.parametrize("code", [0, 1, 2])
def test_thrust_falls_with_heat_above_flat_rate_and_with_altitude(code):
    temps = np.array([280.0, 295.0, 303.15, 310.0, 320.0])
    t = thrust.total_thrust_n(np.full(5, 30.0), **_model(code, temperature_k=temps))
    if code == 0:  # quadratic and turbofan: held below the corner (pressure only)
        assert t[0] == pytest.approx(t[2], rel=1e-12)
    assert np.all(np.diff(t[2:]) < 0)
    p = np.array([101325.0, 90000.0, 80000.0])
    t = thrust.total_thrust_n(np.full(3, 30.0), **_model(code, pressure_pa=p, temperature_k=280.0))
    assert np.all(np.diff(t) < 0)
