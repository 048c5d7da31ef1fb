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
from fieldlimits.physics.select import choose

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
    r = transition_radius_m(v_transition_mps, load_factor)
    sg = np.asarray(climb_sine, dtype=float)
    h = np.asarray(screen_height_m, dtype=float)
    ok = (sg > 0.0) & (sg < 1.0)
    all_ok = bool(np.all(ok))
    sg_safe = sg if all_ok else np.where(ok, sg, 0.5)
    cg = np.sqrt(1.0 - sg_safe * sg_safe)
    h_tr = r * (1.0 - cg)
    inside = h <= h_tr
    s_arc = np.sqrt(np.maximum(h * (2.0 * r - h), 0.0))
    s_climb = r * sg_safe + (h - h_tr) * cg / sg_safe
    out = choose(inside, s_arc, s_climb) if np.ndim(inside) == 1 else np.where(inside, s_arc, s_climb)
    if not all_ok:
        out = np.where(ok, out, np.nan)
    return float(out) if np.ndim(out) == 0 else out


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
