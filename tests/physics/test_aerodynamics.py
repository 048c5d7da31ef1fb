"""Drag polar, ground effect and speeds (Anderson, Aircraft Performance and Design, 1999)."""

import numpy as np
import pytest

from fieldlimits.physics import aerodynamics as aero
from fieldlimits.physics import constants as c


def test_mccormick_ground_effect_checks():
    # Anderson (1999) Eq. 6.77 (McCormick), Example 6.6: h/b = 5.6/75 → phi = 0.588.
    assert aero.ground_effect_factor(5.6, 75.0) == pytest.approx(0.588, abs=5e-4)
    # [computed] from Eq. 6.77: h/b = 3/50 → 0.4796.
    assert aero.ground_effect_factor(3.0, 50.0) == pytest.approx(0.4796, abs=5e-5)


def test_ground_effect_limits():
    phi = aero.ground_effect_factor(np.array([0.0, 1.0, 100.0]), 30.0)
    assert phi[0] == 0.0 and 0.0 < phi[1] < 1.0 and phi[2] > 0.999


def test_induced_drag_factor_anderson_example():
    # Anderson (1999) Example 6.6: e = 0.9, AR = 5.92 → 1/(pi e AR) = 0.0597 [computed].
    assert aero.induced_drag_factor(0.9, 5.92) == pytest.approx(0.05974, abs=1e-5)
    assert aero.aspect_ratio(75.0 * c.FT_M, 950.0 * c.FT_M**2) == pytest.approx(75.0**2 / 950.0)


def test_ground_roll_drag_coefficient():
    # C_D = C_D0 + phi K C_L²; Anderson Example 6.6 values: C_D0 0.015 + 0.0177 gear, C_L 0.1.
    b = 75.0 * c.FT_M
    s = b**2 / 5.92
    cd = aero.ground_roll_drag_coefficient(0.015, 0.0177, 0.0, 0.9, b, s, 5.6 * c.FT_M, 0.1)
    expected = 0.0327 + aero.ground_effect_factor(5.6, 75.0) * 0.01 / (np.pi * 0.9 * 5.92)
    assert cd == pytest.approx(expected, rel=1e-12)


def test_stall_speed_definition_and_scaling():
    # Anderson (1999) Eq. 5.67: V_stall = sqrt(2W/(rho S C_Lmax)); Example 6.6 quotes
    # V_stall = 186.4 ft/s for W/S = 76.84 lb/ft² at rho = 0.002377 slug/ft³, which implies
    # C_Lmax = 2 (W/S) / (rho V²) = 1.861 [computed]; the SI function must give 186.4 ft/s back.
    ws_pa = 76.84 * c.LBF_N / c.FT_M**2
    rho = 0.002377 * c.SLUG_FT3_KG_M3
    clmax = 2 * 76.84 / (0.002377 * 186.4**2)
    vs = aero.stall_speed_mps(ws_pa / c.G0, rho, 1.0, clmax)
    assert vs / c.FT_M == pytest.approx(186.4, rel=1e-4)
    m = np.array([1.0, 1.21])
    v = aero.stall_speed_mps(m * 50000.0, 1.0, 100.0, 2.0)
    assert v[1] / v[0] == pytest.approx(1.1)


def test_signed_aero_force_and_takeoff_speeds():
    f = aero.aero_force_n(0.05, 1.2, 100.0, np.array([-10.0, 10.0]))
    assert f[0] == pytest.approx(-f[1]) and f[1] == pytest.approx(0.5 * 1.2 * 100 * 0.05 * 100)
    vr, vlof, v2 = aero.takeoff_speeds_mps(60.0, 1.05, 1.1, 1.2)
    assert (vr, vlof, v2) == pytest.approx((63.0, 66.0, 72.0))
