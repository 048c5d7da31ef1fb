"""Drag polar, ground effect, lift and drag forces, stall and takeoff speeds.

References
----------
.. [1] J. D. Anderson, *Aircraft Performance and Design*, McGraw-Hill, 1999, §2.9 (drag
   polar), §6.7.1 Eq. 6.77 (McCormick ground-effect factor), Example 6.6.
.. [2] B. W. McCormick, *Aerodynamics, Aeronautics, and Flight Mechanics*, Wiley, 1979
   (ground-effect factor, as quoted in [1]).
.. [3] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §12.6 (induced drag
   factor), §17.8 (takeoff speeds: V_LOF ≈ 1.1 V_stall, V_climb ≈ 1.2 V_stall).
"""

from __future__ import annotations

import numpy as np

from fieldlimits.physics import constants as c
from fieldlimits.physics.compiled import kernel


def aspect_ratio(wing_span_m, wing_area_m2):
    """Wing aspect ratio.

    Parameters
    ----------
    wing_span_m : array_like
        Wing span b. [m]
    wing_area_m2 : array_like
        Reference wing area S. [m²]

    Returns
    -------
    numpy.ndarray or float
        Aspect ratio AR = b²/S. [–]

    Notes
    -----
    AR = b² / S.

    References
    ----------
    .. [1] Anderson (1999), §2.9.
    """
    return np.asarray(wing_span_m, dtype=float) ** 2 / np.asarray(wing_area_m2, dtype=float)


def induced_drag_factor(oswald_efficiency, aspect_ratio):
    """Induced-drag factor K of the parabolic drag polar.

    Parameters
    ----------
    oswald_efficiency : array_like
        Span (Oswald) efficiency e. [–]
    aspect_ratio : array_like
        Wing aspect ratio AR. [–]

    Returns
    -------
    numpy.ndarray or float
        K = 1/(pi e AR). [–]

    Notes
    -----
    C_D = C_D0 + K C_L², K = 1/(pi e AR).

    References
    ----------
    .. [1] Anderson (1999), Eq. 2.47.
    .. [3] Raymer, §12.6.
    """
    return 1.0 / (np.pi * np.asarray(oswald_efficiency, dtype=float) * np.asarray(aspect_ratio, dtype=float))


def ground_effect_factor(wing_height_m, wing_span_m):
    """McCormick's ground-effect factor on induced drag.

    Parameters
    ----------
    wing_height_m : array_like
        Height of the wing above the ground h. [m]
    wing_span_m : array_like
        Wing span b. [m]

    Returns
    -------
    numpy.ndarray or float
        phi, the factor on the induced drag in ground effect (0 on the ground, → 1 far
        from it). [–]

    Notes
    -----
    phi = (16 h/b)² / (1 + (16 h/b)²).

    References
    ----------
    .. [1] Anderson (1999), Eq. 6.77.
    .. [2] McCormick (1979).
    """
    x = (16.0 * np.asarray(wing_height_m, dtype=float) / np.asarray(wing_span_m, dtype=float)) ** 2
    return x / (1.0 + x)


def drag_coefficient(cd0, induced_factor, cl, ground_effect=1.0):
    """Drag coefficient from the parabolic polar, with ground effect on the induced part.

    Parameters
    ----------
    cd0 : array_like
        Zero-lift drag coefficient of the configuration (clean + gear + flaps). [–]
    induced_factor : array_like
        Induced-drag factor K. [–]
    cl : array_like
        Lift coefficient. [–]
    ground_effect : array_like, optional
        Ground-effect factor phi (1 = out of ground effect). [–]

    Returns
    -------
    numpy.ndarray or float
        C_D = C_D0 + phi K C_L². [–]

    Notes
    -----
    C_D = C_D0 + phi K C_L² ([1] Eq. 6.78 with Eq. 6.77).

    References
    ----------
    .. [1] Anderson (1999), §6.7.1.
    """
    cl = np.asarray(cl, dtype=float)
    return np.asarray(cd0, dtype=float) + np.asarray(ground_effect, dtype=float) * np.asarray(
        induced_factor, dtype=float
    ) * cl * cl


def ground_roll_drag_coefficient(cd0_clean, cd0_gear, cd0_takeoff_flaps, oswald_efficiency,
                                 wing_span_m, wing_area_m2, wing_height_m, cl_ground_roll):
    """Drag coefficient during the ground roll, in ground effect.

    Parameters
    ----------
    cd0_clean : array_like
        Zero-lift drag coefficient, clean. [–]
    cd0_gear : array_like
        Increment for the extended landing gear. [–]
    cd0_takeoff_flaps : array_like
        Increment for takeoff flaps. [–]
    oswald_efficiency : array_like
        Span efficiency e. [–]
    wing_span_m : array_like
        Span. [m]
    wing_area_m2 : array_like
        Reference area. [m²]
    wing_height_m : array_like
        Wing height above the runway. [m]
    cl_ground_roll : array_like
        Lift coefficient during the roll. [–]

    Returns
    -------
    numpy.ndarray or float
        C_D during the roll. [–]

    Notes
    -----
    C_D = (C_D0,clean + ΔC_D0,gear + ΔC_D0,flaps) + phi(h/b) C_L² / (pi e AR).

    References
    ----------
    .. [1] Anderson (1999), Eqs. 6.77–6.78, Example 6.6.
    """
    k = induced_drag_factor(oswald_efficiency, aspect_ratio(wing_span_m, wing_area_m2))
    phi = ground_effect_factor(wing_height_m, wing_span_m)
    cd0 = np.asarray(cd0_clean, dtype=float) + np.asarray(cd0_gear, dtype=float) + np.asarray(
        cd0_takeoff_flaps, dtype=float)
    return drag_coefficient(cd0, k, cl_ground_roll, phi)


def aero_force_n(coefficient, density_kg_m3, wing_area_m2, airspeed_mps):
    """Lift or drag force on the airspeed, signed so that a reversed airflow reverses it.

    Parameters
    ----------
    coefficient : array_like
        Force coefficient (C_L or C_D). [–]
    density_kg_m3 : array_like
        Air density. [kg/m³]
    wing_area_m2 : array_like
        Reference area. [m²]
    airspeed_mps : array_like
        True airspeed, negative when the air comes from behind (tailwind at low speed). [m/s]

    Returns
    -------
    numpy.ndarray or float
        F = ½ rho S C V|V|. [N]

    Notes
    -----
    F = ½ rho S C V |V|.

    References
    ----------
    .. [1] Anderson (1999), §2.3 (dynamic pressure).
    """
    v = np.asarray(airspeed_mps, dtype=float)
    return 0.5 * np.asarray(density_kg_m3, dtype=float) * np.asarray(wing_area_m2, dtype=float) * np.asarray(
        coefficient, dtype=float) * v * np.abs(v)


def stall_speed_mps(mass_kg, density_kg_m3, wing_area_m2, cl_max):
    """Stall speed (true airspeed) in 1 g flight.

    Parameters
    ----------
    mass_kg : array_like
        Aircraft mass. [kg]
    density_kg_m3 : array_like
        Air density. [kg/m³]
    wing_area_m2 : array_like
        Reference area. [m²]
    cl_max : array_like
        Maximum lift coefficient of the configuration (takeoff flaps). [–]

    Returns
    -------
    numpy.ndarray or float
        V_stall = sqrt(2 m g/(rho S C_Lmax)), true airspeed. [m/s]

    Notes
    -----
    V_stall = sqrt(2 W / (rho S C_Lmax)).

    References
    ----------
    .. [1] Anderson (1999), Eq. 5.67.
    """
    return np.sqrt(
        2.0 * np.asarray(mass_kg, dtype=float) * c.G0
        / (np.asarray(density_kg_m3, dtype=float) * np.asarray(wing_area_m2, dtype=float)
           * np.asarray(cl_max, dtype=float))
    )


def takeoff_speeds_mps(stall_speed_mps, vr_over_vs, vlof_over_vs, v2_over_vs):
    """Rotation, lift-off and screen speeds as multiples of the stall speed.

    Parameters
    ----------
    stall_speed_mps : array_like
        Stall speed (true airspeed). [m/s]
    vr_over_vs : array_like
        VR / V_stall of the type. [–]
    vlof_over_vs : array_like
        V_LOF / V_stall of the type (≈ 1.1). [–]
    v2_over_vs : array_like
        V2 / V_stall of the type (≈ 1.2; ≥ 1.13 V_SR by 14 CFR 25.107). [–]

    Returns
    -------
    vr_mps, v_lof_mps, v2_mps : numpy.ndarray or float
        True airspeeds. [m/s]

    Notes
    -----
    V_x = (V_x / V_stall) · V_stall.

    References
    ----------
    .. [3] Raymer, §17.8.
    .. [4] 14 CFR 25.107.
    """
    vs = np.asarray(stall_speed_mps, dtype=float)
    return (vs * np.asarray(vr_over_vs, dtype=float), vs * np.asarray(vlof_over_vs, dtype=float),
            vs * np.asarray(v2_over_vs, dtype=float))


@kernel
def _scheduled_speed_one(mass, stall_denominator, vr_over_vs, vx_over_vs, vmcg):
    """One case of :func:`physics.enginefailure.scheduled_speeds_mps`, for compiled kernels:
    V_S = sqrt(2 m g/(rho S C_Lmax)) (``stall_denominator`` = rho S C_Lmax) and the speed
    (V_x/V_S) V_S raised by max(1, V_MCG/VR) (NaN where that is NaN). Returns
    (V_S, VR, V_x, raised). [m/s]"""
    vs = np.sqrt(2.0 * mass * c.G0 / stall_denominator)
    vr = vs * vr_over_vs
    ratio = vmcg / vr
    raise_by = ratio if (ratio != ratio or ratio > 1.0) else 1.0
    return vs, vr * raise_by, vs * vx_over_vs * raise_by, raise_by > 1.0
