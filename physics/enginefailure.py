"""Engine failure on takeoff: continued takeoff, accelerate-stop, V1 choice, balanced field.

A transport-category takeoff must allow for one engine failing on the ground roll. If it fails
at or above the decision speed V1 the crew continues: the remaining engines carry the aircraft
to lift-off and up to the screen height. If it fails before V1 the crew stops. A runway is
long enough for a mass when a V1 exists for which both are possible inside the declared
distances (14 CFR 25.109, 25.113).

Segments on the ground
----------------------
Every piece of the ground roll has an acceleration that is quadratic in the true airspeed V,

    a(V) = a0 + a1 V + a2 V²,

(thrust quadratic in airspeed, drag and lift on V|V|, friction on W cos(g) − L, slope), so
the distance between two airspeeds is ``ds = (V − w) dV / a(V)`` with the headwind w (ground
speed = V − w; the aircraft is at rest at V = w). The coefficients come from
:func:`physics.groundrun.acceleration_coefficients` and the distances from
:func:`physics.groundrun.segment_distance_m`; this module only strings segments together.

Continued takeoff (one engine inoperative, "go")
    all engines from rest to V1, then N − 1 engines and the engine-out drag increment from V1
    to lift-off; then the airborne segment to the screen height with N − 1 engines.
Accelerate-stop ("stop")
    all engines from rest to V1, then the 2 s at constant V1 of 25.109(a) (recognition and
    reaction are inside it), then braking to rest with idle thrust, the braking friction and
    the lift-dumper lift and drag. Two cases (25.109(a)(1) and (a)(2)): engine failure (the
    failed engine gives no thrust and keeps its drag increment) and all engines (all at idle);
    the greater governs. No reverse-thrust credit, wet or dry.

With engine failure recognised at V1 (V_EF = V1: the failure speed and V1 coincide; the 2 s
carry the delay) the all-engines part cancels between go and stop, and the difference

    h(V1) = [C_go − S_oei(V1 → V_LOF)] − [ASDA − 2 (V1 − w) − S_brake(V1 → w)]

of the go and stop margins rises with V1 (``dh/dV1 = (V1 − w)/a_oei + 2 + (V1 − w)/|a_brake|
> 0``). The best V1 for a mass maximises the smaller margin: it is the root of h, clipped to the
allowed range [V_MCG, VR]. :func:`balanced_v1_mps` finds it with a fixed number of Newton steps
(vectorised; no per-case loop). At the root the go and stop distances are equal when
TODA = ASDA: the balanced V1 and the balanced field length.

Single-engine aircraft have no engine-out case; their accelerate-stop is all engines, and
since no engine failure decides it, V1 is taken as VR: the runway must allow a stop from the
rotation speed (the worst point of the ground roll to abandon a single-engine takeoff;
a conservative planning assumption of ours, not a regulation).

References
----------
.. [1] 14 CFR Part 25, §25.107 (takeoff speeds), §25.109 (accelerate-stop distance, 2 s at V1),
   §25.113 (takeoff distance and takeoff run); EASA CS-25 identical in these provisions.
.. [2] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.8 (ground roll,
   braking, balanced field length).
.. [3] J. D. Anderson, *Aircraft Performance and Design*, McGraw-Hill, 1999, §6.7 (takeoff
   ground roll), §6.8 (braking).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from fieldlimits.physics import aerodynamics
from fieldlimits.physics import constants as c
from fieldlimits.physics.compiled import kernel
from fieldlimits.physics import groundrun
from fieldlimits.physics import takeoffevents

#: Distance allowance of 14 CFR 25.109(a): 2 s at V1 after the stop is begun. [s]
STOP_DELAY_S = 2.0

#: Evaluations of the V1 search from a cold start (6 Newton steps; quadratic convergence
#: reaches 1e-9 m/s in the tests).
V1_ITERATIONS = 7
#: Evaluations from a cold start inside the weight solver's search (its factor and reported
#: figures use :data:`V1_ITERATIONS`).
V1_ITERATIONS_SEARCH = 4
#: Evaluations when started from the V1 predicted from masses more than
#: :data:`WARM_MASS_CHANGE` away (the weight solver's iterations).
V1_ITERATIONS_FAR = 3
#: Evaluations when started from the V1 predicted from nearby masses (the weight solver's
#: iterations).
V1_ITERATIONS_WARM = 3
#: Largest relative mass change since the previous trial (any case) for the warm count. [–]
WARM_MASS_CHANGE = 0.02
#: Evaluations (one Newton step) when every case's mass moved by at most
#: ``CLOSE_MASS_CHANGE`` (the last iterations of the weight solver). [–]
V1_ITERATIONS_CLOSE = 2
CLOSE_MASS_CHANGE = 0.001
#: Inside the weight solver's search (not its closing evaluations), a case's V1 search stops
#: once its Newton step is at most this: the least of the go and stop margins is then within
#: about 1e-6 of its best (its slope in V1 is of the order of 1e-2 s/m), a few hundredths of
#: a kilogram of the limit. [m/s]
V1_STEP_TOL_MPS = 1e-4
#: The same for the solver's closing evaluations (the limiting factor and the reported
#: figures: V1 converged). [m/s]
V1_STEP_TOL_FINAL_MPS = 1e-9
#: Inside the weight solver's search, a case's V1 search also stops once its Newton step is
#: at most this, and takes it without evaluating there: V_EF, V1 and each distance are
#: carried along their slopes in V_EF (the parts of dh/dV_EF, exact). What is left is of the
#: order of the step squared: for a step of 0.05 m/s at most 1.5e-2 m of a distance (half
#: the step squared times the slope of (V − w)/a; 7e-3 m measured on mixed cases) and about
#: 1e-4 m/s of V_EF (Newton's error), as much as the 1e-4 m/s step :data:`V1_STEP_TOL_MPS`
#: leaves. Not where V1 is held at VR or reaches it within the step, nor where a stop
#: action piece comes to rest (their slopes change there). [m/s]
V1_EXTRAPOLATE_MPS = 0.05
#: Start each trial of the weight solver from the V_EF predicted for its mass: the secant
#: through the two previous trials' V_EF (each one Newton step on from its last evaluation),
#: or the previous V_EF. [–]
PREDICT = True


def _accel(coeffs, v):
    a0, a1, a2 = coeffs
    return a0 + (a1 + a2 * v) * v


def _segment_m(coeffs, v_from, v_to, headwind):
    """Ground distance between two airspeeds (delegates to physics.groundrun)."""
    from fieldlimits.physics import groundrun

    a0, a1, a2 = coeffs
    return groundrun.segment_distance_m(a0, a1, a2, v_from, v_to, headwind)


def continued_takeoff_ground_m(*, accel_all, accel_oei, v1_mps, vlof_mps, headwind_mps=0.0):
    """Ground distance from brake release to lift-off with an engine failure at V1.

    Parameters
    ----------
    accel_all : tuple of array_like
        (a0, a1, a2) of the all-engines ground-roll acceleration a = a0 + a1 V + a2 V².
        [m/s², 1/s, 1/m]
    accel_oei : tuple of array_like
        (a0, a1, a2) with one engine inoperative (thrust of N − 1 engines, drag with the
        engine-out increment). [m/s², 1/s, 1/m]
    v1_mps : array_like
        Decision speed V1, true airspeed (``v1 <= vlof``). [m/s]
    vlof_mps : array_like
        Lift-off true airspeed. [m/s]
    headwind_mps : array_like, optional
        Headwind component, negative for a tailwind (already factored). [m/s]

    Returns
    -------
    numpy.ndarray
        Ground distance; NaN where either segment cannot be completed (acceleration reaches
        zero). [m]

    Notes
    -----
    s = ∫_w^V1 (V − w)/a_all(V) dV + ∫_V1^VLOF (V − w)/a_oei(V) dV.

    References
    ----------
    .. [1] 14 CFR 25.113(a)(1) (engine failure at V_EF, here V_EF = V1).
    .. [2] Raymer, §17.8, Eq. 17.100 (equation of motion on the ground).
    """
    w = np.asarray(headwind_mps, dtype=float)
    return _segment_m(accel_all, w, v1_mps, w) + _segment_m(accel_oei, v1_mps, vlof_mps, w)


def accelerate_stop_m(*, accel_all, accel_brake, v1_mps, headwind_mps=0.0, delay_s=STOP_DELAY_S):
    """Accelerate-stop distance: all engines to V1, ``delay_s`` at V1, braking to rest.

    Parameters
    ----------
    accel_all : tuple of array_like
        (a0, a1, a2) of the all-engines ground-roll acceleration. [m/s², 1/s, 1/m]
    accel_brake : tuple of array_like
        (a0, a1, a2) of the braking deceleration (negative acceleration): idle thrust,
        braking friction, lift-dumper lift and drag. [m/s², 1/s, 1/m]
    v1_mps : array_like
        Decision speed V1, true airspeed. [m/s]
    headwind_mps : array_like, optional
        Headwind component, negative for a tailwind. [m/s]
    delay_s : float, optional
        Time at constant V1 counted before braking (2 s in 14 CFR 25.109(a)). [s]

    Returns
    -------
    numpy.ndarray
        Accelerate-stop distance; NaN where V1 cannot be reached or braking cannot stop the
        aircraft. [m]

    Notes
    -----
    s = ∫_w^V1 (V − w)/a_all dV + t_d (V1 − w) + ∫_w^V1 (V − w)/(−a_brake) dV.

    References
    ----------
    .. [1] 14 CFR 25.109(a) (accelerate-stop distance; the distance of 2 s at V1).
    .. [2] Anderson (1999), §6.8 (braking ground roll).
    """
    w = np.asarray(headwind_mps, dtype=float)
    v1 = np.asarray(v1_mps, dtype=float)
    return (
        _segment_m(accel_all, w, v1, w)
        + delay_s * (v1 - w)
        + _segment_m(accel_brake, v1, w, w)
    )


def balanced_v1_mps(
    *,
    go_constant_m,
    asda_m,
    accel_oei,
    accel_brake,
    vlof_mps,
    v1_min_mps,
    v1_max_mps,
    headwind_mps=0.0,
    delay_s=STOP_DELAY_S,
    v1_start_mps=None,
    iterations=V1_ITERATIONS,
):
    """The V1 that balances the continued-takeoff and accelerate-stop margins.

    Parameters
    ----------
    go_constant_m : array_like
        Distance available to the ground part of the continued takeoff: the least of
        TODA minus the one-engine airborne distance and TORA minus its takeoff-run share
        (see :func:`go_constant_m`). [m]
    asda_m : array_like
        Accelerate-stop distance available. [m]
    accel_oei : tuple of array_like
        (a0, a1, a2) of the one-engine-inoperative ground acceleration. [m/s², 1/s, 1/m]
    accel_brake : tuple of array_like
        (a0, a1, a2) of the braking acceleration (negative) of the governing stop case.
        [m/s², 1/s, 1/m]
    vlof_mps : array_like
        Lift-off true airspeed. [m/s]
    v1_min_mps, v1_max_mps : array_like
        Allowed V1 range, true airspeed ([V_MCG, VR]). [m/s]
    headwind_mps : array_like, optional
        Headwind component. [m/s]
    delay_s : float, optional
        Time at V1 before braking. [s]
    v1_start_mps : array_like, optional
        First guess (e.g. the V1 of a previous, nearby mass); default mid-range. [m/s]
    iterations : int, optional
        Fixed number of vectorised Newton steps. [–]

    Returns
    -------
    numpy.ndarray
        V1 in [v1_min, v1_max]: the root of h (see Notes), or the end of the range nearer
        to it. [m/s]

    Notes
    -----
    The go margin minus the stop margin (the all-engines part to V1 cancels),

        h(V1) = C_go − ASDA − S_oei(V1 → V_LOF) + t_d (V1 − w) + S_brake(V1 → w),

    rises with V1, dh/dV1 = (V1 − w)/a_oei(V1) + t_d + (V1 − w)/(−a_brake(V1)); the smaller
    margin is greatest where h = 0. Newton steps are clipped to the range, so a root
    outside it converges to the nearer end.

    References
    ----------
    .. [1] 14 CFR 25.109, 25.113 (the two distances V1 trades between).
    .. [2] Raymer, §17.8 (balanced field length: V1 where go and stop distances are equal).
    """
    w = np.asarray(headwind_mps, dtype=float)
    lo = np.asarray(v1_min_mps, dtype=float)
    hi = np.maximum(np.asarray(v1_max_mps, dtype=float), lo)
    v1 = 0.5 * (lo + hi) if v1_start_mps is None else np.clip(v1_start_mps, lo, hi)
    v1 = np.broadcast_to(v1, np.broadcast_shapes(np.shape(v1), np.shape(go_constant_m), np.shape(asda_m))).astype(float)
    base = np.asarray(go_constant_m, dtype=float) - np.asarray(asda_m, dtype=float)
    for _ in range(iterations):
        h = (
            base
            - _segment_m(accel_oei, v1, vlof_mps, w)
            + delay_s * (v1 - w)
            + _segment_m(accel_brake, v1, w, w)
        )
        vg = v1 - w
        dh = vg / _accel(accel_oei, v1) + delay_s + vg / (-_accel(accel_brake, v1))
        step = np.where(np.isfinite(h) & (dh > 0), h / dh, 0.0)
        v1 = np.clip(v1 - step, lo, hi)
    return v1


def go_constant_m(*, toda_m, tora_m, airborne_m, airborne_to_midpoint_m=None):
    """Ground distance the continued takeoff may use, from TODA and TORA (clearway rule).

    Parameters
    ----------
    toda_m : array_like
        Takeoff distance available. [m]
    tora_m : array_like
        Takeoff run available. [m]
    airborne_m : array_like
        Horizontal distance from lift-off to the screen height. [m]
    airborne_to_midpoint_m : array_like, optional
        Horizontal distance from lift-off to the point midway between lift-off and the
        screen (default half of ``airborne_m``). [m]

    Returns
    -------
    numpy.ndarray
        Least of TODA − airborne and TORA − (airborne to the midpoint where a clearway exists,
        TODA > TORA; the whole airborne distance otherwise). [m]

    Notes
    -----
    Takeoff distance = ground + airborne ≤ TODA; takeoff run = ground + midpoint share ≤ TORA
    with a clearway, = takeoff distance without one (25.113(b), (c)).

    References
    ----------
    .. [1] 14 CFR 25.113(a)–(c).
    """
    air = np.asarray(airborne_m, dtype=float)
    mid = 0.5 * air if airborne_to_midpoint_m is None else np.asarray(airborne_to_midpoint_m, dtype=float)
    toda = np.asarray(toda_m, dtype=float)
    tora = np.asarray(tora_m, dtype=float)
    run_share = np.where(toda > tora, mid, air)
    return np.minimum(toda - air, tora - run_share)


@dataclass(frozen=True)
class TakeoffSpeeds:
    """Scheduled takeoff speeds for a mass and day (true airspeeds, arrays). [m/s]

    Attributes
    ----------
    vs_mps : stall speed, takeoff flaps. vmcg_mps : minimum control speed on the ground.
    vr_mps, vlof_mps, v2_mps : rotation, lift-off and takeoff safety speeds.
    vmcg_limited : bool array, True where VR was raised to V_MCG.
    """

    vs_mps: np.ndarray
    vmcg_mps: np.ndarray
    vr_mps: np.ndarray
    vlof_mps: np.ndarray
    v2_mps: np.ndarray
    vmcg_limited: np.ndarray


def scheduled_speeds_mps(aircraft, *, mass_kg, density_kg_m3):
    """Takeoff speeds from the stall speed and the type's ratios, floored by V_MCG.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields (``cl_max_takeoff``, ``vr_over_vs``, ``vlof_over_vs``, ``v2_over_vs``,
        ``vmcg_mps`` as calibrated ≈ equivalent airspeed, ``wing_area_m2``).
    mass_kg : array_like
        Mass. [kg]
    density_kg_m3 : array_like
        Air density. [kg/m³]

    Returns
    -------
    TakeoffSpeeds
        True airspeeds. [m/s]

    Notes
    -----
    V_S = sqrt(2 m g/(rho S C_Lmax)); V_x = (V_x/V_S) V_S. V_MCG (an equivalent airspeed)
    becomes a true airspeed V_MCG sqrt(rho0/rho). V1 must lie in [V_MCG, VR] (V_EF ≥ V_MCG,
    VR ≥ V1, 14 CFR 25.107(a), (e)); where the ratio schedule puts VR below V_MCG all three
    speeds are raised by the factor V_MCG/VR (the ratios are kept: the speeds of a heavier
    aircraft). Single-engine types have no V_MCG constraint.

    References
    ----------
    .. [1] 14 CFR 25.107 (takeoff speeds).
    .. [2] Raymer, §17.8 (V_LOF ≈ 1.1 V_S, V2 ≈ 1.2 V_S).
    """
    a = aircraft
    rho = np.asarray(density_kg_m3, dtype=float)
    multi = np.asarray(a.engine_count, dtype=float) > 1
    vmcg = np.where(multi, np.asarray(a.vmcg_mps, dtype=float) * np.sqrt(c.RHO0_KG_M3 / rho), 0.0)
    stall_denominator = rho * np.asarray(a.wing_area_m2, dtype=float) * np.asarray(a.cl_max_takeoff, dtype=float)
    return _scheduled_speeds(mass_kg, stall_denominator, (a.vr_over_vs, a.vlof_over_vs, a.v2_over_vs), vmcg)


def _scheduled_speeds(mass_kg, stall_denominator, speed_ratios, vmcg_mps):
    """:class:`TakeoffSpeeds` from the mass and the mass-independent parts (rho S C_Lmax, the
    ratios VR/V_S, V_LOF/V_S, V2/V_S, V_MCG as a true airspeed), one compiled pass per case
    (:func:`_speeds_pass`). [m/s]"""
    floats = [np.asarray(x, dtype=float) for x in (mass_kg, stall_denominator, *speed_ratios, vmcg_mps)]
    shape = np.broadcast_shapes(*(x.shape for x in floats))
    args = groundrun._kernel_args(floats, shape)
    out = np.empty((5,) + args[0].shape)
    limited = np.empty(args[0].shape, dtype=np.bool_)
    _speeds_pass(*args, *out, limited)
    vs, vr, vlof, v2, vmcg = (x.reshape(shape) for x in out)
    return TakeoffSpeeds(vs, vmcg, vr, vlof, v2, limited.reshape(shape))


@kernel
def _speeds_pass(m, stall_denominator, vr_over_vs, vlof_over_vs, v2_over_vs, vmcg, vs_out, vr_out, vlof_out, v2_out,
                 vmcg_out, limited_out):
    """:func:`scheduled_speeds_mps` per case, in place
    (:func:`physics.aerodynamics._scheduled_speed_one`)."""
    for j in range(m.shape[0]):
        sd, r, vm = stall_denominator[j], vr_over_vs[j], vmcg[j]
        vs_out[j], vr_out[j], vlof_out[j], limited_out[j] = aerodynamics._scheduled_speed_one(
            m[j], sd, r, vlof_over_vs[j], vm)
        v2_out[j] = aerodynamics._scheduled_speed_one(m[j], sd, r, v2_over_vs[j], vm)[2]
        vmcg_out[j] = vm


#: Gauss–Legendre nodes per piece for propeller segments of the engine-failure cases.
PROPELLER_NODES = 8


def _as_shape(x, shape):
    """``x`` as a float array of ``shape`` (a view; no broadcast where it has that shape)."""
    x = np.asarray(x, dtype=float)
    return x if x.shape == shape else np.broadcast_to(x, shape)


class GroundRegime:
    """One engine and configuration state on the ground: a(V) and segment distances.

    Built once per trial mass. Polynomial thrust (quadratic, turbofan): the acceleration is
    quadratic in V and every segment has the closed form of
    :func:`physics.groundrun.segment_distance_quadratic_m`. Propeller, T = min(T_s, eta P/V):
    below the kink V_k = eta P/T_s the thrust is the constant cap, so the closed form holds
    there too; above it a(V) = eta P/(m V) + a0' + a2 V² has the closed form of
    :func:`physics.groundrun._propeller_power_closed` (partial fractions over the roots of a
    cubic) where a0' < 0 and a2 < 0 (friction and drag hold it back), and is otherwise
    integrated by Gauss–Legendre (:data:`PROPELLER_NODES` nodes; the error is set by how
    near a(V) comes to zero on the piece, Trefethen 2008, Thm 4.5: 2e-7 relative on a long
    one-engine-inoperative run in the tests, far smaller where a stays well above zero).

    Parameters
    ----------
    thrust_law : physics.thrust.ThrustLaw
        Total thrust of the engine state (n cases).
    mass_kg, wing_area_m2, density_kg_m3, cd, cl, mu, slope : array_like
        As :func:`physics.groundrun.acceleration_coefficients`, shape (n,). [kg], [m²],
        [kg/m³], [–], [–], [–], [–]
    headwind_mps : array_like
        Headwind, shape (n,). [m/s]
    terms : physics.groundrun.GroundRunTerms, optional
        The mass-independent parts (computed from the arguments above if omitted).
    cases_index : tuple of numpy.ndarray, optional
        The propeller cases and the tailwind cases (integer positions; found if omitted).
    inputs : tuple of numpy.ndarray, optional
        :func:`_regime_inputs` of ``terms`` (kept per solve by :func:`engine_failure_model`).

    Notes
    -----
    The constants of a(V) at the mass (its form and roots, the reverse-flow form of the
    tailwind cases, the propeller terms and the cubic's root) are found in one compiled pass
    per case (:func:`_regime_constants`); the numpy formulas are the tests' reference.
    """

    def __init__(self, thrust_law, *, mass_kg, wing_area_m2, density_kg_m3, cd, cl, mu, slope, headwind_mps,
                 terms=None, cases_index=None, inputs=None):
        n = np.shape(thrust_law.t0_n)
        if inputs is None:
            if terms is None:
                terms = groundrun.ground_run_terms(thrust_law, wing_area_m2=wing_area_m2,
                                                   density_kg_m3=density_kg_m3, cd=cd, cl=cl, mu=mu, slope=slope)
            inputs = _regime_inputs(terms, headwind_mps, n)
        t0, t1, t2, power, drag, resistance, kink, w = inputs
        (m,) = groundrun._kernel_args([_as_shape(mass_kg, n)], n)
        # the propeller cases, and the tailwind cases whose segments may cross V = 0
        # (reverse-flow drag below it): per case, given by the caller once per solve
        if cases_index is None:
            cases_index = (np.nonzero(np.broadcast_to(np.asarray(thrust_law.is_propeller, dtype=bool), n))[0],
                           np.nonzero(w < 0.0)[0])
        prop, tail = (np.ascontiguousarray(x, dtype=np.intp) for x in cases_index)
        size, n_t, n_p = m.shape[0], tail.size, prop.size
        a0, a1, a2, a2r = np.empty(size), np.empty(size), np.empty(size), np.empty(size if n_t else 0)
        form, k = np.empty(size, dtype=np.int8), np.empty((3, size))
        rev = np.empty((4, n_t))  # a0, a1, reverse-flow a2 and w of the tailwind cases
        r_form, r_k = np.empty(n_t, dtype=np.int8), np.empty((3, n_t))
        pa = np.empty((7, n_p))  # P/m, a0 without the static thrust, a2; the cubic's root and constants
        closed = np.empty(n_p, dtype=np.bool_)
        prop_at, reverse_at = np.empty(size, dtype=np.intp), np.empty(size, dtype=np.intp)
        _regime_constants(t0, t1, t2, power, drag, resistance, m, w, prop, tail, a0, a1, a2, a2r, form, *k, *rev,
                          r_form, *r_k, *pa, closed, prop_at, reverse_at)
        self.law, self.w = thrust_law, w.reshape(n)
        self.coeffs = groundrun.AccelerationCoefficients(a0.reshape(n), a1.reshape(n), a2.reshape(n))
        self.prop, self.tail = prop, tail
        self.a2_reverse = a2r.reshape(n) if n_t else None
        self.kink = kink.reshape(n)
        self._forward = groundrun.QuadraticSegments.of_forms(a0, a1, a2, w, form, k)
        self._reverse = groundrun.QuadraticSegments.of_forms(*rev, r_form, r_k) if n_t else None
        self._prop_at, self._reverse_at = prop_at, reverse_at
        if n_p:
            self._p_m, self._a0n, self._a2p = pa[0], pa[1], pa[2]
            # the closed form above the kink where the cubic of a = 0 has one real root
            self._closed = closed
            self._root = groundrun.CubicRoot(*pa[3:])

    def distance_m(self, v_from, v_to, index=None):
        """Ground distance between two true airspeeds (NaN where not reachable).

        Parameters
        ----------
        v_from, v_to : array_like
            True airspeeds at the start and end (end below start: deceleration). [m/s]
        index : numpy.ndarray, optional
            The cases to evaluate (increasing integer positions; default: all): the speeds
            and the result are those cases' (no regime is gathered for them). [–]

        Returns
        -------
        numpy.ndarray
            Ground distance, shape (n,) (``index``'s size where given). [m]

        Notes
        -----
        ∫ (V − w)/a(V) dV: closed form below the propeller kink (everywhere for polynomial
        thrust; split at V = 0 only for the tailwind cases that cross it) and above it (the
        cubic's partial fractions), Gauss–Legendre above it where that form does not apply.

        References
        ----------
        .. [1] Raymer, §17.8; see :mod:`physics.groundrun`. .. [2] Trefethen (2008).
        """
        args = self._distance_terms()
        subset = index is not None
        index = np.ascontiguousarray(index, dtype=np.intp) if subset else _NO_INDEX
        n = index.shape if subset else self.w.shape
        v_from, v_to = groundrun._kernel_args([_as_shape(v_from, n), _as_shape(v_to, n)], n)
        s = np.empty(n)
        _regime_distance(index, subset, v_from, v_to, *args, s)
        return s

    def _distance_terms(self):
        """:meth:`_kernel_terms`, found on first use and kept."""
        args = self.__dict__.get("_distance_args")
        if args is None:
            args = self._distance_args = self._kernel_terms()
        return args

    def _kernel_terms(self):
        """The regime's constants for :func:`_regime_distance`: each case's form and roots of
        a(V) for V ≥ 0, of the reverse-flow a(V) below 0 (tailwind cases), and above the
        propeller kink (the cubic's root; Gauss–Legendre where that form does not apply)."""
        a0, a1, a2 = self.coeffs
        n = self.w.shape
        if self._forward is None:  # roots of a(V) for V ≥ 0, once for every segment of the regime
            self._forward = groundrun.QuadraticSegments(a0, a1, a2, self.w)
        fw = self._forward
        t = self.tail
        reverse_at, prop_at = self.__dict__.get("_reverse_at"), self.__dict__.get("_prop_at")
        if reverse_at is None:  # a regime taken for a subset: each case's place among its tail and propeller cases
            reverse_at, prop_at = np.full(n, -1, dtype=np.intp), np.full(n, -1, dtype=np.intp)
            reverse_at[t] = np.arange(t.size)
            prop_at[self.prop] = np.arange(self.prop.size)
        if self.a2_reverse is not None and t.size:
            if self._reverse is None:
                self._reverse = groundrun.QuadraticSegments(a0.take(t), a1.take(t), self.a2_reverse.take(t),
                                                            self.w.take(t))
            rv = self._reverse
            rev = (rv.a0, rv.a1, rv.a2, rv.w, rv.form, *rv.k)
        else:
            rev = (*(np.zeros(0),) * 4, np.zeros(0, dtype=np.int8), *(np.zeros(0),) * 3)
        closed = np.zeros(0, dtype=np.bool_)
        prop_terms = (np.zeros(0),) * 7
        if self.prop.size:
            closed = np.ascontiguousarray(self._closed, dtype=np.bool_)
            pm, c2, c0 = self._p_m, -self._a2p, -self._a0n
            if self._root is None:  # the cubic's root of every propeller case (used where the form applies)
                self._root = groundrun._cubic_root(pm, c2, c0)
            prop_terms = tuple(groundrun._kernel_args([np.asarray(x, dtype=float) for x in (pm, c2, c0, *self._root)],
                                                      pm.shape))
        return (*groundrun._kernel_args([_as_shape(self.kink, n)], n), self.a2_reverse is not None,
                fw.a0, fw.a1, fw.a2, fw.w, fw.form, *fw.k, reverse_at, *rev, prop_at, closed, *prop_terms,
                *_GAUSS_LEGENDRE)

    def _acceleration_terms(self):
        """The regime's coefficients for :func:`_acceleration_one` (kept once found)."""
        args = self.__dict__.get("_acceleration_args")
        if args is None:
            n = self.w.shape
            a2r = self.a2_reverse if self.a2_reverse is not None else np.zeros(0)
            prop_at = self.__dict__.get("_prop_at")  # each case's place among the propeller cases
            if prop_at is None:
                prop_at = np.full(n, -1, dtype=np.intp)
                prop_at[self.prop] = np.arange(self.prop.size)
            # (one element where there are no propeller cases: _acceleration_one's arguments
            # are read for every case, at place 0 where it has none)
            pa = (self._p_m, self._a0n, self._a2p) if self.prop.size else (np.zeros(1),) * 3
            args = (*groundrun._kernel_args([_as_shape(x, n) for x in (*self.coeffs, self.kink)], n),
                    *groundrun._kernel_args([np.asarray(a2r, dtype=float)], np.shape(a2r)), prop_at,
                    *groundrun._kernel_args([np.asarray(x, dtype=float) for x in pa], np.shape(pa[0])))
            self._acceleration_args = args
        return args

    def take(self, index):
        """The regime for a subset of the cases (``index``: integer array)."""
        new = object.__new__(GroundRegime)
        n = self.w.shape[0]
        new.law = None
        new.w = self.w[index]
        new.coeffs = tuple(np.asarray(c)[index] for c in self.coeffs)
        new.a2_reverse = None if self.a2_reverse is None else self.a2_reverse[index]
        new.kink = self.kink[index]
        is_prop = np.zeros(n, dtype=bool)
        is_prop[self.prop] = True
        sub_prop = is_prop[index]
        new.prop = np.nonzero(sub_prop)[0]
        new.tail = np.nonzero(new.w < 0.0)[0]
        # the roots and constants found for the whole set are gathered, not found again
        new._forward = None if self._forward is None else _take_segments(self._forward, index)
        new._reverse = None
        if self._reverse is not None and new.tail.size:
            where = np.full(n, -1)
            where[self.tail] = np.arange(self.tail.size)
            new._reverse = _take_segments(self._reverse, where.take(np.asarray(index).take(new.tail)))
        if new.prop.size:
            local = (np.cumsum(is_prop) - 1)[np.asarray(index)[sub_prop]]
            new._p_m, new._a0n, new._a2p = self._p_m[local], self._a0n[local], self._a2p[local]
            new._closed = self._closed[local]
            new._root = None if self._root is None else type(self._root)(*(x.take(local) for x in self._root))
        return new

    def acceleration(self, v, slope=False, index=None):
        """Acceleration at true airspeeds (and its slope dA/dV).

        Parameters
        ----------
        v : array_like
            True airspeed per case, shape (n,) (``index``'s size where given). [m/s]
        slope : bool, optional
            Also return dA/dV. [–]
        index : numpy.ndarray, optional
            The cases to evaluate (integer positions; default: all). [–]

        Returns
        -------
        numpy.ndarray
            a(V) [m/s²]; with ``slope``, the pair (a, da/dV) [m/s², 1/s].

        Notes
        -----
        a = a0 + a1 V + a2 V|V| terms (reverse-flow a2 below 0), da/dV = a1 + 2 a2 V;
        propeller above the kink: eta P/(m V) + a0' + a2 V², da/dV = −eta P/(m V²) + 2 a2 V.

        References
        ----------
        .. [1] Raymer, Eq. 17.100.
        """
        args = self._acceleration_terms()
        subset = index is not None
        index = np.ascontiguousarray(index, dtype=np.intp) if subset else _NO_INDEX
        n = index.shape if subset else self.w.shape
        (v,) = groundrun._kernel_args([_as_shape(v, n)], n)
        out, d_out = np.empty(n), np.empty(n)
        _regime_acceleration(index, subset, v, *args, out, d_out)
        return (out, d_out) if slope else out


#: No case index (a regime evaluated for all its cases).
_NO_INDEX = np.zeros(0, dtype=np.intp)
#: Nodes and weights of the propeller pieces integrated by Gauss–Legendre (:data:`PROPELLER_NODES`).
_GAUSS_LEGENDRE = tuple(np.ascontiguousarray(x, dtype=float) for x in np.polynomial.legendre.leggauss(PROPELLER_NODES))


def _regime_inputs(terms, headwind_mps, shape):
    """The mass-independent inputs of a :class:`GroundRegime` (from
    :func:`physics.groundrun.ground_run_terms`) as its kernel takes them: thrust t0, t1, t2
    and power, the drag term, the resistance, the propeller kink and the headwind, each a
    contiguous one-dimensional array of ``shape``'s size (built once per solve and kept).
    [N, N s/m, N s²/m², W, kg/m, m/s², m/s, m/s]"""
    law = terms.law
    return tuple(groundrun._kernel_args([np.asarray(x, dtype=float) for x in (
        law.t0_n, law.t1_n_per_mps, law.t2_n_per_mps2, law.propeller_power_w, terms.drag_term_kg_m,
        terms.resistance_mps2, terms.kink_mps, headwind_mps)], shape))


@kernel
def _regime_constants(t0, t1, t2, power, drag, resistance, m, w, prop, tail, a0, a1, a2, a2r, form, k0, k1, k2,
                      ra0, ra1, ra2, rw, r_form, rk0, rk1, rk2, p_m, a0n, a2p, r, p, d_inv, e, closed, prop_at,
                      reverse_at):
    """A :class:`GroundRegime`'s constants at a mass in one pass per case, in place: a(V) =
    a0 + a1 V + a2 V² (T/m less the drag term/m and the resistance; reverse-flow a2 with the
    drag term's sign turned where ``a2r`` has room), its form and constants
    (:func:`physics.groundrun._form_one`); those of the reverse-flow a(V) of the tailwind
    cases (``tail``) and, for the propeller cases (``prop``), P/m, a0 without the static
    thrust, a2, whether the closed form above the kink applies and the cubic's root
    (:func:`physics.groundrun._cubic_one`); each case's place among the tailwind and the
    propeller cases (−1: none)."""
    reverse = a2r.shape[0] > 0
    for j in range(m.shape[0]):
        mj = m[j]
        aero = drag[j] / mj
        a0[j] = t0[j] / mj - resistance[j]
        a1[j] = t1[j] / mj
        t2m = t2[j] / mj
        a2[j] = t2m - aero
        if reverse:
            a2r[j] = t2m + aero
        form[j], k0[j], k1[j], k2[j] = groundrun._form_one(a0[j], a1[j], a2[j])
        prop_at[j] = -1
        reverse_at[j] = -1
    for q in range(tail.shape[0]):
        j = tail[q]
        reverse_at[j] = q
        ra0[q], ra1[q], ra2[q], rw[q] = a0[j], a1[j], a2r[j], w[j]
        r_form[q], rk0[q], rk1[q], rk2[q] = groundrun._form_one(ra0[q], ra1[q], ra2[q])
    for q in range(prop.shape[0]):
        j = prop[q]
        prop_at[j] = q
        p_m[q] = power[j] / m[j]
        a0n[q] = a0[j] - t0[j] / m[j]
        a2p[q] = a2[j]
        closed[q] = a0n[q] < 0.0 and a2p[q] < 0.0 and p_m[q] > 0.0
        r[q], p[q], d_inv[q], e[q] = groundrun._cubic_one(p_m[q], -a2p[q], -a0n[q])


@kernel
def _acceleration_one(vj, a0, a1, a2, a2r, reverse, kink, prop, p_m, a0n, a2p):
    """a(V) and da/dV of one case of a :class:`GroundRegime` (its constants, scalars) at the
    airspeed ``vj``: the polynomial (the reverse-flow a2r below V = 0 where ``reverse``), the
    propeller law above the kink where ``prop``. Returns (a, da/dV)."""
    if prop and vj > kink:
        return p_m / vj + a0n + a2p * vj * vj, -p_m / (vj * vj) + 2.0 * a2p * vj
    a2j = a2r if reverse and vj < 0.0 else a2
    return a0 + (a1 + a2j * vj) * vj, a1 + 2.0 * a2j * vj


@kernel
def _regime_acceleration(index, subset, v, a0, a1, a2, kink, a2_reverse, prop_at, p_m, a0n, a2p, out, d_out):
    """a(V) and da/dV of a :class:`GroundRegime` at one airspeed per case, in place (the cases
    at ``index`` where ``subset``; :func:`_acceleration_one`; ``prop_at``: a case's place
    among the propeller cases, −1 for the others; ``a2_reverse`` empty: no reverse flow)."""
    reverse = a2_reverse.shape[0] > 0
    for q in range(v.shape[0]):
        j = index[q] if subset else q
        k = prop_at[j]
        kk = max(k, 0)  # (the propeller arrays have at least one element, :meth:`GroundRegime._acceleration_terms`)
        out[q], d_out[q] = _acceleration_one(v[q], a0[j], a1[j], a2[j], a2_reverse[j] if reverse else 0.0, reverse,
                                             kink[j], k >= 0, p_m[kk], a0n[kk], a2p[kk])


@kernel
def _regime_distance(index, subset, v_from, v_to, kink, split, fa0, fa1, fa2, fw, fform, fk0, fk1, fk2, reverse_at,
                     ra0, ra1, ra2, rw, rform, rk0, rk1, rk2, prop_at, closed, pm, c2, c0, r, p, d_inv, e, gl_x, gl_w,
                     out):
    """Ground distance of a :class:`GroundRegime` between two airspeeds per case, in place
    (the cases at ``index`` where ``subset``): the closed form below the propeller kink
    (split at V = 0 where the regime has tailwind cases: reverse-flow drag below it) and the
    propeller piece above it, in closed form where it applies and by Gauss–Legendre (nodes
    ``gl_x``, weights ``gl_w``; :func:`_gauss_legendre_one`) where it does not."""
    for q in range(v_from.shape[0]):
        j = index[q] if subset else q
        c_from, c_to = min(v_from[q], kink[j]), min(v_to[q], kink[j])
        if split:
            s = groundrun._segment_one(fa0[j], fa1[j], fa2[j], fw[j], fform[j], fk0[j], fk1[j], fk2[j],
                                       max(c_from, 0.0), max(c_to, 0.0))[0]
            i = reverse_at[j]
            r_from, r_to = min(c_from, 0.0), min(c_to, 0.0)
            if i >= 0 and min(r_from, r_to) < 0.0:
                s += groundrun._segment_one(ra0[i], ra1[i], ra2[i], rw[i], rform[i], rk0[i], rk1[i], rk2[i],
                                            r_from, r_to)[0]
        else:
            s = groundrun._segment_one(fa0[j], fa1[j], fa2[j], fw[j], fform[j], fk0[j], fk1[j], fk2[j], c_from,
                                       c_to)[0]
        k = prop_at[j]
        if k >= 0 and closed[k]:
            s += groundrun._propeller_one(pm[k], c2[k], c0[k], max(v_from[q], kink[j]), max(v_to[q], kink[j]),
                                          fw[j], r[k], p[k], d_inv[k], e[k])[0]
        elif k >= 0:
            s += _gauss_legendre_one(pm[k], c2[k], c0[k], groundrun._nan_max(v_from[q], kink[j]),
                                     groundrun._nan_max(v_to[q], kink[j]), fw[j], gl_x, gl_w)
        out[q] = s


@kernel
def _gauss_legendre_one(pm, c2, c0, v0, v1, w, x, wts):
    """Distance of the propeller piece a(V) = pm/V − c2 V² − c0 from v0 to v1 by
    Gauss–Legendre (nodes ``x``, weights ``wts``) for one case: the sums of
    :func:`physics.groundrun._propeller_power_piece` node by node in its order (the same
    number to the bit); NaN where a does not keep the sign of v1 − v0 at the nodes and ends."""
    if v1 == v0:
        return 0.0
    half = 0.5 * (v1 - v0)
    mid = 0.5 * (v1 + v0)
    sgn = 1.0 if v1 > v0 else -1.0
    ok = sgn * (pm / v1 - c2 * v1 * v1 - c0) > 0.0 and sgn * (pm / v0 - c2 * v0 * v0 - c0) > 0.0
    s_inv = 0.0
    s_v_inv = 0.0
    for i in range(x.shape[0]):
        v = mid + half * x[i]
        a = pm / v - c2 * v * v - c0
        ok = ok and sgn * a > 0.0
        inv = wts[i] / a
        s_inv += inv
        s_v_inv += v * inv
    if not ok:
        return np.nan
    return half * s_v_inv - w * (half * s_inv)


@kernel
def _timed_slopes(dv1, rec, gap, mid, a_ae, d_ae, vg, a_oo, delay_s, d_act, v_act, w, a_sa, dv_act):
    """d(pre)/dV_EF and dh/dV_EF of one case of :func:`_timed_newton_step`, for dV1/dV_EF =
    ``dv1``. Returns (d_pre, dh)."""
    d_pre = 0.0
    if rec:
        d_pre = (0.5 * (1.0 + dv1) * gap + mid * (dv1 - 1.0)) / a_ae - mid * gap * d_ae * dv1 / (a_ae * a_ae)
    dh = (vg / a_oo + d_pre + delay_s * dv1) + d_act * dv1 - (v_act - w) / a_sa * dv_act * dv1
    return d_pre, dh


@kernel
def _timed_newton_step(base, so, ss, v_ef, w, v1, v1_raw, t_r, a_oo, d_oo, a_ae, d_ae, a_sa1, a_sa_act, interval,
                       v_act, act, dv_act, d_act, delay_s, pre_out, dv1_out, d_pre_out, a_sa_out, dh_out, step_out):
    """One Newton step of the V1 search with the timed events, per case, in place.

    h = C_go − ASDA − S_oei(V_EF → V_LOF) + pre + t_d (V1 − w) + S_actions + S_stop, where
    pre is the distance over the recognition interval (at the mean ground speed, the
    all-engines acceleration at V1), V1 = V_EF + a_oei(V_EF) t_r (clipped to [V_EF, VR] by the
    caller), S_actions the stop actions from V1 and S_stop the full stop from their end.
    dh/dV_EF through dV1/dV_EF = 1 + a_oei' t_r (exact for the hand pieces); where V1 is held
    at VR and the step keeps it there, dV1/dV_EF = 0. Writes pre, dV1/dV_EF, d(pre)/dV_EF,
    the full-stop acceleration at the end of the actions, dh and the step h/dh."""
    for j in range(v_ef.shape[0]):
        vi, wi, v1i = v_ef[j], w[j], v1[j]
        rec = t_r[j] > 0.0
        gap = v1i - vi
        mid = 0.5 * ((vi - wi) + (v1i - wi))
        pre = mid * gap / a_ae[j] if rec else 0.0
        h = base[j] - so[j] + pre + delay_s * (v1i - wi) + act[j] + ss[j]
        vg = vi - wi
        a_sa = a_sa_act[j] if interval[j] > 0.0 else a_sa1[j]
        dv1 = 1.0 + d_oo[j] * t_r[j] if rec else 1.0
        d_pre, dh = _timed_slopes(dv1, rec, gap, mid, a_ae[j], d_ae[j], vg, a_oo[j], delay_s, d_act[j], v_act[j], wi,
                                  a_sa, dv_act[j])
        # V1 held at VR does not move with V_EF: there h's slope has dV1/dV_EF = 0 (with
        # 1 + a' t_r Newton only halved h at each step). Taken where the step it gives keeps
        # V1 at VR; a step out of that narrow band of V_EF takes the slope of the free V1.
        if v1_raw[j] > v1i:
            d_pre_h, dh_h = _timed_slopes(0.0, rec, gap, mid, a_ae[j], d_ae[j], vg, a_oo[j], delay_s, d_act[j],
                                          v_act[j], wi, a_sa, dv_act[j])
            band = (v1_raw[j] - v1i) / dv1  # how far V_EF falls before V1 leaves VR
            if h / dh_h < band and dh_h > 0.0:
                dv1, d_pre, dh = 0.0, d_pre_h, dh_h
        pre_out[j], dv1_out[j], d_pre_out[j], a_sa_out[j], dh_out[j] = pre, dv1, d_pre, a_sa, dh
        step_out[j] = h / dh


@kernel
def _newton_step_one(base, so, ss, v, w, a_go, a_stop, delay_s):
    """One Newton step of the idealised V1 search for one case: h = C_go − ASDA −
    S_oei(V1 → V_LOF) + t_d (V1 − w) + S_stop(V1 → w), the slopes −dS_oei/dV1 = (V1 − w)/a_oei
    and dS_stop/dV1 = −(V1 − w)/a_stop (the accelerations at V1), dh and the step h/dh.
    Returns (go slope, stop slope, dh, step)."""
    h = base - so + delay_s * (v - w) + ss
    vg = v - w
    go = vg / a_go
    stop = -vg / a_stop
    dh = go + delay_s + stop
    return go, stop, dh, h / dh


@kernel
def _advance_one(v, step, dh, lo, hi, v1, v1_raw, v_act, w, dv1, vr, multi, count, k, step_tol, extrapolate, timed):
    """Where one case's Newton step takes its speed: the step (none where it is not finite,
    dh ≤ 0 or the type is single-engine), the speed clipped to [lo, hi]; whether the case goes
    on (evaluations left, a step above ``step_tol`` where that is ≥ 0); and, where
    ``extrapolate`` ≥ 0, whether it stops by taking a nonzero step of at most that without
    evaluating there (with the timed events: not where V1 is held at VR or reaches it within
    the step, nor where the stop actions end at rest). Returns (speed, goes on, extrapolated)."""
    st = step
    if not (np.isfinite(st) and dh > 0.0 and multi):
        st = 0.0
    moved = groundrun._nan_min(groundrun._nan_max(v - st, lo), hi)
    going = k < count - 1
    if step_tol >= 0.0:
        going = going and abs(moved - v) > step_tol
    near = False
    if extrapolate >= 0.0:
        d = moved - v
        near = abs(d) <= extrapolate
        if timed:
            v1_to = v1 + dv1 * d
            near = near and v1 == v1_raw and v_act > w and v1_to <= vr and v1_to >= moved
        going = going and not near
        near = near and d != 0.0
    return moved, going, near


@kernel
def _newton_advance(v, step, dh, lo, hi, v1, v1_raw, v_act, w, dv1, vr, multi, count, k, step_tol, extrapolate,
                    timed, moved_out, going_out, near_out):
    """:func:`_advance_one` per case, in place."""
    for j in range(v.shape[0]):
        moved_out[j], going_out[j], near_out[j] = _advance_one(
            v[j], step[j], dh[j], lo[j], hi[j], v1[j], v1_raw[j], v_act[j], w[j], dv1[j], vr[j], multi[j], count[j], k,
            step_tol, extrapolate, timed)


@kernel
def _newton_search(v, base, vlof, w, lo, hi, multi, count, total, delay_s, next_step, step_tol, extrapolate, oo_d,
                   sa_d, oo_a, sa_a, s_oei, s_stop, v_next):
    """The idealised V1 search of :func:`_newton_v1`, each case's whole Newton loop in one
    pass, in place: at each evaluation S_oei(V1 → V_LOF) and S_stop(V1 → w)
    (as :func:`_regime_distance`, with the one-engine-out and the all-engines stop regimes' terms
    ``oo_d``, ``sa_d``), the accelerations at V1 (``oo_a``, ``sa_a``; :func:`_acceleration_one`),
    the step (:func:`_newton_step_one`) and where it takes V1 (:func:`_advance_one`); the
    step taken without evaluating there carries each distance along its slope. A case is
    evaluated again while it goes on; ``v`` ends at each case's V1, ``v_next`` (where
    ``next_step``) one step on from its last evaluation."""
    (o_kink, o_split, o_a0, o_a1, o_a2, o_w, o_form, o_k0, o_k1, o_k2, o_rev_at, o_ra0, o_ra1, o_ra2, o_rw, o_rform,
     o_rk0, o_rk1, o_rk2, o_prop_at, o_closed, o_pm, o_c2, o_c0, o_r, o_p, o_d_inv, o_e, gl_x, gl_w) = oo_d
    (s_kink, s_split, s_a0, s_a1, s_a2, s_w, s_form, s_k0, s_k1, s_k2, s_rev_at, s_ra0, s_ra1, s_ra2, s_rw, s_rform,
     s_rk0, s_rk1, s_rk2, s_prop_at, s_closed, s_pm, s_c2, s_c0, s_r, s_p, s_d_inv, s_e, _, _) = sa_d
    o_a2r, s_a2r = oo_a[4], sa_a[4]
    o_reverse, s_reverse = o_a2r.shape[0] > 0, s_a2r.shape[0] > 0
    o_p_m, o_a0n, o_a2p, s_p_m, s_a0n, s_a2p = oo_a[6], oo_a[7], oo_a[8], sa_a[6], sa_a[7], sa_a[8]
    for j in range(v.shape[0]):
        vj = v[j]
        oi, ok, si, sk = o_rev_at[j], o_prop_at[j], s_rev_at[j], s_prop_at[j]
        for k in range(total):
            # as _regime_distance: S_oei(V1 → V_LOF)
            v_to, kj = vlof[j], o_kink[j]
            c_from, c_to = min(vj, kj), min(v_to, kj)
            if o_split:
                so = groundrun._segment_one(o_a0[j], o_a1[j], o_a2[j], o_w[j], o_form[j], o_k0[j], o_k1[j], o_k2[j],
                                            max(c_from, 0.0), max(c_to, 0.0))[0]
                r_from, r_to = min(c_from, 0.0), min(c_to, 0.0)
                if oi >= 0 and min(r_from, r_to) < 0.0:
                    so += groundrun._segment_one(o_ra0[oi], o_ra1[oi], o_ra2[oi], o_rw[oi], o_rform[oi], o_rk0[oi],
                                                 o_rk1[oi], o_rk2[oi], r_from, r_to)[0]
            else:
                so = groundrun._segment_one(o_a0[j], o_a1[j], o_a2[j], o_w[j], o_form[j], o_k0[j], o_k1[j], o_k2[j],
                                            c_from, c_to)[0]
            if ok >= 0 and o_closed[ok]:
                so += groundrun._propeller_one(o_pm[ok], o_c2[ok], o_c0[ok], max(vj, kj), max(v_to, kj), o_w[j],
                                               o_r[ok], o_p[ok], o_d_inv[ok], o_e[ok])[0]
            elif ok >= 0:
                so += _gauss_legendre_one(o_pm[ok], o_c2[ok], o_c0[ok], groundrun._nan_max(vj, kj),
                                          groundrun._nan_max(v_to, kj), o_w[j], gl_x, gl_w)
            # S_stop(V1 → w)
            v_to, kj = w[j], s_kink[j]
            c_from, c_to = min(vj, kj), min(v_to, kj)
            if s_split:
                ss = groundrun._segment_one(s_a0[j], s_a1[j], s_a2[j], s_w[j], s_form[j], s_k0[j], s_k1[j], s_k2[j],
                                            max(c_from, 0.0), max(c_to, 0.0))[0]
                r_from, r_to = min(c_from, 0.0), min(c_to, 0.0)
                if si >= 0 and min(r_from, r_to) < 0.0:
                    ss += groundrun._segment_one(s_ra0[si], s_ra1[si], s_ra2[si], s_rw[si], s_rform[si], s_rk0[si],
                                                 s_rk1[si], s_rk2[si], r_from, r_to)[0]
            else:
                ss = groundrun._segment_one(s_a0[j], s_a1[j], s_a2[j], s_w[j], s_form[j], s_k0[j], s_k1[j], s_k2[j],
                                            c_from, c_to)[0]
            if sk >= 0 and s_closed[sk]:
                ss += groundrun._propeller_one(s_pm[sk], s_c2[sk], s_c0[sk], max(vj, kj), max(v_to, kj), s_w[j],
                                               s_r[sk], s_p[sk], s_d_inv[sk], s_e[sk])[0]
            elif sk >= 0:
                ss += _gauss_legendre_one(s_pm[sk], s_c2[sk], s_c0[sk], groundrun._nan_max(vj, kj),
                                          groundrun._nan_max(v_to, kj), s_w[j], gl_x, gl_w)
            s_oei[j], s_stop[j] = so, ss
            if k == total - 1 and not next_step:
                break
            a_go = _acceleration_one(vj, oo_a[0][j], oo_a[1][j], oo_a[2][j], o_a2r[j] if o_reverse else 0.0, o_reverse,
                                     oo_a[3][j], ok >= 0, o_p_m[max(ok, 0)], o_a0n[max(ok, 0)], o_a2p[max(ok, 0)])[0]
            a_stop = _acceleration_one(vj, sa_a[0][j], sa_a[1][j], sa_a[2][j], s_a2r[j] if s_reverse else 0.0,
                                       s_reverse, sa_a[3][j], sk >= 0, s_p_m[max(sk, 0)], s_a0n[max(sk, 0)],
                                       s_a2p[max(sk, 0)])[0]
            go, stop, dh, step = _newton_step_one(base[j], so, ss, vj, w[j], a_go, a_stop, delay_s)
            moved, going, near = _advance_one(vj, step, dh, lo[j], hi[j], vj, vj, vj, w[j], vj, vj, multi[j],
                                              count[j], k, step_tol, extrapolate, False)
            if extrapolate >= 0.0 and near:
                d = moved - vj
                s_oei[j] -= go * d
                s_stop[j] += stop * d
            if next_step:
                v_next[j] = moved
            if going or near:
                vj = moved
            v[j] = vj
            if not going:
                break


class _DeferredRegime:
    """A :class:`GroundRegime` built on first use (``build()`` makes it): the V1 search of the
    weight solver never needs the engine-failure stop of the idealised sequence."""

    def __init__(self, build):
        self._build = build
        self._regime = None

    def __getattr__(self, name):
        if name.startswith("__"):
            raise AttributeError(name)
        regime = self.__dict__["_regime"]
        if regime is None:
            regime = self._regime = self._build()
        return getattr(regime, name)


def _take_segments(seg, index):
    """A :class:`physics.groundrun.QuadraticSegments` for the cases at ``index`` (integer
    array), its constants gathered. Each case keeps the form (real roots or special) it had,
    so every distance is the one the whole set gives."""
    return seg.take(index)


@dataclass(frozen=True)
class EngineFailureModel:
    """Everything the engine-failure cases need for one trial mass (arrays over cases).

    Built by :func:`engine_failure_model`. ``all_engines``, ``one_out`` are the takeoff
    ground-roll regimes; ``stop_all``, ``stop_one_out`` the braking regimes.
    """

    mass_kg: np.ndarray
    density_kg_m3: np.ndarray
    speeds: TakeoffSpeeds
    headwind_mps: np.ndarray
    multi_engine: np.ndarray
    all_engines: GroundRegime
    one_out: GroundRegime
    stop_all: GroundRegime
    stop_one_out: GroundRegime
    v1_min_mps: np.ndarray
    v1_max_mps: np.ndarray
    #: The timed event sequence (None: idealised). ``v1_min_mps``/``v1_max_mps`` then bound
    #: the engine-failure speed V_EF, and V1 follows one recognition interval later.
    events: "StopEvents" = None


@dataclass(frozen=True)
class StopEvents:
    """The timed parts of the engine-failure cases at one trial mass (arrays over cases).

    ``recognition_s`` (V_EF → V1) and ``action_interval_s`` (between the stop actions). The
    braking before the lift dumpers are in differs from the ground roll (takeoff thrust) only
    in the friction, and from the full stop (idle thrust) only in the lift and drag of the
    lift dumpers, so its accelerations are those of the two regimes plus a term each:

        a_brakes(V) = a_roll(V) − (mu_b − mu_r) (g cos γ − ½ rho V² S C_L,roll/m),
        a_idle(V)   = a_stop(V) + ½ rho V² S [(C_D,brake − C_D,roll) − mu_b (C_L,brake − C_L,roll)]/m.
    """

    recognition_s: np.ndarray
    action_interval_s: np.ndarray
    mass_kg: np.ndarray
    friction_step_mps2: np.ndarray  # (mu_b − mu_r) g cos γ [m/s²]
    friction_lift_kg_m: np.ndarray  # ½ rho S C_L,roll (mu_b − mu_r) [kg/m]
    dumper_kg_m: np.ndarray  # ½ rho S [(C_D,brake − C_D,roll) − mu_b (C_L,brake − C_L,roll)] [kg/m]

    def take(self, index):
        """The events of the cases at ``index`` (integer array)."""
        return StopEvents(*(np.asarray(getattr(self, f.name))[index] for f in dataclasses.fields(self)))

    def actions(self, v1_mps, headwind_mps, accel_roll_mps2, accel_stop_mps2, slopes=None):
        """Speed when the lift dumpers are in and the distance from V1 to there.

        ``accel_roll_mps2``, ``accel_stop_mps2``: the ground-roll (takeoff thrust) and full-stop
        (idle, lift dumpers) accelerations at V1 of the engine state (all engines, or N − 1).
        ``slopes``: their da/dV at V1; then also d(speed)/dV1 and d(distance)/dV1.
        """
        n = np.shape(self.mass_kg)
        with_slopes = slopes is not None
        d_roll, d_stop = slopes if with_slopes else (np.zeros(n), np.zeros(n))
        args = groundrun._kernel_args([_as_shape(np.asarray(x, dtype=float), n) for x in (
            v1_mps, headwind_mps, accel_roll_mps2, accel_stop_mps2, d_roll, d_stop, self.action_interval_s,
            self.mass_kg, self.friction_step_mps2, self.friction_lift_kg_m, self.dumper_kg_m)], n)
        out = tuple(np.empty(args[0].shape) for _ in range(4 if with_slopes else 2))
        _stop_actions_pass(*args, with_slopes, *out, *(out if not with_slopes else ()))
        return tuple(x.reshape(n) for x in out)


@kernel
def _stop_actions_pass(v1, w, a_roll, a_stop, d_roll, d_stop, dt, m, f_step, f_lift, dumper, with_slopes, v_out,
                       s_out, dv_out, ds_out):
    """:meth:`StopEvents.actions` per case, in place: the braking accelerations at V1 from the
    roll and stop ones (the friction step and the lift dumpers' terms), then
    :func:`physics.takeoffevents.stop_actions` and, ``with_slopes``, its slopes in V1."""
    for j in range(v1.shape[0]):
        v = v1[j]
        v2 = v * v
        brakes = a_roll[j] - f_step[j] + f_lift[j] * v2 / m[j]
        idle = a_stop[j] + dumper[j] * v2 / m[j]
        v_out[j], s_out[j] = takeoffevents._stop_actions_one(v, dt[j], brakes, idle, w[j])
        if with_slopes:
            d_brakes = d_roll[j] + 2.0 * f_lift[j] * v / m[j]
            d_idle = d_stop[j] + 2.0 * dumper[j] * v / m[j]
            dv_out[j], ds_out[j] = takeoffevents._stop_actions_slope_one(dt[j], d_brakes, d_idle)


@dataclass(frozen=True)
class EngineFailureSetup:
    """The mass-independent parts of the engine-failure cases (built once per solve).

    Thrust laws (takeoff and idle, all engines and one out), drag and lift coefficients,
    friction and the day, broadcast to the n cases.
    """

    n: tuple
    density_kg_m3: np.ndarray
    multi_engine: np.ndarray
    law_all: object
    law_one_out: object
    law_idle_all: object
    law_idle_one_out: object
    cd_roll: np.ndarray
    cd_roll_one_out: np.ndarray
    cd_brake: np.ndarray
    cd_brake_one_out: np.ndarray
    cd0_airborne_one_out: np.ndarray
    induced_factor: np.ndarray
    cl_roll: np.ndarray
    cl_brake: np.ndarray
    wing_area_m2: np.ndarray
    slope: np.ndarray
    mu_roll: np.ndarray
    mu_brake: np.ndarray
    headwind_mps: np.ndarray
    regime_terms: dict
    recognition_s: np.ndarray = None
    action_interval_s: np.ndarray = None
    rotation_s: np.ndarray = None

    @property
    def timed_events(self):
        """True where any case has a recognition, action or rotation time (the event sequence
        of :mod:`physics.takeoffevents`; False: the idealised sequence)."""
        return any(x is not None and np.any(x > 0.0) for x in (self.recognition_s, self.action_interval_s,
                                                                self.rotation_s))

    def take_cases(self, index):
        """The setup of the cases at ``index`` (integer array), gathered, not recomputed."""
        index = np.asarray(index)
        vals = {}
        laws = {}  # each thrust law once (the regimes' terms hold the same laws)

        def law(x):
            if id(x) not in laws:
                laws[id(x)] = x.take(index)
            return laws[id(x)]

        for f in dataclasses.fields(self):
            v = getattr(self, f.name)
            if f.name == "n":
                v = (index.size,)
            elif f.name == "regime_terms":  # groundrun.GroundRunTerms per regime
                # each regime's law holds the values of the setup's law of that engine state
                same = {k: getattr(self, name) for k, name in _REGIME_LAWS.items()}
                v = {k: type(t)(law(same[k] if k in same and np.shape(same[k].t0_n) == np.shape(t.law.t0_n)
                                    else t.law), *(np.asarray(x)[index] for x in t[1:])) for k, t in v.items()}
            elif f.name.startswith("law_"):
                v = law(v)
            elif v is None:
                pass
            else:
                v = np.asarray(v)[index]
            vals[f.name] = v
        return EngineFailureSetup(**vals)


#: The setup's thrust law of each ground regime's engine state (``regime_terms``).
_REGIME_LAWS = {"all_engines": "law_all", "one_out": "law_one_out", "stop_all": "law_idle_all",
                "stop_one_out": "law_idle_one_out"}


def engine_failure_setup(aircraft, site, shape=(), one_engine_law=None):
    """Mass-independent thrust laws and coefficients of the engine-failure cases.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields (arrays over cases).
    site : physics.weightlimit.Site
        Runway and day fields (arrays over cases).
    shape : tuple, optional
        Extra shape to broadcast to (e.g. that of an array of trial masses). [–]
    one_engine_law : physics.thrust.ThrustLaw, optional
        The takeoff thrust of one engine for these cases and day, when the caller has it
        (:meth:`physics.weightlimit.Cases.one_engine_thrust_law`; shape of the cases).

    Returns
    -------
    EngineFailureSetup
        Arrays of the cases' broadcast shape (one dimension; scalars give shape (1,)).

    Notes
    -----
    Ground roll: C_D = C_D0 (clean + gear + flaps) + phi K C_L,roll² (Anderson Eq. 6.78);
    one engine out adds ΔC_D,eo and keeps N − 1 engines at takeoff thrust. Braking: lift
    dumpers give C_L,brake and ΔC_D,brake; idle thrust (``idle_thrust_fraction`` of takeoff
    thrust) on N engines (all-engines stop) or N − 1 engines plus ΔC_D,eo (engine-failure
    stop); friction ``mu_brake``. Airborne with one engine out: C_D0 (clean + gear + flaps)
    + ΔC_D,eo, no ground effect.

    References
    ----------
    .. [1] 14 CFR 25.109, 25.111. .. [2] Anderson (1999), Eq. 6.78, §6.8.
    .. [3] Raymer, §17.8 (braking friction and lift dumpers).
    """
    from fieldlimits.physics import aerodynamics, atmosphere, groundrun, thrust

    a, s = aircraft, site
    rho = atmosphere.density_kg_m3(s.pressure_pa, s.temperature_k)
    n = np.broadcast_shapes(*(np.shape(x) for x in (rho, a.engine_count, s.tora_m, s.headwind_mps,
                                                     a.mtow_kg, s.mu_brake)), tuple(shape)) or (1,)
    b = lambda x: _as_shape(x, n)  # noqa: E731
    n_eng = b(a.engine_count)
    multi = n_eng > 1
    k = b(aerodynamics.induced_drag_factor(a.oswald_efficiency,
                                           aerodynamics.aspect_ratio(a.wing_span_m, a.wing_area_m2)))
    phi = aerodynamics.ground_effect_factor(a.wing_height_m, a.wing_span_m)
    cd0 = b(a.cd0_clean) + b(a.cd0_gear) + b(a.cd0_takeoff_flaps)
    cd_roll = b(aerodynamics.drag_coefficient(cd0, k, a.cl_ground_roll, phi))
    cd_brake = b(aerodynamics.drag_coefficient(cd0 + b(a.braking_cd_increment), k, a.braking_cl, phi))
    eo = np.where(multi, b(a.engine_out_drag_cd), 0.0)
    n_out = np.where(multi, n_eng - 1.0, n_eng)
    idle = b(a.idle_thrust_fraction)
    p, t = b(s.pressure_pa), b(s.temperature_k)
    law = lambda ops, tau=1.0: thrust.thrust_law_for_aircraft(  # noqa: E731
        a, p, t, engines_operating=ops, throttle=tau)
    rho_b, area, slope = b(rho), b(a.wing_area_m2), b(s.slope)
    cl_roll, cl_brake, mu_roll, mu_brake = b(a.cl_ground_roll), b(a.braking_cl), b(s.mu_roll), b(s.mu_brake)
    # T is linear in engines × throttle (physics.thrust.thrust_law): one engine's law, scaled
    one = law(1.0) if one_engine_law is None or np.shape(one_engine_law.t0_n) != n else one_engine_law
    laws = tuple(one.scaled(ops * tau) for ops, tau in ((n_eng, 1.0), (n_out, 1.0), (n_eng, idle), (n_out, idle)))
    terms = lambda lw, cd, cl, mu: groundrun.ground_run_terms(  # noqa: E731
        lw, wing_area_m2=area, density_kg_m3=rho_b, cd=cd, cl=cl, mu=mu, slope=slope)
    regimes = {"all_engines": terms(laws[0], cd_roll, cl_roll, mu_roll),
               "one_out": terms(laws[1], cd_roll + eo, cl_roll, mu_roll),
               "stop_all": terms(laws[2], cd_brake, cl_brake, mu_brake),
               "stop_one_out": terms(laws[3], cd_brake + eo, cl_brake, mu_brake)}
    times = [b(getattr(a, name, 0.0)) for name in ("engine_failure_recognition_s", "stop_action_interval_s")]
    times[0] = np.where(multi, times[0], 0.0)  # no engine failure to recognise on a single
    times.append(b(takeoffevents.rotation_time_s(getattr(a, "rotation_pitch_deg", 0.0),
                                                  getattr(a, "rotation_rate_deg_per_s", 3.0))))
    return EngineFailureSetup(
        n, rho_b, multi, *laws,
        cd_roll, cd_roll + eo, cd_brake, cd_brake + eo, cd0 + eo, k, cl_roll, cl_brake,
        area, slope, mu_roll, mu_brake, b(s.headwind_mps), regimes, *times)


def _mass_independent(su, aircraft):
    """The parts of :func:`engine_failure_model` that do not depend on the mass, computed on
    first use and kept with the setup ``su`` (a setup taken for a subset computes its own)."""
    fixed = su.__dict__.get("_fixed")
    if fixed is None:
        b = lambda x: _as_shape(x, su.n)  # noqa: E731
        a, rho = aircraft, su.density_kg_m3
        # as scheduled_speeds_mps: V_S = sqrt(2 m g/(rho S C_Lmax)); V_MCG as a true airspeed
        vmcg = np.where(su.multi_engine, b(a.vmcg_mps) * np.sqrt(c.RHO0_KG_M3 / rho), 0.0)
        fixed = {"stall_denominator": rho * b(a.wing_area_m2) * b(a.cl_max_takeoff),
                 "speed_ratios": (b(a.vr_over_vs), b(a.vlof_over_vs), b(a.v2_over_vs)), "vmcg_mps": vmcg,
                 # the propeller and the tailwind cases (GroundRegime): the same in every regime
                 "cases_index": (np.nonzero(np.asarray(su.law_all.is_propeller, dtype=bool))[0],
                                 np.nonzero(su.headwind_mps < 0.0)[0]),
                 # each ground regime's inputs to its kernel (GroundRegime), contiguous
                 "regime_inputs": {k: _regime_inputs(t, su.headwind_mps, su.n) for k, t in su.regime_terms.items()}}
        if su.timed_events:  # StopEvents' friction step, friction lift and lift-dumper terms
            _, cos_g = groundrun.slope_sin_cos(su.slope)
            d_mu = su.mu_brake - su.mu_roll
            half_rho_s = 0.5 * su.density_kg_m3 * su.wing_area_m2
            fixed["stop_terms"] = (d_mu * c.G0 * cos_g, half_rho_s * su.cl_roll * d_mu,
                                   half_rho_s * ((su.cd_brake - su.cd_roll) - su.mu_brake * (su.cl_brake - su.cl_roll)))
        object.__setattr__(su, "_fixed", fixed)  # the dataclass is frozen; this is a cache
    return fixed


def engine_failure_model(aircraft, site, mass_kg, setup=None):
    """Build the ground regimes and speeds of the engine-failure cases for a mass.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields (arrays over cases).
    site : physics.weightlimit.Site
        Runway and day fields (arrays over cases).
    mass_kg : array_like
        Trial mass. [kg]
    setup : EngineFailureSetup, optional
        The mass-independent parts (from :func:`engine_failure_setup`; built if omitted).

    Returns
    -------
    EngineFailureModel
        Regimes, speeds and the V1 range, arrays of the cases' broadcast shape (one
        dimension; scalars give shape (1,)).

    Notes
    -----
    See :func:`engine_failure_setup` for the configurations. V1 range [max(V_MCG, w), VR];
    single-engine types: V1 = VR.

    References
    ----------
    .. [1] 14 CFR 25.107, 25.109. .. [2] Anderson (1999), Eq. 6.78, §6.8.
    """
    su = engine_failure_setup(aircraft, site, np.shape(mass_kg)) if setup is None else setup
    # writeable and contiguous: the compiled passes of the regimes and speeds take it as it is
    (m,) = groundrun._kernel_args([_as_shape(mass_kg, su.n)], su.n)
    fixed = _mass_independent(su, aircraft)
    # scheduled_speeds_mps with its mass-independent parts computed once per solve
    speeds = _scheduled_speeds(m, fixed["stall_denominator"], fixed["speed_ratios"], fixed["vmcg_mps"])
    w = su.headwind_mps
    common = dict(mass_kg=m, wing_area_m2=su.wing_area_m2, density_kg_m3=su.density_kg_m3, slope=su.slope,
                  headwind_mps=w)
    roll = dict(common, mu=su.mu_roll, cl=su.cl_roll)
    brake = dict(common, mu=su.mu_brake, cl=su.cl_brake)
    t, inputs = su.regime_terms, fixed["regime_inputs"]
    roll["cases_index"] = brake["cases_index"] = fixed["cases_index"]
    all_engines = GroundRegime(su.law_all, cd=su.cd_roll, **roll, terms=t["all_engines"],
                               inputs=inputs["all_engines"])
    one_out = GroundRegime(su.law_one_out, cd=su.cd_roll_one_out, **roll, terms=t["one_out"], inputs=inputs["one_out"])
    stop_all = GroundRegime(su.law_idle_all, cd=su.cd_brake, **brake, terms=t["stop_all"], inputs=inputs["stop_all"])
    # the engine-failure stop is needed only for the figures or the timed events: built on first use
    stop_one_out = _DeferredRegime(lambda: GroundRegime(su.law_idle_one_out, cd=su.cd_brake_one_out, **brake,
                                                        terms=t["stop_one_out"], inputs=inputs["stop_one_out"]))
    events = None
    if su.timed_events:
        a_vr = one_out.acceleration(speeds.vr_mps)
        if np.any(su.rotation_s > 0.0):  # lift-off after the rotation, one engine out
            vlof = takeoffevents.rotation_liftoff_speed_mps(speeds.vr_mps, speeds.vlof_mps, a_vr, su.rotation_s)
            speeds = dataclasses.replace(speeds, vlof_mps=vlof)
        events = StopEvents(su.recognition_s, su.action_interval_s, m, *fixed["stop_terms"])
    lo = np.maximum(speeds.vmcg_mps, w)
    hi = np.maximum(speeds.vr_mps, lo)
    if events is not None and np.any(events.recognition_s > 0.0):
        # V_EF at most VR less the speed gained in the recognition interval (V1 ≤ VR)
        gain = events.recognition_s * a_vr
        hi = np.where(events.recognition_s > 0.0, np.maximum(speeds.vr_mps - gain, lo), hi)
    lo = np.where(su.multi_engine, lo, hi)  # single engine: V1 = VR
    return EngineFailureModel(m, su.density_kg_m3, speeds, w, su.multi_engine, all_engines, one_out, stop_all,
                              stop_one_out, lo, hi, events)


def accelerate_stop_cases_m(model, v1_mps, *, delay_s=STOP_DELAY_S):
    """Accelerate-stop distances of both 25.109(a) cases at a V1.

    Parameters
    ----------
    model : EngineFailureModel
        From :func:`engine_failure_model`.
    v1_mps : array_like
        Decision speed, true airspeed. [m/s]
    delay_s : float, optional
        Time at V1 before braking. [s]

    Returns
    -------
    engine_failure_m, all_engines_m : numpy.ndarray
        Distance with the failed engine (N − 1 at idle, its drag kept) and with all engines at
        idle; for single-engine types both are the all-engines case. [m]

    Notes
    -----
    s = S_all(w → V1) + t_d (V1 − w) + S_brake(V1 → w); the greater of the two governs
    (25.109(a)). With V_EF = V1 the all-engines stop is never the shorter: its idle thrust is
    larger and its drag smaller.

    References
    ----------
    .. [1] 14 CFR 25.109(a)(1), (a)(2).
    """
    w = model.headwind_mps
    v1 = np.broadcast_to(np.asarray(v1_mps, dtype=float), w.shape)
    go = model.all_engines.distance_m(w, v1) + delay_s * (v1 - w)
    eo = go + model.stop_one_out.distance_m(v1, w)
    al = go + model.stop_all.distance_m(v1, w)
    eo = np.where(model.multi_engine, eo, al)
    return eo, al


def continued_takeoff_ground_run_m(model, v1_mps):
    """Ground distance to lift-off with the engine failing at V1 (multi-engine types).

    Parameters
    ----------
    model : EngineFailureModel
        From :func:`engine_failure_model`.
    v1_mps : array_like
        Decision speed, true airspeed. [m/s]

    Returns
    -------
    numpy.ndarray
        S_all(w → V1) + S_oei(V1 → V_LOF); NaN for single-engine types and where lift-off
        speed cannot be reached. [m]

    Notes
    -----
    See :func:`continued_takeoff_ground_m`.

    References
    ----------
    .. [1] 14 CFR 25.113(a)(1).
    """
    w = model.headwind_mps
    v1 = np.broadcast_to(np.asarray(v1_mps, dtype=float), w.shape)
    s = model.all_engines.distance_m(w, v1) + model.one_out.distance_m(v1, model.speeds.vlof_mps)
    return np.where(model.multi_engine, s, np.nan)


class V1Search(NamedTuple):
    """Result of the V1 search: the engine-failure speed, V1 and the parts of the distances
    at the final evaluation (arrays over cases)."""

    v_ef_mps: np.ndarray  # V_EF (= V1 without a recognition interval) [m/s]
    v1_mps: np.ndarray  # V1 [m/s]
    one_out_m: np.ndarray  # S_oei(V_EF → V_LOF) [m]
    braking_m: np.ndarray  # all-engines stop: full braking to rest after the stop actions [m]
    to_v1_m: np.ndarray  # all engines from V_EF to V1 (0 without a recognition interval) [m]
    actions_m: np.ndarray  # all-engines stop: V1 until the lift dumpers are in [m]
    accel_one_out_mps2: np.ndarray = None  # a_oei(V_EF) at the last evaluation [m/s²]
    v_next_mps: np.ndarray = None  # V_EF one Newton step on from the last evaluation [m/s]


def _v1_estimate_mps(model, base, delay_s):
    """Cold start of the V1 search: the root of h with each ground piece at constant
    acceleration (taken mid-piece from the middle of the range), clipped to the range.

    With x = V − w, X = V_LOF − w, a_o > 0 the one-engine-inoperative acceleration and b > 0
    the braking deceleration: h ≈ base − (X² − x²)/(2 a_o) + t_d x + x²/(2 b), a quadratic in
    x; the middle of the range where it has no usable root.
    """
    w = model.headwind_mps
    lo, hi = model.v1_min_mps, model.v1_max_mps
    mid = 0.5 * (lo + hi)
    vlof = model.speeds.vlof_mps
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        a_o = model.one_out.acceleration(0.5 * (mid + vlof))
        b = -model.stop_all.acceleration(0.5 * (mid + np.fmax(w, 0.0)))
        big_x = vlof - w
        quad = 0.5 / a_o + 0.5 / b
        const = base - 0.5 * big_x * big_x / a_o
        x = (np.sqrt(delay_s * delay_s - 4.0 * quad * const) - delay_s) / (2.0 * quad)
        if model.events is not None:  # V_EF one recognition interval before V1
            x = x - a_o * model.events.recognition_s
        est = np.clip(w + x, lo, hi)
    usable = (a_o > 0.0) & (b > 0.0) & np.isfinite(est)
    return np.where(usable, est, mid)


def _newton_v1(model, base, v1_start_mps, iterations, delay_s, next_step=False, step_tol_mps=None,
               extrapolate_mps=None):
    """Newton on h over the engine-failure speed (V1 itself in the idealised sequence).

    ``next_step``: also take the Newton step from each case's last evaluation (its h and
    slope are at hand; no distance is evaluated at the new speed), as ``v_next_mps``: the
    start for a nearby mass. ``step_tol_mps``: a case also stops where its Newton step
    (clipped to the range) is at most this; its distances are those of the speed evaluated
    last, within that step of the root. ``extrapolate_mps``: a case also stops where its
    Newton step is at most this, and takes the step: its speeds and distances are carried
    to the new speed along their slopes in the speed (the slopes that make up dh/dV), off by
    the step squared (:data:`V1_EXTRAPOLATE_MPS`)."""
    w = model.headwind_mps
    lo, hi = model.v1_min_mps, model.v1_max_mps
    vlof = model.speeds.vlof_mps
    if v1_start_mps is None:
        v1 = np.broadcast_to(_v1_estimate_mps(model, base, delay_s), w.shape).astype(float)
    else:
        start = np.broadcast_to(np.asarray(v1_start_mps, dtype=float), w.shape)
        v1 = np.clip(start, lo, hi)
        cold = np.flatnonzero(~np.isfinite(start))
        if cold.size:  # the closed-form start only where no earlier trial gives one
            est = _v1_estimate_mps(model, base, delay_s)
            v1[cold] = np.broadcast_to(est, w.shape)[cold]
    multi = model.multi_engine
    count = np.broadcast_to(np.asarray(iterations), w.shape)
    total = max(int(np.max(count, initial=0)), 1)  # initial: an empty batch has no maximum
    s_oei = np.full(w.shape, np.nan)
    s_stop = np.full(w.shape, np.nan)
    ev = model.events
    if ev is None:  # the idealised sequence: each case's whole loop in one compiled pass
        oo, sa = model.one_out, model.stop_all
        v_next = np.array(v1, copy=True) if next_step else np.zeros(0)
        (v1,) = groundrun._kernel_args([np.asarray(v1, dtype=float)], w.shape)
        _newton_search(v1, *groundrun._kernel_args([base, vlof, w, lo, hi], w.shape),
                       np.ascontiguousarray(np.broadcast_to(multi, w.shape), dtype=np.bool_),
                       np.ascontiguousarray(count, dtype=np.int64), total, float(delay_s), bool(next_step),
                       -1.0 if step_tol_mps is None else float(step_tol_mps),
                       -1.0 if extrapolate_mps is None else float(extrapolate_mps), oo._distance_terms(),
                       sa._distance_terms(), oo._acceleration_terms(), sa._acceleration_terms(), s_oei, s_stop, v_next)
        zero = np.zeros(w.shape)
        return V1Search(v1, v1, s_oei, s_stop, zero, zero, v_next_mps=v_next if next_step else None)
    # the timed event sequence (physics.takeoffevents): passes per case at each evaluation
    out_v1, out_pre, out_act = np.full(w.shape, np.nan), np.zeros(w.shape), np.zeros(w.shape)
    out_a = np.full(w.shape, np.nan)
    idx, evi, sub = None, ev, None
    oo, sa, ae = model.one_out, model.stop_all, model.all_engines  # evaluated at the cases ``sub`` (None: all)
    v_next = np.array(v1, copy=True) if next_step else None
    settled = np.zeros(w.shape, dtype=bool)
    for k in range(total):
        need = (count > k) & ~settled
        if k == 0 or not np.all(need[idx] if idx is not None else need):
            # evaluate only the cases still iterating (each has its own count)
            idx = np.nonzero(need | (k == 0))[0]
            if idx.size == 0:
                break
            full = idx.size == w.size
            sub = None if full else idx  # the regimes evaluate these cases (none gathered)
            # the cases' inputs (the arrays themselves where every case is evaluated)
            pick = (lambda x: x) if full else (lambda x: x[idx])  # noqa: E731
            at = slice(None) if full else idx  # where their results go
            evi = ev if full else ev.take(idx)
        vi, wi = pick(v1), pick(w)
        so = oo.distance_m(vi, pick(vlof), index=sub)
        # V_EF = vi; V1 one recognition interval later; the all-engines stop from V1
        # with its stop actions (physics.takeoffevents)
        # (accelerations of the timed pieces taken at V1, as by hand)
        a_oo, d_oo = oo.acceleration(vi, slope=True, index=sub)
        t_r = evi.recognition_s
        v1_raw = takeoffevents.recognition_v1_mps(vi, a_oo, t_r)
        v1i = np.clip(v1_raw, vi, np.maximum(pick(model.speeds.vr_mps), vi))
        (a_ae, d_ae), (a_sa1, d_sa1) = (ae.acceleration(v1i, slope=True, index=sub),
                                        sa.acceleration(v1i, slope=True, index=sub))
        v_act, act, dv_act, d_act = evi.actions(v1i, wi, a_ae, a_sa1, slopes=(d_ae, d_sa1))
        ss = sa.distance_m(v_act, wi, index=sub)
        # h, its slope in V_EF and the Newton step, one pass per case (_timed_newton_step)
        pre, dv1, d_pre, a_sa, dh, step = (np.empty(idx.size) for _ in range(6))
        _timed_newton_step(*groundrun._kernel_args(
            [pick(base), so, ss, vi, wi, v1i, v1_raw, _as_shape(t_r, vi.shape), a_oo, d_oo, a_ae, d_ae, a_sa1,
             sa.acceleration(v_act, index=sub), _as_shape(evi.action_interval_s, vi.shape), v_act, act, dv_act, d_act],
            vi.shape), float(delay_s), pre, dv1, d_pre, a_sa, dh, step)
        s_oei[at], s_stop[at] = so, ss
        out_v1[at], out_pre[at], out_act[at], out_a[at] = v1i, pre, act, a_oo
        if k == total - 1 and not next_step:
            break
        vg = vi - wi
        # a case stops stepping after its own number of evaluations (last step at k = count − 2);
        # the step, where it moves V_EF to, whether the case goes on, and where it stops by
        # taking the step without evaluating there (extrapolated), one pass per case
        moved, going, near = np.empty(idx.size), np.empty(idx.size, dtype=np.bool_), np.empty(idx.size, dtype=np.bool_)
        _newton_advance(*groundrun._kernel_args(
            [vi, step, dh, pick(lo), pick(hi), v1i, v1_raw, v_act, wi, dv1, pick(model.speeds.vr_mps)], vi.shape),
            np.array(pick(multi), dtype=np.bool_), np.array(pick(count), dtype=np.int64), k,
            -1.0 if step_tol_mps is None else float(step_tol_mps),
            -1.0 if extrapolate_mps is None else float(extrapolate_mps), True, moved, going, near)
        if extrapolate_mps is not None:
            f = np.flatnonzero(near)
            if f.size:  # the step taken without evaluating there: each part along its slope
                i, d = idx[f], moved[f] - vi[f]
                dvf = dv1[f] * d
                s_oei[i] -= (vg[f] / a_oo[f]) * d
                out_pre[i] += d_pre[f] * d
                out_act[i] += d_act[f] * dvf
                s_stop[i] -= (v_act[f] - wi[f]) / a_sa[f] * dv_act[f] * dvf
                out_v1[i] = v1i[f] + dvf
                out_a[i] = a_oo[f] + d_oo[f] * d
        if step_tol_mps is not None or extrapolate_mps is not None:
            settled[at] = ~going
        v1[at] = np.where(going | near, moved, vi)
        if next_step:
            v_next[at] = moved
    return V1Search(v1, out_v1, s_oei, s_stop, out_pre, out_act, out_a, v_next_mps=v_next)


def best_v1_mps(model, *, go_available_m, asda_m, v1_start_mps=None, iterations=V1_ITERATIONS,
                delay_s=STOP_DELAY_S):
    """The V1 in [V_MCG, VR] that balances the go and stop margins (model version).

    Parameters
    ----------
    model : EngineFailureModel
        From :func:`engine_failure_model`.
    go_available_m : array_like
        Ground distance the continued takeoff may use (:func:`go_constant_m`). [m]
    asda_m : array_like
        Accelerate-stop distance available. [m]
    v1_start_mps : array_like, optional
        First guess. [m/s]
    iterations : int, optional
        Evaluations of h (``iterations − 1`` Newton steps). [–]
    delay_s : float, optional
        Time at V1 before braking. [s]

    Returns
    -------
    numpy.ndarray
        V1, true airspeed; VR for single-engine types. [m/s]

    Notes
    -----
    Newton on h(V1) = C_go − ASDA − S_oei(V1 → V_LOF) + t_d (V1 − w) + S_stop(V1 → w) with
    the all-engines stop (the governing one, see :func:`accelerate_stop_cases_m`); steps
    clipped to the range; non-finite steps (a case that cannot lift off) are not taken.

    References
    ----------
    .. [1] 14 CFR 25.109, 25.113. .. [2] Raymer, §17.8.
    """
    base = np.broadcast_to(np.asarray(go_available_m, dtype=float) - np.asarray(asda_m, dtype=float),
                           model.headwind_mps.shape)
    v1 = _newton_v1(model, base, v1_start_mps, iterations, delay_s).v1_mps
    return np.where(model.multi_engine, v1, model.v1_max_mps)


def continued_takeoff_airborne_m(model, setup, screen_height_m):
    """Ground distance from lift-off to the screen height with one engine inoperative.

    Parameters
    ----------
    model : EngineFailureModel
        From :func:`engine_failure_model`.
    setup : EngineFailureSetup
        From :func:`engine_failure_setup`.
    screen_height_m : array_like
        Screen height: 10.668 (35 ft) dry, 4.572 (15 ft) wet. [m]

    Returns
    -------
    numpy.ndarray
        Ground distance; NaN where the aircraft cannot climb on N − 1 engines (and for
        single-engine types). [m]

    Notes
    -----
    As the all-engines airborne segment (:func:`physics.fieldlength.all_engines_takeoff`) with
    the thrust of N − 1 engines and the drag increment of the failed engine:
    V_TR = ½ (V_LOF + V2); C_L = W/(q S); sin gamma = (T_{N−1}(V_TR) − q S (C_D0 + ΔC_D,eo +
    K C_L²))/W; transition arc and climb (Raymer Eqs. 17.105–17.112); ground distance × (V_TR −
    w)/V_TR.

    References
    ----------
    .. [1] 14 CFR 25.111, 25.113(a)(1). .. [2] Raymer, §17.8.
    """
    from fieldlimits.physics import airborne

    sp = model.speeds
    v_tr = 0.5 * (sp.vlof_mps + np.fmax(sp.v2_mps, sp.vlof_mps))  # a rotation may lift off above V2
    out = airborne.climb_out(setup.law_one_out, mass_kg=model.mass_kg, density_kg_m3=setup.density_kg_m3,
                             wing_area_m2=setup.wing_area_m2, v_transition_mps=v_tr,
                             cd0=setup.cd0_airborne_one_out, induced_factor=setup.induced_factor,
                             screen_height_m=screen_height_m, headwind_mps=model.headwind_mps)[2]
    return np.where(model.multi_engine, out.reshape(v_tr.shape), np.nan)


@dataclass(frozen=True)
class EngineFailureTakeoff:
    """The engine-failure cases at one trial mass with the best V1 (arrays over cases).

    Attributes
    ----------
    v1_mps : V1 chosen, true airspeed [m/s].
    speeds : TakeoffSpeeds (true airspeeds) [m/s].
    ground_run_m : brake release to lift-off, engine failing at V1 [m].
    airborne_m : lift-off to the screen, one engine out (ground distance) [m].
    takeoff_distance_m, takeoff_run_m : one-engine-inoperative distance and run [m]
        (NaN for single-engine types).
    accelerate_stop_m : the greater of the two 25.109(a) cases [m].
    accelerate_stop_engine_failure_m, accelerate_stop_all_engines_m : the two cases [m].
    v_ef_mps : engine-failure speed V_EF (= V1 in the idealised sequence) [m/s].
    v_next_mps : V_EF one Newton step on from the last evaluation (with ``next_step``) [m/s].
    """

    v1_mps: np.ndarray
    speeds: TakeoffSpeeds
    ground_run_m: np.ndarray
    airborne_m: np.ndarray
    takeoff_distance_m: np.ndarray
    takeoff_run_m: np.ndarray
    accelerate_stop_m: np.ndarray
    accelerate_stop_engine_failure_m: np.ndarray
    accelerate_stop_all_engines_m: np.ndarray
    v_ef_mps: np.ndarray = None
    v_next_mps: np.ndarray = None


def engine_failure_takeoff(aircraft, site, mass_kg, *, setup=None, v1_start_mps=None,
                           iterations=V1_ITERATIONS, both_stops=True, next_step=False, v1_tolerance_mps=None,
                           v1_extrapolate_mps=None):
    """Continued takeoff and accelerate-stop at a mass, with the V1 that suits the runway.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields (arrays over cases).
    site : physics.weightlimit.Site
        Runway, day and factored wind (arrays over cases); ``screen_height_m`` 35 ft dry,
        15 ft wet; ``mu_brake`` for the condition.
    mass_kg : array_like
        Trial mass. [kg]
    setup : EngineFailureSetup, optional
        Mass-independent parts (reuse across trial masses).
    v1_start_mps : array_like, optional
        First guess for V1 (e.g. the V1 of the previous trial mass). [m/s]
    iterations : int or array_like of int, optional
        Evaluations of the V1 search (per case allowed). [–]
    both_stops : bool, optional
        Also compute the engine-failure stop (never longer than the all-engines stop with
        V_EF = V1, see :func:`accelerate_stop_cases_m`); False leaves it NaN (faster). [–]
    next_step : bool, optional
        Also give the V_EF one Newton step on from the last evaluation (the start for a
        nearby mass; no distance is evaluated there). [–]
    v1_tolerance_mps : float, optional
        Stop a case's search early where its Newton step is at most this (``iterations`` is
        then the most); None: every case makes its ``iterations`` evaluations. [m/s]
    v1_extrapolate_mps : float, optional
        Stop a case's search where its Newton step is at most this, and take that step
        without evaluating there: the distances are carried to the new speed along their
        slopes (second-order error; :data:`V1_EXTRAPOLATE_MPS`). None: not done. [m/s]

    Returns
    -------
    EngineFailureTakeoff
        Distances at the chosen V1.

    Notes
    -----
    V1 maximises the smaller of the go margin (least of TODA − TOD_oei and TORA − TOR_oei,
    clearway rule) and the stop margin ASDA − ASD over [V_MCG, VR] (:func:`best_v1_mps`);
    TOD_oei = S_all(w → V1) + S_oei(V1 → V_LOF) + airborne_oei; TOR_oei = ground + half the
    airborne part with a clearway, = TOD_oei without; ASD = max of the 25.109(a) cases.

    References
    ----------
    .. [1] 14 CFR 25.109, 25.113. .. [2] Raymer, §17.8.
    """
    su = engine_failure_setup(aircraft, site, np.shape(mass_kg)) if setup is None else setup
    model = engine_failure_model(aircraft, site, mass_kg, setup=su)
    b = lambda x: _as_shape(x, su.n)  # noqa: E731
    toda, tora, asda = b(site.toda_m), b(site.tora_m), b(site.asda_m)
    air = continued_takeoff_airborne_m(model, su, b(site.screen_height_m))
    go_avail = go_constant_m(toda_m=toda, tora_m=tora, airborne_m=air)
    base = go_avail - asda
    found = _newton_v1(model, base, v1_start_mps, iterations, STOP_DELAY_S, next_step, v1_tolerance_mps,
                       v1_extrapolate_mps)
    v_ef, v1 = found.v_ef_mps, found.v1_mps
    w = model.headwind_mps
    multi = model.multi_engine
    to_v1 = model.all_engines.distance_m(w, v_ef)  # all engines to the failure (V1 when idealised)
    ground = np.where(multi, to_v1 + found.one_out_m, np.nan)
    tod = ground + air
    tor = ground + np.where(toda > tora, 0.5 * air, air)
    al = to_v1 + found.to_v1_m + STOP_DELAY_S * (v1 - w) + found.actions_m + found.braking_m
    ev = model.events
    if ev is not None:
        # the engine-failure stop: the recognition interval on N − 1 engines, its own stop
        # actions and braking; with timed events either stop may be the longer
        _, recognition = takeoffevents.timed_piece(v_ef, found.accel_one_out_mps2, ev.recognition_s, w)
        v_act, act = ev.actions(v1, w, model.one_out.acceleration(v1), model.stop_one_out.acceleration(v1))
        eo = to_v1 + recognition + STOP_DELAY_S * (v1 - w) + act + model.stop_one_out.distance_m(v_act, w)
        eo = np.where(multi, eo, al)
    elif both_stops:
        eo = np.where(multi, to_v1 + STOP_DELAY_S * (v1 - w) + model.stop_one_out.distance_m(v1, w), al)
    else:
        eo = np.full(al.shape, np.nan)
    return EngineFailureTakeoff(v1, model.speeds, ground, air, tod, tor, np.fmax(eo, al), eo, al, v_ef,
                                found.v_next_mps)


def balanced_field_length_m(aircraft, site, mass_kg, *, iterations=12):
    """Balanced field length: the runway on which go and stop need the same distance.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields.
    site : physics.weightlimit.Site
        Day, slope, wind, friction and screen height (declared distances unused).
    mass_kg : array_like
        Mass (e.g. MTOW). [kg]
    iterations : int, optional
        Newton steps. [–]

    Returns
    -------
    length_m : numpy.ndarray
        max(TOD_oei, ASD) at the balancing V1 (equal where that V1 lies inside
        [V_MCG, VR]; NaN for single-engine types). [m]
    v1_mps : numpy.ndarray
        The balancing V1 (true airspeed), clipped to [V_MCG, VR]. [m/s]

    Notes
    -----
    With TODA = ASDA = L and no clearway, h(V1) = (L − air) − L − S_oei + t_d (V1 − w) +
    S_stop = −air − S_oei(V1 → V_LOF) + t_d (V1 − w) + S_stop(V1 → w), independent of L
    (with the timed event sequence of the type, :func:`engine_failure_takeoff`).
    The all-engines requirement (1.15 × TOD_all) is separate: the field length an operator
    needs is the greater of the two.

    References
    ----------
    .. [1] Raymer, §17.8 (balanced field length). .. [2] 14 CFR 25.109, 25.113.
    """
    # TODA = TORA = ASDA = L: the go margin less the stop margin does not depend on L, so any
    # L (here 0) gives the balancing V1; the distances are then those of the event sequence
    no_runway = dataclasses.replace(site, tora_m=0.0, toda_m=0.0, asda_m=0.0)
    r = engine_failure_takeoff(aircraft, no_runway, mass_kg, iterations=iterations)
    multi = np.broadcast_to(np.asarray(aircraft.engine_count, dtype=float) > 1, r.v1_mps.shape)
    return np.where(multi, np.maximum(r.takeoff_distance_m, r.accelerate_stop_m), np.nan), r.v1_mps


# --- requirements for physics.weightlimit (margin(cases, mass_kg, memo) -> array) ----------

#: Added to the accelerate-stop margin so that on a balanced runway (TODA = ASDA, both
#: distances binding at the balanced V1) the factor named is ``takeoff_distance``, not a
#: rounding-noise choice between the two. 1e-9 of ASDA is a few micrometres. [–]
STOP_TIE_BIAS = 1e-9


def weight_limit_engine_failure(cases, mass_kg, memo):
    """Engine-failure cases at the solver's trial masses (memoised per mass, V1 warm-started).

    Parameters
    ----------
    cases : physics.weightlimit.Cases
        Prepared cases (``aircraft``, ``site``, ``cached``).
    mass_kg : numpy.ndarray
        Trial mass per case. [kg]
    memo : dict
        Per-trial-mass store.

    Returns
    -------
    EngineFailureTakeoff
        At the V1 that suits each runway.

    Notes
    -----
    The mass-independent set-up is built once per solve (``cases.cached``). Each trial
    mass's Newton search starts from the V_EF predicted for it: the secant in the mass
    through the two previous trials' V_EF, each taken one Newton step on from its last
    evaluation (:data:`PREDICT`; the previous V_EF where only one is known); the number of
    evaluations falls with the relative mass change since the previous trial, and a case
    stops once its Newton step is at most :data:`V1_STEP_TOL_MPS`
    (:data:`V1_STEP_TOL_FINAL_MPS` in the solver's closing evaluations).

    References
    ----------
    .. [1] 14 CFR 25.109, 25.113.
    """
    if "engine_failure" not in memo:
        setup = cases.cached("engine_failure_setup", lambda cs: engine_failure_setup(
            cs.aircraft, cs.site, one_engine_law=cs.one_engine_thrust_law()))
        state = cases.cached("engine_failure_state", lambda cs: {})
        guess, last = state.get("v1"), state.get("mass")
        if guess is not None and last is not None and np.shape(guess) == setup.n == np.shape(last):
            # per case, so that a case's result does not depend on the rest of the batch
            with np.errstate(invalid="ignore", divide="ignore"):
                change = np.abs(mass_kg - last) / last
                if PREDICT and state.get("v1_prev") is not None:
                    # the secant through the last two masses' V_EF, where both are known
                    slope = (guess - state["v1_prev"]) / (last - state["mass_prev"])
                    ahead = guess + slope * (mass_kg - last)
                    guess = np.where(np.isfinite(ahead), ahead, guess)
            cold = V1_ITERATIONS if cases._cache.get("engine_failure_final") else V1_ITERATIONS_FAR
            close = V1_ITERATIONS_WARM if cases._cache.get("engine_failure_final") else V1_ITERATIONS_CLOSE
            iterations = np.where(change <= CLOSE_MASS_CHANGE, close,
                                  np.where(change <= WARM_MASS_CHANGE, V1_ITERATIONS_WARM, cold))
        else:
            guess = None
            iterations = V1_ITERATIONS if cases._cache.get("engine_failure_final") else V1_ITERATIONS_SEARCH
        final = bool(cases._cache.get("engine_failure_final"))
        r = engine_failure_takeoff(cases.aircraft, cases.site, mass_kg, setup=setup, v1_start_mps=guess,
                                   iterations=iterations, both_stops=False, next_step=PREDICT,
                                   v1_tolerance_mps=None if not PREDICT else
                                   V1_STEP_TOL_FINAL_MPS if final else V1_STEP_TOL_MPS,
                                   v1_extrapolate_mps=None if final or not PREDICT else V1_EXTRAPOLATE_MPS)
        if PREDICT:
            if state.get("v1") is not None and np.shape(state["v1"]) == setup.n:
                state["v1_prev"], state["mass_prev"] = state["v1"], state["mass"]
            state["v1"] = r.v_next_mps
        else:
            state["v1"] = r.v_ef_mps  # the search variable
        state["mass"] = np.array(mass_kg, dtype=float, copy=True)
        memo["engine_failure"] = r
    return memo["engine_failure"]


def _distance_margin(available_m, required_m):
    with np.errstate(divide="ignore", invalid="ignore"):
        m = np.asarray(available_m, dtype=float) / np.asarray(required_m, dtype=float) - 1.0
    return np.where(np.isnan(m), -1.0, m)  # as physics.weightlimit.distance_margin


def _multi_only(cases, margin):
    multi = np.asarray(cases.aircraft.engine_count) > 1
    return np.where(multi, margin, np.inf)


def engine_out_takeoff_distance_margin(cases, mass_kg, memo):
    """Margin TODA/TOD_oei − 1 at the best V1 (+inf for single-engine types). [–]

    Parameters
    ----------
    cases : physics.weightlimit.Cases
        Prepared cases.
    mass_kg : numpy.ndarray
        Trial mass per case. [kg]
    memo : dict
        Per-trial-mass store.

    Returns
    -------
    numpy.ndarray
        Dimensionless margin, ≥ 0 where met; −1 where impossible. [–]

    Notes
    -----
    14 CFR 25.113(a)(1) (35 ft dry) and (b)(2) (15 ft wet, via ``screen_height_m``).

    References
    ----------
    .. [1] 14 CFR 25.113(a), (b).
    """
    r = weight_limit_engine_failure(cases, mass_kg, memo)
    return _multi_only(cases, _distance_margin(cases.site.toda_m, r.takeoff_distance_m))


def engine_out_takeoff_run_margin(cases, mass_kg, memo):
    """Margin TORA/TOR_oei − 1 at the best V1 (clearway rule; +inf for singles). [–]

    Parameters
    ----------
    cases : physics.weightlimit.Cases
        Prepared cases.
    mass_kg : numpy.ndarray
        Trial mass per case. [kg]
    memo : dict
        Per-trial-mass store.

    Returns
    -------
    numpy.ndarray
        Dimensionless margin, ≥ 0 where met; −1 where impossible. [–]

    Notes
    -----
    14 CFR 25.113(c)(1)/(d)(1): ground run + half the airborne part with a clearway, the
    takeoff distance without one.

    References
    ----------
    .. [1] 14 CFR 25.113(c), (d).
    """
    r = weight_limit_engine_failure(cases, mass_kg, memo)
    return _multi_only(cases, _distance_margin(cases.site.tora_m, r.takeoff_run_m))


def accelerate_stop_margin(cases, mass_kg, memo):
    """Margin ASDA/ASD − 1 at the best V1 (all-engines stop from VR for singles). [–]

    Parameters
    ----------
    cases : physics.weightlimit.Cases
        Prepared cases.
    mass_kg : numpy.ndarray
        Trial mass per case. [kg]
    memo : dict
        Per-trial-mass store.

    Returns
    -------
    numpy.ndarray
        Dimensionless margin, ≥ 0 where met; −1 where impossible. [–]

    Notes
    -----
    14 CFR 25.109(a): the greater of the engine-failure and all-engines cases, with the 2 s
    at V1; plus :data:`STOP_TIE_BIAS`.

    References
    ----------
    .. [1] 14 CFR 25.109(a), (b).
    """
    r = weight_limit_engine_failure(cases, mass_kg, memo)
    return _distance_margin(cases.site.asda_m, r.accelerate_stop_m) + STOP_TIE_BIAS
