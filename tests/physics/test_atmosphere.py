"""Standard atmosphere and airfield air state against published tables and reference libraries."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from fieldlimits.physics import atmosphere as atm
from fieldlimits.physics import constants as c

# ICAO Doc 7488 / U.S. Standard Atmosphere 1976 by GEOMETRIC altitude z (values as tabulated
# in the references file of this project, §1; ambiance and fluids agree to these digits).
Z_M = np.array([0.0, 1000.0, 2000.0, 3000.0, 5000.0])
T_K = np.array([288.150, 281.651, 275.154, 268.659, 255.676])
P_PA = np.array([101325.0, 89876.3, 79501.4, 70121.1, 54048.3])
RHO = np.array([1.22500, 1.11166, 1.00655, 0.90925, 0.73643])


def test_isa_table_by_geometric_altitude():
    # U.S. Standard Atmosphere 1976, Table 1 (geometric altitude); tolerance = table rounding.
    t, p, rho = atm.isa(atm.geometric_to_geopotential_m(Z_M))
    assert_allclose(t, T_K, atol=6e-4)
    assert_allclose(p, P_PA, atol=0.06)
    assert_allclose(rho, RHO, atol=6e-6)


def test_isa_at_geopotential_1000_m():
    # U.S. Standard Atmosphere 1976, H = 1000 m geopotential: p 89 874.6 Pa, rho 1.11164 kg/m³,
    # T = 288.15 − 6.5 = 281.65 K exactly. Differs from the z = 1000 m row: isa() is geopotential.
    t, p, rho = atm.isa(1000.0)
    assert t == pytest.approx(281.65, abs=1e-9)
    assert p == pytest.approx(89874.6, abs=0.06)
    assert rho == pytest.approx(1.11164, abs=6e-6)


def test_tropopause_and_stratosphere():
    # ICAO Doc 7488: 11 000 m geopotential → 216.65 K, 22 632 Pa, 0.36392 kg/m³.
    t, p, rho = atm.isa(11000.0)
    assert t == pytest.approx(216.65, abs=1e-9)
    assert p == pytest.approx(22632.0, abs=1.0)
    assert rho == pytest.approx(0.36392, abs=1e-5)
    # U.S. Standard Atmosphere 1976: 20 000 m geopotential → 216.65 K, 5 474.89 Pa (from memory;
    # tolerance 0.1 Pa covers the last tabulated digit).
    t, p, _ = atm.isa(20000.0)
    assert p == pytest.approx(5474.89, abs=0.1)


@pytest.mark.parametrize("lib", ["ambiance", "fluids"])
def test_isa_agrees_with_reference_library(lib):
    # Independent implementations of US Std Atmosphere 1976 (geometric input); -1 km to 20 km.
    z = np.linspace(-1000.0, 20000.0, 43)
    t, p, rho = atm.isa(atm.geometric_to_geopotential_m(z))
    if lib == "ambiance":
        from ambiance import Atmosphere

        ref = Atmosphere(z)
        t_ref, p_ref, rho_ref = ref.temperature, ref.pressure, ref.density
    else:
        from fluids.atmosphere import ATMOSPHERE_1976

        refs = [ATMOSPHERE_1976(float(zi)) for zi in z]
        t_ref = np.array([r.T for r in refs])
        p_ref = np.array([r.P for r in refs])
        rho_ref = np.array([r.rho for r in refs])
    assert_allclose(t, t_ref, rtol=1e-6)
    assert_allclose(p, p_ref, rtol=1e-5)
    assert_allclose(rho, rho_ref, rtol=1e-5)


def test_outside_range_is_nan_not_error():
    t, p, rho = atm.isa(np.array([-6000.0, 40000.0, np.nan]))
    assert np.isnan(t).all() and np.isnan(p).all() and np.isnan(rho).all()


def test_station_pressure_from_qnh():
    # [computed] from the ICAO troposphere law (references file §1): elevation 500 m,
    # QNH 1000 hPa → 94 212.5 Pa, pressure altitude 609.6 m.
    p = atm.station_pressure_pa(500.0, 1000.0 * c.HPA_PA)
    assert p == pytest.approx(94212.5, abs=0.05)
    assert atm.pressure_altitude_m(p) == pytest.approx(609.6, abs=0.05)
    # At QNH = 1013.25 hPa the station pressure is the ISA pressure at the elevation.
    assert atm.station_pressure_pa(1234.0, c.P0_PA) == pytest.approx(atm.isa(1234.0)[1], rel=1e-12)


def test_pressure_and_density_altitude_round_trip():
    h = np.linspace(-1000.0, 15000.0, 50)
    _, p, rho = atm.isa(h)
    assert_allclose(atm.pressure_altitude_m(p), h, atol=1e-6)
    tropo = h <= 11000.0
    assert_allclose(atm.density_altitude_m(rho[tropo]), h[tropo], atol=1e-6)


def test_density_altitude_on_a_hot_day():
    # Common practice: density altitude rises about 120 ft (36.6 m) per °C above ISA near sea
    # level; check the sign and size at ISA+20 at sea level: about 730 m (from memory, ±10 %).
    rho = atm.density_kg_m3(c.P0_PA, c.T0_K + 20.0)
    assert 650.0 < atm.density_altitude_m(rho) < 800.0
    assert atm.isa_deviation_k(c.T0_K + 20.0, c.P0_PA) == pytest.approx(20.0, abs=1e-9)


def test_speed_of_sound_sea_level():
    # ICAO Doc 7488: a0 = 340.294 m/s.
    assert atm.speed_of_sound_mps(c.T0_K) == pytest.approx(340.294, abs=1e-3)


def test_geometric_geopotential_inverse():
    z = np.array([-1000.0, 0.0, 3000.0, 20000.0])
    assert_allclose(atm.geopotential_to_geometric_m(atm.geometric_to_geopotential_m(z)), z, atol=1e-7)
    # U.S. Std Atm 1976: z = 11 019 m ↔ H = 11 000 m (tropopause).
    assert atm.geopotential_to_geometric_m(11000.0) == pytest.approx(11019.1, abs=0.1)


def test_scalar_equals_array_element():
    h = np.array([0.0, 750.0, 2500.0])
    t, p, rho = atm.isa(h)
    assert atm.isa(750.0) == (t[1], p[1], rho[1])
