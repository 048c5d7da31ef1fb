"""International Standard Atmosphere and the air state at an airfield.

All altitudes are **geopotential** unless a name says otherwise (``geometric_altitude_m``).
Below about 3 km the difference is under 0.05 % (1.4 m at 3 000 m), but the reference tables
of ICAO Doc 7488 are given both ways, and tests must say which one they use.

References
----------
.. [1] ICAO, *Manual of the ICAO Standard Atmosphere*, Doc 7488/3, 1993.
.. [2] NOAA/NASA/USAF, *U.S. Standard Atmosphere, 1976*, NOAA-S/T 76-1562, §1.2–1.3.
"""

from __future__ import annotations

import numpy as np

from fieldlimits.physics import constants as c

# Base temperature and pressure of each layer, computed once from the layer lapse rates.
_BASES_M = np.array([layer[0] for layer in c.ISA_LAYERS[:-1]])
_LAPSES = np.array([layer[1] for layer in c.ISA_LAYERS[:-1]])


def _layer_bases():
    temps = [c.T0_K]
    press = [c.P0_PA]
    for i in range(len(_BASES_M) - 1):
        dh = _BASES_M[i + 1] - _BASES_M[i]
        t_top = temps[i] + _LAPSES[i] * dh
        if _LAPSES[i] == 0.0:
            p_top = press[i] * np.exp(-c.G0 * dh / (c.R_AIR * temps[i]))
        else:
            p_top = press[i] * (t_top / temps[i]) ** (-c.G0 / (c.R_AIR * _LAPSES[i]))
        temps.append(t_top)
        press.append(p_top)
    return np.array(temps), np.array(press)


_BASE_T_K, _BASE_P_PA = _layer_bases()


def geometric_to_geopotential_m(geometric_altitude_m):
    """Geopotential altitude from geometric altitude.

    Parameters
    ----------
    geometric_altitude_m : array_like
        Geometric height above mean sea level, z. [m]

    Returns
    -------
    numpy.ndarray or float
        Geopotential altitude, H. [m]

    Notes
    -----
    H = r0 z / (r0 + z), r0 = 6 356 766 m ([2], Eq. 18).

    References
    ----------
    .. [2] U.S. Standard Atmosphere, 1976, §1.2.
    """
    z = np.asarray(geometric_altitude_m, dtype=float)
    return c.EARTH_RADIUS_M * z / (c.EARTH_RADIUS_M + z)


def geopotential_to_geometric_m(geopotential_altitude_m):
    """Geometric altitude from geopotential altitude.

    Parameters
    ----------
    geopotential_altitude_m : array_like
        Geopotential altitude, H. [m]

    Returns
    -------
    numpy.ndarray or float
        Geometric height above mean sea level, z. [m]

    Notes
    -----
    z = r0 H / (r0 − H), the inverse of H = r0 z / (r0 + z).

    References
    ----------
    .. [2] U.S. Standard Atmosphere, 1976, §1.2.
    """
    h = np.asarray(geopotential_altitude_m, dtype=float)
    return c.EARTH_RADIUS_M * h / (c.EARTH_RADIUS_M - h)


def isa(altitude_m):
    """Standard-atmosphere temperature, pressure and density at a geopotential altitude.

    Parameters
    ----------
    altitude_m : array_like
        Geopotential altitude, −5 000 m to 32 000 m; NaN is returned outside. [m]

    Returns
    -------
    temperature_k : numpy.ndarray or float
        Air temperature. [K]
    pressure_pa : numpy.ndarray or float
        Air pressure. [Pa]
    density_kg_m3 : numpy.ndarray or float
        Air density. [kg/m³]

    Notes
    -----
    In a layer with base H_b, T_b, p_b and lapse rate L_b = dT/dH:
    T = T_b + L_b (H − H_b); p = p_b (T/T_b)^(−g0/(R L_b)) if L_b ≠ 0, else
    p = p_b exp(−g0 (H − H_b)/(R T_b)); rho = p/(R T).
    Troposphere (L = −6.5 K/km) to 11 km, isothermal 216.65 K to 20 km, +1 K/km to 32 km.
    The troposphere formula is used below sea level as well ([1], down to −5 km).

    References
    ----------
    .. [1] ICAO Doc 7488/3, Table A.
    .. [2] U.S. Standard Atmosphere, 1976, Eqs. 23, 33a, 33b.
    """
    h = np.asarray(altitude_m, dtype=float)
    layer = np.clip(np.searchsorted(_BASES_M, h, side="right") - 1, 0, len(_BASES_M) - 1)
    h_b = _BASES_M[layer]
    t_b = _BASE_T_K[layer]
    p_b = _BASE_P_PA[layer]
    lapse = _LAPSES[layer]
    temperature = t_b + lapse * (h - h_b)
    with np.errstate(divide="ignore", invalid="ignore"):
        safe_lapse = np.where(lapse == 0.0, 1.0, lapse)
        p_grad = p_b * (temperature / t_b) ** (-c.G0 / (c.R_AIR * safe_lapse))
        p_iso = p_b * np.exp(-c.G0 * (h - h_b) / (c.R_AIR * t_b))
    pressure = np.where(lapse == 0.0, p_iso, p_grad)
    outside = (h < c.ISA_MIN_ALTITUDE_M) | (h > c.ISA_MAX_ALTITUDE_M) | ~np.isfinite(h)
    temperature = np.where(outside, np.nan, temperature)
    pressure = np.where(outside, np.nan, pressure)
    density = pressure / (c.R_AIR * temperature)
    if np.ndim(h) == 0:
        return float(temperature), float(pressure), float(density)
    return temperature, pressure, density


def isa_temperature_k(altitude_m):
    """Standard-atmosphere temperature at a geopotential altitude.

    Parameters
    ----------
    altitude_m : array_like
        Geopotential altitude. [m]

    Returns
    -------
    numpy.ndarray or float
        ISA temperature. [K]

    Notes
    -----
    See :func:`isa`.

    References
    ----------
    .. [1] ICAO Doc 7488/3.
    """
    return isa(altitude_m)[0]


def density_kg_m3(pressure_pa, temperature_k):
    """Air density from pressure and temperature (ideal gas).

    Parameters
    ----------
    pressure_pa : array_like
        Air pressure. [Pa]
    temperature_k : array_like
        Air temperature. [K]

    Returns
    -------
    numpy.ndarray or float
        Air density. [kg/m³]

    Notes
    -----
    rho = p / (R T), R = 287.05287 J/(kg K) (dry air).

    References
    ----------
    .. [1] ICAO Doc 7488/3, Eq. (3).
    """
    return np.asarray(pressure_pa, dtype=float) / (c.R_AIR * np.asarray(temperature_k, dtype=float))


def station_pressure_pa(elevation_m, qnh_pa):
    """Pressure at an airfield from its elevation and the QNH.

    Parameters
    ----------
    elevation_m : array_like
        Airfield elevation above mean sea level. [m]
    qnh_pa : array_like
        QNH: pressure reduced to mean sea level with the standard atmosphere. [Pa]

    Returns
    -------
    numpy.ndarray or float
        Station (field) pressure, QFE. [Pa]

    Notes
    -----
    QNH is defined so that an altimeter set to it reads the elevation, i.e. the standard
    troposphere's pressure–height law taken with QNH at its base:
    p = QNH (1 − L·elev/T0)^(g0/(R L)), exponent 5.25588. The elevation is used as a
    geopotential altitude (the difference is 0.04 m at 500 m).

    References
    ----------
    .. [1] ICAO Doc 7488/3 (troposphere pressure law).
    .. [3] ICAO Doc 8168, *PANS-OPS*, Vol. I, altimeter setting procedures (QNH definition).
    """
    elev = np.asarray(elevation_m, dtype=float)
    return np.asarray(qnh_pa, dtype=float) * (1.0 - c.LAPSE_TROPOSPHERE * elev / c.T0_K) ** c.PRESSURE_EXPONENT


def pressure_altitude_m(pressure_pa):
    """Pressure altitude: the standard-atmosphere altitude with the given pressure.

    Parameters
    ----------
    pressure_pa : array_like
        Air pressure. [Pa]

    Returns
    -------
    numpy.ndarray or float
        Pressure altitude (geopotential). [m]

    Notes
    -----
    Troposphere: Hp = (T0/L) [1 − (p/p0)^(R L/g0)], exponent 0.190263; above 11 km
    (p < 22 632 Pa) the isothermal layer: Hp = 11 000 − (R T11/g0) ln(p/p11).

    References
    ----------
    .. [1] ICAO Doc 7488/3 (inverse of the pressure law).
    """
    p = np.asarray(pressure_pa, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        tropo = (c.T0_K / c.LAPSE_TROPOSPHERE) * (1.0 - (p / c.P0_PA) ** (1.0 / c.PRESSURE_EXPONENT))
        strato = _BASES_M[1] - c.R_AIR * _BASE_T_K[1] / c.G0 * np.log(p / _BASE_P_PA[1])
    return np.where(p >= _BASE_P_PA[1], tropo, strato)


def density_altitude_m(density_kg_m3):
    """Density altitude: the standard-atmosphere altitude with the given density.

    Parameters
    ----------
    density_kg_m3 : array_like
        Air density. [kg/m³]

    Returns
    -------
    numpy.ndarray or float
        Density altitude (geopotential, troposphere law). [m]

    Notes
    -----
    Hd = (T0/L) [1 − (rho/rho0)^(1/(g0/(R L) − 1))], exponent 0.234969. Valid in the
    troposphere (rho > 0.36392 kg/m³), which covers every airfield.

    References
    ----------
    .. [1] ICAO Doc 7488/3 (inverse of the density law of the troposphere).
    """
    rho = np.asarray(density_kg_m3, dtype=float)
    with np.errstate(invalid="ignore"):
        return (c.T0_K / c.LAPSE_TROPOSPHERE) * (
            1.0 - (rho / c.RHO0_KG_M3) ** (1.0 / (c.PRESSURE_EXPONENT - 1.0))
        )


def isa_deviation_k(temperature_k, pressure_pa):
    """Deviation of the outside air temperature from ISA at the same pressure altitude.

    Parameters
    ----------
    temperature_k : array_like
        Outside air temperature. [K]
    pressure_pa : array_like
        Air pressure. [Pa]

    Returns
    -------
    numpy.ndarray or float
        ISA deviation, OAT − T_ISA(Hp). [K]

    Notes
    -----
    ΔISA = T − T_ISA(Hp(p)); the trade quotes the deviation at the pressure altitude.

    References
    ----------
    .. [1] ICAO Doc 7488/3.
    """
    return np.asarray(temperature_k, dtype=float) - isa_temperature_k(pressure_altitude_m(pressure_pa))


def speed_of_sound_mps(temperature_k):
    """Speed of sound in air.

    Parameters
    ----------
    temperature_k : array_like
        Air temperature. [K]

    Returns
    -------
    numpy.ndarray or float
        Speed of sound. [m/s]

    Notes
    -----
    a = sqrt(γ R T), γ = 1.4.

    References
    ----------
    .. [1] ICAO Doc 7488/3, Eq. (15).
    """
    return np.sqrt(c.GAMMA_AIR * c.R_AIR * np.asarray(temperature_k, dtype=float))


def equivalent_airspeed_mps(true_airspeed_mps, density_kg_m3):
    """Equivalent airspeed from true airspeed.

    Parameters
    ----------
    true_airspeed_mps : array_like
        True airspeed. [m/s]
    density_kg_m3 : array_like
        Air density. [kg/m³]

    Returns
    -------
    numpy.ndarray or float
        Equivalent airspeed (≈ calibrated airspeed at takeoff Mach numbers). [m/s]

    Notes
    -----
    EAS = TAS sqrt(rho/rho0). EAS and CAS differ by under 0.5 % below Mach 0.3 near sea
    level (common practice).

    References
    ----------
    .. [4] J. D. Anderson, *Introduction to Flight*, McGraw-Hill, §3.12 (from memory).
    """
    return np.asarray(true_airspeed_mps, dtype=float) * np.sqrt(
        np.asarray(density_kg_m3, dtype=float) / c.RHO0_KG_M3
    )
