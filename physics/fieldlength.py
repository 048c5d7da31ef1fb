"""Field lengths for a mass: the all-engines takeoff run and takeoff distance.

All-engines takeoff at a trial mass (14 CFR 25.113, all-engines part):

1. stall speed for the mass and the air density with the takeoff C_Lmax; V_R, V_LOF, V2 as
   the type's ratios of it;
2. ground run from brake release to V_LOF (thrust with speed, ground effect, rolling
   friction, slope, wind) — :func:`physics.groundrun.ground_run_for_thrust_law`;
3. airborne segment to the screen height (transition arc at V_TR = ½ (V_LOF + V2), i.e.
   Raymer's 1.15 V_stall for 1.1 / 1.2, then climb), drag out of ground effect with the
   takeoff C_D0 (gear still down) and C_L for 1 g; ground distance with the wind;
4. takeoff distance = ground run + airborne; takeoff run = ground run + half the airborne
   distance when there is a clearway (TODA > TORA), else the takeoff distance.

The regulatory checks multiply these by 1.15 (:data:`ALL_ENGINES_FACTOR`). The one-engine-
inoperative distances (and accelerate-stop) are separate requirements in
``physics.weightlimit`` and are built from the same ground-run primitives.

References
----------
.. [1] 14 CFR Part 25, §25.113(a)(2) and (b)(2) (EASA CS 25.113): 115 % of the all-engines
   distance to 35 ft, and of the distance to the point midway between lift-off and 35 ft.
.. [2] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.8.
.. [3] J. D. Anderson, *Aircraft Performance and Design*, McGraw-Hill, 1999, §6.7.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from fieldlimits.physics import aerodynamics as aero
from fieldlimits.physics import airborne
from fieldlimits.physics import constants as c
from fieldlimits.physics import groundrun
from fieldlimits.physics import takeoffevents

#: Factor on all-engines takeoff distance and run, 14 CFR 25.113(a)(2), (b)(2). [–]
ALL_ENGINES_FACTOR = 1.15

#: Reason codes of a takeoff (ground-run codes plus airborne.REASON_NO_CLIMB).
REASONS = groundrun.REASONS + ("no_climb",)


class TakeoffResult(NamedTuple):
    """All-engines takeoff at one mass (true airspeeds; unfactored distances).

    Attributes: ``v_stall_mps``, ``vr_mps``, ``v_lof_mps``, ``v2_mps`` [m/s TAS];
    ``ground_run_m``, ``airborne_m`` (ground distance lift-off → screen), ``takeoff_distance_m``,
    ``takeoff_run_m`` [m]; ``climb_sine`` [–] at V_TR; ``time_to_lift_off_s`` [s];
    ``reason`` (``REASONS`` code, 0 = ok).
    """

    v_stall_mps: np.ndarray
    vr_mps: np.ndarray
    v_lof_mps: np.ndarray
    v2_mps: np.ndarray
    ground_run_m: np.ndarray
    airborne_m: np.ndarray
    takeoff_distance_m: np.ndarray
    takeoff_run_m: np.ndarray
    climb_sine: np.ndarray
    time_to_lift_off_s: np.ndarray
    reason: np.ndarray


def takeoff_run_m(ground_run_m, airborne_m, clearway_m):
    """Takeoff run from the ground run and airborne distance.

    Parameters
    ----------
    ground_run_m : array_like
        Brake release to lift-off. [m]
    airborne_m : array_like
        Lift-off to the screen height (ground distance). [m]
    clearway_m : array_like
        Clearway length, TODA − TORA (≤ 0: none). [m]

    Returns
    -------
    numpy.ndarray or float
        Ground run + ½ airborne with a clearway, else ground run + airborne. [m]

    Notes
    -----
    14 CFR 25.113(b): with a clearway the takeoff run ends midway between the lift-off point
    and the point where the screen height is reached; without one it equals the takeoff
    distance.

    References
    ----------
    .. [1] 14 CFR 25.113(b)–(c).
    """
    air = np.asarray(airborne_m, dtype=float)
    return np.asarray(ground_run_m, dtype=float) + np.where(np.asarray(clearway_m) > 0.0, 0.5 * air, air)


def all_engines_takeoff(*, thrust_law, mass_kg, wing_area_m2, density_kg_m3, cd_ground, cl_ground, mu,
                        cl_max, vr_over_vs, vlof_over_vs, v2_over_vs, cd0_airborne, induced_factor,
                        headwind_mps=0.0, slope=0.0, screen_height_m=c.SCREEN_HEIGHT_35FT_M, clearway_m=0.0,
                        load_factor=airborne.TRANSITION_LOAD_FACTOR, rotation_time_s=0.0, nodes=None,
                        ground_terms=None, rotation_duration_s=0.0):
    """All-engines takeoff of n cases at trial masses.

    Parameters
    ----------
    thrust_law : physics.thrust.ThrustLaw
        All-engines takeoff thrust for the day.
    mass_kg : array_like
        Trial mass. [kg]
    wing_area_m2 : array_like
        Reference area. [m²]
    density_kg_m3 : array_like
        Air density. [kg/m³]
    cd_ground, cl_ground : array_like
        Drag (with ground effect) and lift coefficients on the ground roll. [–]
    mu : array_like
        Rolling friction. [–]
    cl_max : array_like
        Takeoff-flap maximum lift coefficient. [–]
    vr_over_vs, vlof_over_vs, v2_over_vs : array_like
        Speed ratios to the stall speed. [–]
    cd0_airborne : array_like
        Zero-lift drag in the air (clean + gear + takeoff flaps). [–]
    induced_factor : array_like
        K = 1/(pi e AR). [–]
    headwind_mps : array_like, optional
        Factored headwind (negative: tailwind). [m/s]
    slope : array_like, optional
        Gradient, + uphill. [–]
    screen_height_m : array_like, optional
        Screen height. [m]
    clearway_m : array_like, optional
        TODA − TORA. [m]
    load_factor : array_like, optional
        Transition-arc load factor. [–]
    rotation_time_s : array_like, optional
        Free-roll allowance at V_LOF added to the ground run (Anderson's N; 0 by default,
        since the roll is integrated up to V_LOF itself, rotation from VR included). [s]
    nodes : int, optional
        Gauss–Legendre nodes for propeller cases (default: closed form where it applies,
        see :func:`physics.groundrun.ground_run_for_thrust_law`). [–]
    ground_terms : physics.groundrun.GroundRunTerms, optional
        :func:`physics.groundrun.ground_run_terms` of these cases (thrust law, area,
        density, ``cd_ground``, ``cl_ground``, ``mu``, ``slope``), when a search over the mass
        has computed them once.
    rotation_duration_s : array_like, optional
        Time from VR to lift-off at the type's pitch rate
        (:func:`physics.takeoffevents.rotation_time_s`); V_LOF is then at least
        VR + a(VR) t (0: V_LOF from its ratio alone). [s]

    Returns
    -------
    TakeoffResult
        Speeds (TAS) and unfactored distances; NaN with a reason code where the aircraft
        cannot reach V_LOF or cannot climb.

    Notes
    -----
    V_s = sqrt(2 m g/(rho S C_Lmax)); ground run ∫(V − w) dV/a(V) to V_LOF;
    V_TR = ½ (V_LOF + V2); C_L = 2 m g/(rho V_TR² S); sin gamma = (T(V_TR) − D)/W;
    airborne per Raymer Eqs. 17.105–17.112, times (V_TR − w)/V_TR for the wind.

    References
    ----------
    .. [2] Raymer, §17.8. .. [3] Anderson (1999), §6.7. .. [1] 14 CFR 25.113.
    """
    m = np.asarray(mass_kg, dtype=float)
    if not m.flags.writeable:  # one copy for the compiled passes below (each would make its own)
        m = np.array(m)
    rho = np.asarray(density_kg_m3, dtype=float)
    s = np.asarray(wing_area_m2, dtype=float)
    w = np.asarray(headwind_mps, dtype=float)
    vs = aero.stall_speed_mps(m, rho, s, cl_max)
    vr, vlof, v2 = aero.takeoff_speeds_mps(vs, vr_over_vs, vlof_over_vs, v2_over_vs)
    if np.any(np.asarray(rotation_duration_s) > 0.0):
        terms = ground_terms if ground_terms is not None else groundrun.ground_run_terms(
            thrust_law, wing_area_m2=s, density_kg_m3=rho, cd=cd_ground, cl=cl_ground, mu=mu, slope=slope)
        a_vr = (thrust_law.thrust_n(vr) - terms.drag_term_kg_m * vr * np.abs(vr)) / m - terms.resistance_mps2
        vlof = takeoffevents.rotation_liftoff_speed_mps(vr, vlof, a_vr, rotation_duration_s)
        v2 = np.fmax(v2, vlof)  # for the transition speed only when the rotation lifts off above V2
    if ground_terms is None:
        gr = groundrun.ground_run_for_thrust_law(thrust_law, mass_kg=m, wing_area_m2=s, density_kg_m3=rho,
                                                 cd=cd_ground, cl=cl_ground, mu=mu, v_lof_mps=vlof, headwind_mps=w,
                                                 slope=slope, nodes=nodes)
    else:
        gr = groundrun.ground_run_from_terms(ground_terms, mass_kg=m, v_lof_mps=vlof, headwind_mps=w, nodes=nodes)
    ground = gr.distance_m
    if np.any(np.asarray(rotation_time_s) != 0.0):
        ground = ground + groundrun.rotation_allowance_m(vlof, w, rotation_time_s)
    v_tr = 0.5 * (vlof + v2)
    sin_g, air, air_ground = airborne.climb_out(
        thrust_law, mass_kg=m, density_kg_m3=rho, wing_area_m2=s, v_transition_mps=v_tr, cd0=cd0_airborne,
        induced_factor=induced_factor, screen_height_m=screen_height_m, headwind_mps=w, load_factor=load_factor)
    reason = np.where((gr.reason == groundrun.REASON_OK) & np.isnan(air), airborne.REASON_NO_CLIMB, gr.reason)
    tod = ground + air_ground
    tor = takeoff_run_m(ground, air_ground, clearway_m)
    time = gr.time_s + np.asarray(rotation_time_s, dtype=float)
    return TakeoffResult(vs, vr, vlof, v2, ground, air_ground, tod, tor, sin_g, time, reason)
