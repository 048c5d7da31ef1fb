"""The takeoff event sequence: failure recognition, the stop actions, rotation, line-up.

The ground-run integrals of :mod:`physics.groundrun` give the distance between two airspeeds
for one configuration. A real takeoff changes configuration on a time line, not at a speed:

Engine failure and recognition
    The engine fails at V_EF; the crew recognises it and takes the first action at V1, one
    recognition interval t_r later (common flight-test practice: 1 s). In between the aircraft
    accelerates on the remaining engines: V1 = V_EF + a_oei(V_EF) t_r, V_EF ≥ V_MCG,
    V1 ≤ VR (14 CFR 25.107(a)(1), (a)(2)).
Stop actions
    From V1 the deceleration devices are applied one after another, one action interval Δ
    apart (common flight-test practice: 1 s): brakes at V1 (thrust still at takeoff power, no
    lift dumpers), thrust to idle at Δ (spooling down: the mean of takeoff and idle thrust over
    the next interval), lift dumpers at 2Δ, then full braking with idle thrust to rest. The
    2 s distance at V1 of 14 CFR 25.109(a) is added on top, as before. Both pieces take
    their accelerations at V1.
Rotation
    From VR the nose is raised at a pitch rate q to the lift-off attitude θ; the rotation
    takes t_rot = θ/q, and V_LOF is at least VR + a(VR) t_rot (and never below the scheduled
    ratio, which stands for the minimum unstick margin of 25.107(e)).
Line-up
    The runway used to align the aircraft is subtracted from TORA, TODA and ASDA.

Each timed piece is short (about a second), so it is taken at constant acceleration, the one
at the start of the piece: v₁ = v₀ + a Δt, s = (v₀ − w) Δt + ½ a Δt² (w: headwind, so
v − w is the ground speed) — the distance one computes by hand. With every time set to 0 the
sequence is the idealised one (failure recognised at V1, every stop action at V1, V_LOF from
the ratio) and results equal those of the earlier model to the bit.

References
----------
.. [1] 14 CFR Part 25, §25.107 (V_EF, V1, VR, V_LOF), §25.109 (accelerate-stop, 2 s at V1),
   §25.111 (takeoff path); EASA CS-25 identical in these provisions.
.. [2] FAA Advisory Circular 25-7 (flight test guide), accelerate-stop time delays (1 s per
   action after V1) and rotation practice (common flight-test practice).
.. [3] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.8 (ground roll).
.. [4] EASA Air Operations, AMC1 CAT.POL.A.205 (loss of runway length due to alignment; from
   memory); ICAO Annex 14, Vol. I (declared distances).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from fieldlimits.physics import constants as c
from fieldlimits.physics import groundrun
from fieldlimits.physics.compiled import kernel


def ground_acceleration_mps2(thrust_n, *, mass_kg, airspeed_mps, density_kg_m3, wing_area_m2, cd, cl, mu,
                             slope=0.0):
    """Acceleration on the ground roll at one airspeed.

    Parameters
    ----------
    thrust_n : array_like
        Total thrust at that airspeed. [N]
    mass_kg : array_like
        Mass. [kg]
    airspeed_mps : array_like
        True airspeed. [m/s]
    density_kg_m3 : array_like
        Air density. [kg/m³]
    wing_area_m2 : array_like
        Reference area. [m²]
    cd, cl : array_like
        Drag and lift coefficients of the configuration. [–]
    mu : array_like
        Friction coefficient (rolling or braking). [–]
    slope : array_like, optional
        Gradient, + uphill. [–]

    Returns
    -------
    numpy.ndarray
        dV/dt (negative: decelerating). [m/s²]

    Notes
    -----
    a = [T − ½ rho V|V| S (C_D − mu C_L)]/m − g (mu cos γ + sin γ) (Raymer Eq. 17.100).

    References
    ----------
    .. [3] Raymer, §17.8, Eq. 17.100.
    """
    v = np.asarray(airspeed_mps, dtype=float)
    sin_g, cos_g = groundrun.slope_sin_cos(slope)
    mu = np.asarray(mu, dtype=float)
    drag = 0.5 * np.asarray(density_kg_m3, dtype=float) * v * np.abs(v) * np.asarray(wing_area_m2, dtype=float) \
        * (np.asarray(cd, dtype=float) - mu * np.asarray(cl, dtype=float))
    return (np.asarray(thrust_n, dtype=float) - drag) / np.asarray(mass_kg, dtype=float) - c.G0 * (mu * cos_g + sin_g)


def timed_piece(v_start_mps, accel_mps2, duration_s, headwind_mps=0.0):
    """Speed and ground distance after a short piece at constant acceleration.

    Parameters
    ----------
    v_start_mps : array_like
        True airspeed at the start. [m/s]
    accel_mps2 : array_like
        Acceleration over the piece (negative: braking). [m/s²]
    duration_s : array_like
        Length of the piece. [s]
    headwind_mps : array_like, optional
        Headwind (the aircraft is at rest at V = w). [m/s]

    Returns
    -------
    v_end_mps : numpy.ndarray
        True airspeed at the end (not below w: a stop inside the piece ends at rest). [m/s]
    distance_m : numpy.ndarray
        Ground distance covered. [m]

    Notes
    -----
    v₁ = v₀ + a t, s = (v₀ − w) t + ½ a t²; where a < 0 stops the aircraft within t
    (t_stop = (v₀ − w)/(−a) < t): v₁ = w, s = (v₀ − w)²/(2 |a|).

    References
    ----------
    .. [2] FAA AC 25-7 (time delays taken at constant speed change, common practice).
    """
    return _per_case(_timed_pieces, (v_start_mps, accel_mps2, duration_s, headwind_mps), 2)


def _per_case(loop, args, outputs):
    """``loop`` (a compiled kernel over one-dimensional arrays) on ``args`` broadcast to each
    other; returns its ``outputs`` arrays in the broadcast shape."""
    args = [np.asarray(x, dtype=float) for x in args]
    shape = np.broadcast_shapes(*(x.shape for x in args))
    flat = groundrun._kernel_args(args, shape)
    out = [np.empty(flat[0].shape) for _ in range(outputs)]
    loop(*flat, *out)
    return tuple(x.reshape(shape) for x in out)


@kernel
def _timed_piece_one(v0, a, t, w):
    """:func:`timed_piece` for one case. Returns (v_end, distance)."""
    g0 = v0 - w
    v1 = v0 + a * t
    s = g0 * t + 0.5 * a * t * t
    if v1 < w:  # only a deceleration can take the ground speed below zero
        s = g0 * g0 / (2.0 * abs(a))
        v1 = w
    return v1, s


@kernel
def _timed_pieces(v0, a, t, w, v_out, s_out):
    """:func:`timed_piece` per case, in place."""
    for j in range(v0.shape[0]):
        v_out[j], s_out[j] = _timed_piece_one(v0[j], a[j], t[j], w[j])


def recognition_v1_mps(v_ef_mps, accel_one_out_mps2, recognition_s):
    """V1 one recognition interval after the engine failure.

    Parameters
    ----------
    v_ef_mps : array_like
        Engine-failure speed V_EF, true airspeed. [m/s]
    accel_one_out_mps2 : array_like
        Acceleration with the remaining engines at V_EF. [m/s²]
    recognition_s : array_like
        Recognition interval t_r. [s]

    Returns
    -------
    numpy.ndarray
        V1 = V_EF + a_oei t_r; exactly V_EF where t_r = 0. [m/s]

    Notes
    -----
    14 CFR 25.107(a)(2): V1 is not less than V_EF plus the speed gained with the critical
    engine inoperative during the time between the failure and the pilot's first action.

    References
    ----------
    .. [1] 14 CFR 25.107(a)(2). .. [2] FAA AC 25-7 (1 s recognition, common practice).
    """
    t = np.asarray(recognition_s, dtype=float)
    v = np.asarray(v_ef_mps, dtype=float)
    return np.where(t > 0.0, v + np.asarray(accel_one_out_mps2, dtype=float) * t, v)


def rotation_time_s(pitch_deg, rate_deg_per_s):
    """Time from VR to lift-off at a constant pitch rate.

    Parameters
    ----------
    pitch_deg : array_like
        Attitude gained from the ground roll to lift-off. [deg]
    rate_deg_per_s : array_like
        Pitch rate. [deg/s]

    Returns
    -------
    numpy.ndarray
        t_rot = θ/q (0 where θ = 0). [s]

    Notes
    -----
    t_rot = θ / q.

    References
    ----------
    .. [2] FAA AC 25-7 (normal rotation rate about 3 °/s, common practice).
    """
    pitch = np.asarray(pitch_deg, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(pitch > 0.0, pitch / np.asarray(rate_deg_per_s, dtype=float), 0.0)


def rotation_liftoff_speed_mps(vr_mps, scheduled_vlof_mps, accel_at_vr_mps2, rotation_s):
    """Lift-off speed after the rotation, never below the scheduled one.

    Parameters
    ----------
    vr_mps : array_like
        Rotation speed. [m/s]
    scheduled_vlof_mps : array_like
        V_LOF from the speed ratio. [m/s]
    accel_at_vr_mps2 : array_like
        Ground-roll acceleration at VR (all engines, or one engine out). [m/s²]
    rotation_s : array_like
        Rotation time t_rot. [s]

    Returns
    -------
    numpy.ndarray
        max(V_LOF scheduled, VR + a(VR) t_rot); the scheduled V_LOF where t_rot = 0. [m/s]

    Notes
    -----
    V_LOF = max(V_LOF,ratio, VR + a(VR) t_rot).

    References
    ----------
    .. [1] 14 CFR 25.107(e). .. [2] FAA AC 25-7.
    """
    t = np.asarray(rotation_s, dtype=float)
    sched = np.asarray(scheduled_vlof_mps, dtype=float)
    rotated = np.asarray(vr_mps, dtype=float) + np.asarray(accel_at_vr_mps2, dtype=float) * t
    return np.where(t > 0.0, np.fmax(sched, rotated), sched)


def stop_actions(v1_mps, *, interval_s, accel_brakes_mps2, accel_idle_mps2, headwind_mps=0.0):
    """Speed and distance from V1 until the last stop action (lift dumpers) is in.

    Parameters
    ----------
    v1_mps : array_like
        V1, where the brakes go on. [m/s]
    interval_s : array_like
        Time between actions Δ. [s]
    accel_brakes_mps2 : array_like
        Acceleration at V1 braking without lift dumpers at takeoff thrust. [m/s²]
    accel_idle_mps2 : array_like
        Acceleration at V1 braking without lift dumpers at idle thrust. [m/s²]
    headwind_mps : array_like, optional
        Headwind. [m/s]

    Returns
    -------
    v_mps : numpy.ndarray
        Airspeed when the lift dumpers are in (V1 where Δ = 0). [m/s]
    distance_m : numpy.ndarray
        Ground distance over the 2Δ (0 where Δ = 0). [m]

    Notes
    -----
    First piece (brakes, takeoff thrust) at a₁ for Δ; second piece (thrust spooling down)
    at the mean of the takeoff-thrust and idle accelerations for Δ; both accelerations taken
    at V1 (the speed changes by a few m/s over the two pieces); each by :func:`timed_piece`.

    References
    ----------
    .. [1] 14 CFR 25.109(a). .. [2] FAA AC 25-7 (1 s between actions, common practice).
    """
    return _per_case(_stop_actions_all, (v1_mps, interval_s, accel_brakes_mps2, accel_idle_mps2, headwind_mps), 2)


@kernel
def _stop_actions_one(v1, dt, a_1, a_idle, w):
    """:func:`stop_actions` for one case. Returns (speed, distance)."""
    if not dt > 0.0:
        return v1, 0.0
    v_a, s_a = _timed_piece_one(v1, a_1, dt, w)
    v_b, s_b = _timed_piece_one(v_a, 0.5 * (a_1 + a_idle), dt, w)
    return v_b, s_a + s_b


@kernel
def _stop_actions_all(v1, dt, a_1, a_idle, w, v_out, s_out):
    """:func:`stop_actions` per case, in place."""
    for j in range(v1.shape[0]):
        v_out[j], s_out[j] = _stop_actions_one(v1[j], dt[j], a_1[j], a_idle[j], w[j])


def stop_actions_slope(*, interval_s, accel_brakes_mps2, accel_brakes_slope, accel_idle_slope):
    """How the end speed and distance of :func:`stop_actions` move with V1.

    Parameters
    ----------
    interval_s : array_like
        Time between actions Δ. [s]
    accel_brakes_mps2 : array_like
        Acceleration at V1 braking at takeoff thrust, a₁ (unused: kept for symmetry). [m/s²]
    accel_brakes_slope, accel_idle_slope : array_like
        da/dV of the two accelerations at V1. [1/s]

    Returns
    -------
    speed_slope : numpy.ndarray
        dv_end/dV1 (1 where Δ = 0). [–]
    distance_slope : numpy.ndarray
        ds/dV1 (0 where Δ = 0). [s]

    Notes
    -----
    With ā = ½ (a₁ + a_idle) and primes for d/dV1: v_a = V1 + a₁ Δ, s_a = (V1 − w) Δ + ½ a₁ Δ²,
    v_b = v_a + ā Δ, s_b = (v_a − w) Δ + ½ ā Δ²; so dv_b/dV1 = 1 + (a₁' + ā') Δ and
    ds/dV1 = Δ + ½ a₁' Δ² + (1 + a₁' Δ) Δ + ½ ā' Δ² (no stop inside the pieces).

    References
    ----------
    .. [1] 14 CFR 25.109(a). .. [2] FAA AC 25-7.
    """
    return _per_case(_stop_actions_slopes, (interval_s, accel_brakes_slope, accel_idle_slope), 2)


@kernel
def _stop_actions_slope_one(dt, d1, d_idle):
    """:func:`stop_actions_slope` for one case. Returns (speed slope, distance slope)."""
    if not dt > 0.0:
        return 1.0, 0.0
    d_mean = 0.5 * (d1 + d_idle)
    return 1.0 + (d1 + d_mean) * dt, dt + 0.5 * d1 * dt * dt + (1.0 + d1 * dt) * dt + 0.5 * d_mean * dt * dt


@kernel
def _stop_actions_slopes(dt, d1, d_idle, speed_out, dist_out):
    """:func:`stop_actions_slope` per case, in place."""
    for j in range(dt.shape[0]):
        speed_out[j], dist_out[j] = _stop_actions_slope_one(dt[j], d1[j], d_idle[j])


def available_after_lineup_m(declared_m, lineup_allowance_m):
    """A declared distance less the runway used to line up.

    Parameters
    ----------
    declared_m : array_like
        TORA, TODA or ASDA. [m]
    lineup_allowance_m : array_like
        Runway used to align the aircraft. [m]

    Returns
    -------
    numpy.ndarray
        declared − allowance (the declared distance itself where the allowance is 0). [m]

    Notes
    -----
    Distance available = declared − line-up allowance.

    References
    ----------
    .. [4] EASA AMC 25.113/CS 25 line-up allowance; ICAO Annex 14, Vol. I, §3.8 (declared
       distances) — the allowance is the operator's figure for the runway entry.
    """
    d = np.asarray(declared_m, dtype=float)
    lu = np.asarray(lineup_allowance_m, dtype=float)
    return np.where(lu > 0.0, d - lu, d)


def site_after_lineup(site, lineup_allowance_m):
    """A site with the line-up allowance taken off TORA, TODA and ASDA.

    Parameters
    ----------
    site : physics.weightlimit.Site
        Per-case runway, day and wind (SI).
    lineup_allowance_m : array_like
        Runway used to align the aircraft. [m]

    Returns
    -------
    physics.weightlimit.Site
        ``site`` itself where no allowance is set, else a copy with the three distances
        reduced by :func:`available_after_lineup_m`.

    Notes
    -----
    TORA, TODA, ASDA each less the allowance; clearway and stopway unchanged.

    References
    ----------
    .. [4] EASA AMC1 CAT.POL.A.205 (from memory).
    """
    if not np.any(np.asarray(lineup_allowance_m, dtype=float) > 0.0):
        return site
    return dataclasses.replace(site, **{k: available_after_lineup_m(getattr(site, k), lineup_allowance_m)
                                        for k in ("tora_m", "toda_m", "asda_m")})
