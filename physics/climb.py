"""Takeoff climb: second-segment gradient and the climb-limited mass.

After lift-off and gear retraction, with takeoff flaps and one engine inoperative, a
transport-category aeroplane must climb at V2 with a gross gradient of at least 2.4 %, 2.7 %
or 3.0 % for two, three or four engines (14 CFR 25.121(b), the *second segment*). The
requirement depends on the air (thrust, density) and the mass but not on the runway: it is a
mass limit of its own.

Single-engine aeroplanes have no engine-out climb. The rule applied to them here is the
all-engines takeoff climb of the small-aeroplane standard, a steady gradient of at least
8.3 % for landplanes, gear up, takeoff flaps (14 CFR 23.65(a) before amendment 23-64 of 2017,
which replaced it by performance standards; from memory). The rule there is stated at sea
level; applying it at the day's pressure and temperature, as done here, is a conservative
planning choice of ours.

Model
-----
In steady climb at V2 the gross gradient is

    sin(gamma) = (T − D) / W,   gradient = tan(gamma),

with D = q S C_D, C_D = C_D0,clean + C_D0,flaps + ΔC_D,engine out + K C_L² (gear up, free air,
no ground effect: the second segment starts at gear-up, above the ground-effect height) and
C_L = W / (q S). At V2 = k2 V_S the lift coefficient is C_Lmax / k2², the same for every mass,
so D / W = C_D / C_L does not depend on mass: only thrust per unit weight does. Thrust is that
of the operating engines at V2, at the airfield's pressure and temperature (the field
conditions stand for the whole segment, a common planning simplification).

References
----------
.. [1] 14 CFR Part 25, §25.121(b) (second segment climb, one engine inoperative), §25.107(b)
   (V2); EASA CS-25 identical in these numbers.
.. [2] 14 CFR Part 23, §23.65(a) (takeoff climb, all engines, 8.3 % landplanes), as in force
   before amendment 23-64 (from memory).
.. [3] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.3 (steady climb,
   sin(gamma) = T/W − 1/(L/D)); §17.8 (takeoff climb requirements).
.. [4] J. D. Anderson, *Aircraft Performance and Design*, McGraw-Hill, 1999, §5.3 (rate and
   angle of climb).
"""

from __future__ import annotations

import numpy as np

from fieldlimits.physics import aerodynamics
from fieldlimits.physics import constants as c
from fieldlimits.physics.compiled import kernel
from fieldlimits.physics.thrust import _thrust_one

#: Minimum second-segment gradient by engine count, 14 CFR 25.121(b). [–]
SECOND_SEGMENT_MIN_GRADIENT = {2: 0.024, 3: 0.027, 4: 0.030}
#: Minimum all-engines takeoff climb gradient for single-engine landplanes,
#: 14 CFR 23.65(a) before amendment 23-64 (from memory). [–]
SINGLE_ENGINE_MIN_GRADIENT = 0.083


def required_climb_gradient(engine_count):
    """The minimum takeoff climb gradient that applies to an aircraft.

    Parameters
    ----------
    engine_count : array_like
        Number of engines. [–]

    Returns
    -------
    numpy.ndarray or float
        Minimum gross gradient: 0.083 for one engine (all engines operating), 0.024 / 0.027 /
        0.030 for two / three / four or more (one engine inoperative); NaN for fewer than
        one engine. [–]

    Notes
    -----
    Piecewise by engine count n: 0.083 (n = 1), 0.024 (n = 2), 0.027 (n = 3), 0.030 (n ≥ 4).

    References
    ----------
    .. [1] 14 CFR 25.121(b)(1).
    .. [2] 14 CFR 23.65(a), before amendment 23-64 (from memory).
    """
    n = np.rint(np.asarray(engine_count, dtype=float))
    out = np.select(
        [n == 1, n == 2, n == 3, n >= 4],
        [SINGLE_ENGINE_MIN_GRADIENT, SECOND_SEGMENT_MIN_GRADIENT[2],
         SECOND_SEGMENT_MIN_GRADIENT[3], SECOND_SEGMENT_MIN_GRADIENT[4]],
        np.nan,
    )
    return float(out) if out.ndim == 0 else out


def climb_engines_operating(engine_count):
    """Engines operating in the takeoff climb requirement: N − 1, or 1 for a single.

    Parameters
    ----------
    engine_count : array_like
        Number of engines. [–]

    Returns
    -------
    numpy.ndarray or float
        Engines producing thrust in the climb check. [–]

    Notes
    -----
    n_op = max(N − 1, 1) — the single-engine rule is an all-engines rule.

    References
    ----------
    .. [1] 14 CFR 25.121(b); 14 CFR 23.65(a) (from memory).
    """
    n = np.asarray(engine_count, dtype=float)
    out = np.where(n > 1, n - 1.0, n)
    return float(out) if out.ndim == 0 else out


def climb_drag_coefficient(*, cd0_clean, cd0_takeoff_flaps, engine_out_drag_cd, engine_count,
                           lift_coefficient, induced_drag_factor):
    """Drag coefficient in the takeoff climb: gear up, takeoff flaps, free air.

    Parameters
    ----------
    cd0_clean : array_like
        Zero-lift drag coefficient, clean. [–]
    cd0_takeoff_flaps : array_like
        Zero-lift drag increment of the takeoff flaps. [–]
    engine_out_drag_cd : array_like
        Drag increment of a failed engine (windmilling and trim); counted for multi-engine
        aircraft only. [–]
    engine_count : array_like
        Number of engines. [–]
    lift_coefficient : array_like
        Lift coefficient in the climb. [–]
    induced_drag_factor : array_like
        K = 1/(pi e AR), no ground effect. [–]

    Returns
    -------
    numpy.ndarray
        C_D. [–]

    Notes
    -----
    C_D = C_D0,clean + C_D0,flaps + [N > 1] ΔC_D,eo + K C_L².

    References
    ----------
    .. [1] Raymer, §12 (drag polar; parabolic polar) and §17.8.
    """
    n = np.asarray(engine_count, dtype=float)
    cl = np.asarray(lift_coefficient, dtype=float)
    eo = np.where(n > 1, engine_out_drag_cd, 0.0)
    return cd0_clean + cd0_takeoff_flaps + eo + induced_drag_factor * cl * cl


def climb_gradient(*, thrust_n, mass_kg, drag_coefficient, lift_coefficient):
    """Steady gross climb gradient from thrust, weight and the lift-to-drag ratio.

    Parameters
    ----------
    thrust_n : array_like
        Thrust of the operating engines at the climb speed. [N]
    mass_kg : array_like
        Mass. [kg]
    drag_coefficient : array_like
        C_D in the climb configuration. [–]
    lift_coefficient : array_like
        C_L in the climb (lift ≈ weight). [–]

    Returns
    -------
    numpy.ndarray
        Gradient tan(gamma) (negative when the aircraft cannot hold height); ±inf where
        (T − D)/W reaches ±1 (a vertical path). [–]

    Notes
    -----
    sin(gamma) = T/W − C_D/C_L (lift taken equal to weight, cos(gamma) ≈ 1 in the lift
    balance); gradient = tan(gamma) = sin/sqrt(1 − sin²).

    References
    ----------
    .. [1] Raymer, §17.3, steady climb (sin gamma = T/W − D/W).
    .. [2] Anderson (1999), §5.3.
    """
    w = np.asarray(mass_kg, dtype=float) * c.G0
    s = np.asarray(thrust_n, dtype=float) / w - np.asarray(drag_coefficient) / np.asarray(lift_coefficient)
    with np.errstate(invalid="ignore", divide="ignore"):
        g = s / np.sqrt(np.maximum(1.0 - s * s, 0.0))
    return np.where(s >= 1.0, np.inf, np.where(s <= -1.0, -np.inf, g))


def _margin_bisection(margin, mass_min_kg, mass_max_kg, iterations):
    lo = np.log(np.asarray(mass_min_kg, dtype=float))
    hi = np.log(np.asarray(mass_max_kg, dtype=float))
    lo, hi = (x.astype(float).copy() for x in np.broadcast_arrays(lo, hi))
    top = hi.copy()
    ok_lo = margin(np.exp(lo)) >= 0
    ok_hi = margin(np.exp(hi)) >= 0
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        ok = margin(np.exp(mid)) >= 0
        lo = np.where(ok, mid, lo)
        hi = np.where(ok, hi, mid)
    out = np.where(ok_hi, np.exp(top), np.exp(lo))
    out = np.where(ok_lo, out, np.nan)
    return float(out) if out.ndim == 0 else out


def climb_limited_mass_kg(aircraft, *, pressure_pa, temperature_k, mass_min_kg, mass_max_kg,
                          iterations=40):
    """The largest mass whose takeoff climb gradient meets the requirement (per case).

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields (arrays broadcastable to the cases).
    pressure_pa : array_like
        Station pressure. [Pa]
    temperature_k : array_like
        Outside air temperature. [K]
    mass_min_kg, mass_max_kg : array_like
        Search range (e.g. OEW and MTOW). [kg]
    iterations : int, optional
        Bisection steps on log(mass) (40 resolve 1e-12 of the range's ratio). [–]

    Returns
    -------
    numpy.ndarray or float
        Climb-limited mass; ``mass_max_kg`` where the requirement is met there; NaN where it
        fails even at ``mass_min_kg``. Independent of the runway. [kg]

    Notes
    -----
    margin(m) = gradient(m) − gradient_min falls with m for every thrust model (V2 ∝ sqrt(m)
    and thrust per unit weight falls), so a fixed number of bisection steps on log m finds the
    root in the range.

    References
    ----------
    .. [1] 14 CFR 25.121(b); 14 CFR 23.65(a) (from memory).
    .. [2] Raymer, §17.3.
    """
    required = required_climb_gradient(aircraft.engine_count)

    def margin(m):
        return takeoff_climb_gradient(aircraft, mass_kg=m, pressure_pa=pressure_pa,
                                      temperature_k=temperature_k) - required

    return _margin_bisection(margin, mass_min_kg, mass_max_kg, iterations)


def takeoff_climb_gradient(aircraft, *, mass_kg, pressure_pa, temperature_k, v2_mps=None, thrust_law=None):
    """Gross takeoff climb gradient at V2 (second segment; all engines for a single).

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields.
    mass_kg : array_like
        Mass. [kg]
    pressure_pa : array_like
        Station pressure. [Pa]
    temperature_k : array_like
        Outside air temperature. [K]
    v2_mps : array_like, optional
        Climb speed, true airspeed; default the scheduled V2 of
        :func:`physics.enginefailure.scheduled_speeds_mps`. [m/s]
    thrust_law : physics.thrust.ThrustLaw, optional
        Thrust of the engines operating in the climb (:func:`climb_thrust_law`); built if
        omitted.

    Returns
    -------
    numpy.ndarray or float
        Gradient tan(gamma). [–]

    Notes
    -----
    sin(gamma) = T_{N−1}(V2)/W − C_D/C_L with C_L = 2W/(rho V2² S) and the climb drag of
    :func:`climb_drag_coefficient` (K = 1/(pi e AR), no ground effect).

    References
    ----------
    .. [1] 14 CFR 25.121(b). .. [2] Raymer, §17.3.
    """
    law = climb_thrust_law(aircraft, pressure_pa, temperature_k) if thrust_law is None else thrust_law
    return _climb_gradient(_climb_terms(aircraft, pressure_pa, temperature_k, law), mass_kg, v2_mps)


def _climb_terms(aircraft, pressure_pa, temperature_k, law):
    """The mass-independent parts of :func:`takeoff_climb_gradient` (kept per solve by
    :func:`weight_limit_climb_gradient`): density, rho S C_Lmax, VR/V_S and V2/V_S, V_MCG as a
    true airspeed (0 for a single), C_D without its induced part, K and the thrust law's
    fields, contiguous arrays of the cases' shape. [kg/m³, kg/m, –, –, m/s, –, –, N, N s/m,
    N s²/m², W, –]"""
    from fieldlimits.physics import atmosphere

    a = aircraft
    rho = atmosphere.density_kg_m3(pressure_pa, temperature_k)
    k = aerodynamics.induced_drag_factor(a.oswald_efficiency,
                                         aerodynamics.aspect_ratio(a.wing_span_m, a.wing_area_m2))
    # climb_drag_coefficient with C_L = 0: C_D0 clean + takeoff flaps + the failed engine's
    cd_fixed = climb_drag_coefficient(cd0_clean=a.cd0_clean, cd0_takeoff_flaps=a.cd0_takeoff_flaps,
                                      engine_out_drag_cd=a.engine_out_drag_cd, engine_count=a.engine_count,
                                      lift_coefficient=0.0, induced_drag_factor=0.0)
    # as enginefailure.scheduled_speeds_mps: V_MCG (≈ equivalent airspeed) as a true airspeed
    vmcg = np.where(np.asarray(a.engine_count, dtype=float) > 1,
                    np.asarray(a.vmcg_mps, dtype=float) * np.sqrt(c.RHO0_KG_M3 / rho), 0.0)
    floats = [np.asarray(x, dtype=float) for x in (
        rho, rho * np.asarray(a.wing_area_m2, dtype=float) * np.asarray(a.cl_max_takeoff, dtype=float),
        a.vr_over_vs, a.v2_over_vs, vmcg, a.wing_area_m2, cd_fixed, k, law.t0_n, law.t1_n_per_mps,
        law.t2_n_per_mps2, law.propeller_power_w)]
    is_prop = np.asarray(law.is_propeller, dtype=bool)
    shape = np.broadcast_shapes(is_prop.shape, *(x.shape for x in floats))
    return tuple(np.array(np.broadcast_to(x, shape)) for x in (*floats, is_prop))


def _climb_gradient(terms, mass_kg, v2_mps=None):
    """:func:`takeoff_climb_gradient` from :func:`_climb_terms` at masses (one compiled pass
    per case, :func:`_climb_gradient_pass`). [–]"""
    from fieldlimits.physics import groundrun

    m = np.asarray(mass_kg, dtype=float)
    given = v2_mps is not None
    v2 = np.asarray(v2_mps if given else 0.0, dtype=float)
    shape = np.broadcast_shapes(m.shape, v2.shape, terms[0].shape)
    args = groundrun._kernel_args([m, *terms[:-1]], shape)
    # V2 scheduled in the pass where not given: its argument is not read, not spread over the cases
    v2 = groundrun._kernel_args([v2], shape)[0] if given else np.zeros(1)
    is_prop = np.array(np.broadcast_to(terms[-1], shape), dtype=np.bool_).reshape(-1)
    out = np.empty(args[0].shape)
    _climb_gradient_pass(args[0], v2, *args[1:], is_prop, given, out)
    return out.reshape(shape)


@kernel
def _climb_gradient_pass(m, v2_in, rho, stall_denominator, vr_over_vs, v2_over_vs, vmcg, area, cd_fixed, k, t0, t1,
                         t2, power, is_prop, given, out):
    """:func:`takeoff_climb_gradient` per case, in place: V2 (given, or scheduled as
    :func:`physics.enginefailure.scheduled_speeds_mps`), C_L = 2W/(rho V2² S), C_D of
    :func:`climb_drag_coefficient`, the thrust at V2 and :func:`climb_gradient`."""
    for j in range(m.shape[0]):
        if given:
            v2 = v2_in[j]
        else:
            v2 = aerodynamics._scheduled_speed_one(m[j], stall_denominator[j], vr_over_vs[j], v2_over_vs[j],
                                                   vmcg[j])[2]
        cl = 2.0 * m[j] * c.G0 / (rho[j] * v2 * v2 * area[j])
        cd = cd_fixed[j] + k[j] * cl * cl
        s = _thrust_one(t0[j], t1[j], t2[j], power[j], is_prop[j], v2) / (m[j] * c.G0) - cd / cl
        if s >= 1.0:
            out[j] = np.inf
        elif s <= -1.0:
            out[j] = -np.inf
        else:
            room = 1.0 - s * s
            out[j] = s / np.sqrt(room if room > 0.0 or room != room else 0.0)


def climb_thrust_law(aircraft, pressure_pa, temperature_k):
    """Thrust law of the engines operating in the takeoff climb check (N − 1, or 1).

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields.
    pressure_pa : array_like
        Station pressure. [Pa]
    temperature_k : array_like
        Outside air temperature. [K]

    Returns
    -------
    physics.thrust.ThrustLaw
        Takeoff-rated thrust of ``climb_engines_operating(engine_count)`` engines.

    Notes
    -----
    See :func:`physics.thrust.thrust_law`.

    References
    ----------
    .. [1] 14 CFR 25.121(b) (one engine inoperative, remaining at takeoff thrust).
    """
    from fieldlimits.physics import thrust

    return thrust.thrust_law_for_aircraft(aircraft, pressure_pa, temperature_k,
                                          engines_operating=climb_engines_operating(aircraft.engine_count))


def cases_climb_thrust_law(cases):
    """:func:`climb_thrust_law` of prepared cases.

    Parameters
    ----------
    cases : physics.weightlimit.Cases
        Prepared cases (their one-engine takeoff thrust law for the day).

    Returns
    -------
    physics.thrust.ThrustLaw
        As :func:`climb_thrust_law`.

    Notes
    -----
    The one-engine law scaled by the engines operating in the climb: the same to the bit as
    :func:`climb_thrust_law` (:func:`physics.thrust.thrust_law` multiplies the one-engine
    terms by the engines operating last).

    References
    ----------
    .. [1] 14 CFR 25.121(b) (one engine inoperative, remaining at takeoff thrust).
    """
    return cases.one_engine_thrust_law().scaled(climb_engines_operating(cases.aircraft.engine_count))


def weight_limit_climb_gradient(cases, mass_kg, memo):
    """Takeoff climb gradient at the solver's trial masses (memoised per mass).

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
    numpy.ndarray
        Gross gradient at V2. [–]

    Notes
    -----
    :func:`takeoff_climb_gradient` with the climb thrust law built once per solve.

    References
    ----------
    .. [1] 14 CFR 25.121(b); 14 CFR 23.65(a) (from memory).
    """
    if "climb_gradient" not in memo:
        law = cases.cached("climb_thrust_law", cases_climb_thrust_law)
        terms = cases.cached("climb_terms", lambda cs: _climb_terms(cs.aircraft, cs.site.pressure_pa,
                                                                      cs.site.temperature_k, law))
        memo["climb_gradient"] = _climb_gradient(terms, mass_kg)
    return memo["climb_gradient"]


def climb_gradient_margin(cases, mass_kg, memo):
    """Margin gradient − required gradient at the trial masses (the solver's requirement).

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
        Gradient minus :func:`required_climb_gradient`; ≥ 0 where met. Independent of the
        runway's declared distances. [–]

    Notes
    -----
    margin = tan(gamma) − gradient_min.

    References
    ----------
    .. [1] 14 CFR 25.121(b). .. [2] 14 CFR 23.65(a) (from memory).
    """
    required = cases.cached("climb_required", lambda cs: required_climb_gradient(cs.aircraft.engine_count))
    return weight_limit_climb_gradient(cases, mass_kg, memo) - required
