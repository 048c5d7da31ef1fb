"""Airborne segment of the takeoff: transition arc and climb to the screen height.

After lift-off the aircraft flies a circular arc at the transition speed V_TR with load
factor n, from level to the climb angle gamma, then climbs straight at gamma. The screen
(35 ft dry / 15 ft wet for transport aircraft, 50 ft for light aircraft) may be cleared
inside the arc or on the climb.

References
----------
.. [1] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.8, Eqs. 17.105–17.112.
.. [2] J. D. Anderson, *Aircraft Performance and Design*, McGraw-Hill, 1999, §6.7.2,
   Eqs. 6.91–6.98, Example 6.6 (n = 1.19, R = 6.96 V_stall²/g).
"""

from __future__ import annotations

import numpy as np

from fieldlimits.physics import constants as c
from fieldlimits.physics.compiled import kernel
from fieldlimits.physics.thrust import _thrust_one, _trail

#: Raymer's load factor in the transition arc (V_TR = 1.15 V_stall, C_L = 0.9 C_Lmax). [–]
TRANSITION_LOAD_FACTOR = 1.2

#: Reason code: the aircraft cannot climb (T − D ≤ 0 at the transition speed).
REASON_NO_CLIMB = 3


def transition_radius_m(v_transition_mps, load_factor=TRANSITION_LOAD_FACTOR):
    """Radius of the transition arc.

    Parameters
    ----------
    v_transition_mps : array_like
        True airspeed in the arc. [m/s]
    load_factor : array_like, optional
        Load factor n in the arc (> 1). [–]

    Returns
    -------
    numpy.ndarray or float
        R = V_TR² / (g (n − 1)). [m]

    Notes
    -----
    R = V_TR²/(g (n − 1)); Raymer's n = 1.2 gives R = V_TR²/(0.2 g) (Eq. 17.107).

    References
    ----------
    .. [1] Raymer, Eq. 17.107. .. [2] Anderson (1999), Eq. 6.95.
    """
    v = np.asarray(v_transition_mps, dtype=float)
    return v * v / (c.G0 * (np.asarray(load_factor, dtype=float) - 1.0))


def climb_sine(thrust_n, drag_n, weight_n):
    """Sine of the steady climb angle.

    Parameters
    ----------
    thrust_n : array_like
        Thrust. [N]
    drag_n : array_like
        Drag. [N]
    weight_n : array_like
        Weight. [N]

    Returns
    -------
    numpy.ndarray or float
        sin gamma = (T − D)/W. [–]

    Notes
    -----
    sin gamma = (T − D)/W ≈ T/W − 1/(L/D) (Eq. 17.108).

    References
    ----------
    .. [1] Raymer, Eq. 17.108.
    """
    return (np.asarray(thrust_n, dtype=float) - np.asarray(drag_n, dtype=float)) / np.asarray(weight_n, dtype=float)


def airborne_distance_m(*, v_transition_mps, climb_sine, screen_height_m=c.SCREEN_HEIGHT_35FT_M,
                        load_factor=TRANSITION_LOAD_FACTOR):
    """Horizontal air distance from lift-off to the screen height.

    Parameters
    ----------
    v_transition_mps : array_like
        True airspeed in the arc. [m/s]
    climb_sine : array_like
        sin gamma of the climb after the arc. [–]
    screen_height_m : array_like, optional
        Screen height: 10.668 (35 ft), 4.572 (15 ft, wet) or 15.24 (50 ft). [m]
    load_factor : array_like, optional
        Load factor in the arc. [–]

    Returns
    -------
    numpy.ndarray or float
        Distance in still air; NaN where the aircraft cannot climb (sin gamma ≤ 0 or > 1). [m]

    Notes
    -----
    R = V²/(g(n − 1)); h_TR = R (1 − cos gamma); S_TR = R sin gamma.
    If h ≤ h_TR: S = sqrt(R² − (R − h)²) (screen inside the arc);
    else S = S_TR + (h − h_TR)/tan gamma.

    References
    ----------
    .. [1] Raymer, Eqs. 17.107–17.112. .. [2] Anderson (1999), Eqs. 6.95–6.98.
    """
    from fieldlimits.physics import groundrun

    args = [np.asarray(x, dtype=float) for x in (v_transition_mps, climb_sine, screen_height_m, load_factor)]
    shape = np.broadcast_shapes(*(x.shape for x in args))
    out = np.empty(shape).reshape(-1)
    _airborne_pass(*groundrun._kernel_args(args, shape), out)
    return float(out[0]) if shape == () else out.reshape(shape)


@kernel
def _airborne_one(v_tr, sin_g, h, load_factor):
    """:func:`airborne_distance_m` of one case (NaN where sin gamma is not in (0, 1)). [m]"""
    r = v_tr * v_tr / (c.G0 * (load_factor - 1.0))
    if not (sin_g > 0.0 and sin_g < 1.0):
        return np.nan
    cg = np.sqrt(1.0 - sin_g * sin_g)
    h_tr = r * (1.0 - cg)
    if h <= h_tr:  # the screen inside the arc
        arc = h * (2.0 * r - h)
        return np.sqrt(arc if arc > 0.0 or arc != arc else 0.0)
    return r * sin_g + (h - h_tr) * cg / sin_g


@kernel
def _airborne_pass(v_tr, sin_g, h, load_factor, out):
    """:func:`_airborne_one` per case, in place."""
    for j in range(out.shape[0]):
        out[j] = _airborne_one(v_tr[j], sin_g[j], h[j], load_factor[j])


def climb_out(thrust_law, *, mass_kg, density_kg_m3, wing_area_m2, v_transition_mps, cd0, induced_factor,
              screen_height_m, headwind_mps, load_factor=TRANSITION_LOAD_FACTOR):
    """Climb sine and distances from lift-off to the screen height, n cases in one pass.

    Parameters
    ----------
    thrust_law : physics.thrust.ThrustLaw
        Thrust of the operating engines, n cases.
    mass_kg, density_kg_m3, wing_area_m2 : array_like
        Mass, air density and reference area. [kg], [kg/m³], [m²]
    v_transition_mps : array_like
        True airspeed in the arc. [m/s]
    cd0, induced_factor : array_like
        Zero-lift drag in the air and K = 1/(pi e AR) (no ground effect). [–]
    screen_height_m, headwind_mps : array_like
        Screen height and headwind (negative: tailwind). [m], [m/s]
    load_factor : array_like, optional
        Load factor in the arc. [–]

    Returns
    -------
    climb_sine, air_m, ground_m : numpy.ndarray
        sin gamma [–], the air distance (NaN where the aircraft cannot climb) and the ground
        distance over it [m], shape (n,).

    Notes
    -----
    C_L = W/(q S), q S = ½ rho V_TR² S; D = q S (C_D0 + K C_L²) (Anderson Eq. 6.78, out of
    ground effect); sin gamma = (T(V_TR) − D)/W (:func:`climb_sine`); the air distance of
    :func:`airborne_distance_m`; ground distance × (V_TR − w)/V_TR
    (:func:`airborne_ground_distance_m`). One compiled pass per case (these functions'
    formulas, in their order: the same numbers to the bit).

    References
    ----------
    .. [1] Raymer, Eqs. 17.105–17.112. .. [2] Anderson (1999), Eq. 6.78, §6.7.2.
    """
    from fieldlimits.physics import groundrun

    law, v = thrust_law, np.asarray(v_transition_mps, dtype=float)
    # the law's fields broadcast against the speeds as in ThrustLaw.thrust_n (trailing axes)
    lf = np.asarray(load_factor, dtype=float)
    floats = [np.asarray(x, dtype=float) for x in (
        mass_kg, density_kg_m3, wing_area_m2, v, cd0, induced_factor,
        *(_trail(x, v) for x in (law.t0_n, law.t1_n_per_mps, law.t2_n_per_mps2, law.propeller_power_w)),
        screen_height_m, lf if lf.size != 1 else np.zeros(()), headwind_mps)]
    is_prop = _trail(np.asarray(law.is_propeller, dtype=bool), v)
    shape = np.broadcast_shapes(is_prop.shape, *(x.shape for x in floats))
    if lf.size == 1:  # one load factor for every case (the usual): not spread over them
        floats[11] = np.array(lf, dtype=float).reshape(1)
    args = groundrun._kernel_args(floats[:11], shape) + [floats[11] if lf.size == 1 else
                                                          groundrun._kernel_args(floats[11:12], shape)[0]] \
        + groundrun._kernel_args(floats[12:], shape)
    is_prop = np.array(np.broadcast_to(is_prop, shape), dtype=np.bool_).reshape(-1)
    out = np.empty((3,) + args[0].shape)
    _climb_out_pass(*args, is_prop, *out)
    return tuple(x.reshape(shape) for x in out)


@kernel
def _climb_out_pass(m, rho, area, v_tr, cd0, k, t0, t1, t2, power, h, load_factor, w, is_prop, sin_out, air_out,
                    ground_out):
    """:func:`climb_out` per case, in place (``load_factor``: per case, or one value for all)."""
    one_load_factor = load_factor.shape[0] != m.shape[0]
    for j in range(m.shape[0]):
        v = v_tr[j]
        weight = m[j] * c.G0
        q_s = 0.5 * rho[j] * v * v * area[j]
        cl = weight / q_s
        drag = q_s * (cd0[j] + k[j] * cl * cl)
        sin_g = (_thrust_one(t0[j], t1[j], t2[j], power[j], is_prop[j], v) - drag) / weight
        air = _airborne_one(v, sin_g, h[j], load_factor[0] if one_load_factor else load_factor[j])
        sin_out[j], air_out[j], ground_out[j] = sin_g, air, air * (v - w[j]) / v


def airborne_ground_distance_m(air_distance_m, v_transition_mps, headwind_mps):
    """Ground distance covered over an air distance flown at a true airspeed in a headwind.

    Parameters
    ----------
    air_distance_m : array_like
        Distance relative to the air mass. [m]
    v_transition_mps : array_like
        True airspeed (constant, the transition speed). [m/s]
    headwind_mps : array_like
        Headwind (negative: tailwind). [m/s]

    Returns
    -------
    numpy.ndarray or float
        S_ground = S_air (V − w)/V. [m]

    Notes
    -----
    The time aloft is S_air/V; the ground moves by w per second against the aircraft.

    References
    ----------
    .. [1] Raymer, §17.8 (wind on takeoff distances; first principles).
    """
    v = np.asarray(v_transition_mps, dtype=float)
    return np.asarray(air_distance_m, dtype=float) * (v - np.asarray(headwind_mps, dtype=float)) / v
