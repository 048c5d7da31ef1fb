"""Takeoff flight path with one engine inoperative, and clearance of the obstacles under it.

From the end of the one-engine-inoperative takeoff distance (35 ft dry, 15 ft wet above the
takeoff surface) the path has four segments (14 CFR 25.111, 25.121; EASA CS-25 the same in
these numbers):

1. **first segment**: V2, gear extended, takeoff flaps, takeoff thrust of N − 1 engines, for the
   gear retraction time;
2. **second segment**: V2, gear up, takeoff flaps, takeoff thrust, to the acceleration height
   (at least 400 ft, 25.111(c)(2));
3. **acceleration**: level, from V2 to the final takeoff speed V_FTO = 1.25 V_S,clean
   (25.121(c)) while the flaps retract (drag and lift slope taken half way between takeoff flaps
   and clean), takeoff thrust;
4. **final segment**: V_FTO, clean, maximum continuous thrust (``mct_share`` of takeoff thrust)
   of N − 1 engines, to 1 500 ft.

The *net* path (25.115) is the gross path with every gradient reduced by 0.8 / 0.9 / 1.0 % for
two / three / four engines, and the level acceleration reduced by the equivalent g·Δγ
(25.115(c)). The net path is built on its own (it levels off where it reaches the
acceleration height) and must clear every obstacle in the departure area by 35 ft vertically
(25.111/Part 121.189(d)(2), common operating rule). Ground distances follow from air
distances by (V − w)/V with the factored headwind w. Obstacles beyond the end of the takeoff
path (1 500 ft) belong to the en-route climb and are not checked here.

A mass is obstacle limited when no acceleration height between the type's default and its
maximum lets the net path clear every obstacle; the search (``physics.weightlimit``) uses
:func:`obstacle_clearance_margin`, the best over those heights of the least clearance margin
(:func:`obstacle_margins`: the net height over the obstacle less the obstacle and 35 ft, scaled
by the required height).

References
----------
.. [1] 14 CFR Part 25, §25.111 (takeoff path), §25.115 (net takeoff flight path), §25.121
   (climb, one engine inoperative; final takeoff speed ≥ 1.25 V_SR); EASA CS-25 identical.
.. [2] 14 CFR 121.189(d)(2) (net path clears obstacles by 35 ft vertically).
.. [3] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.3 (climb, level
   acceleration), §12 (drag polar).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from fieldlimits.physics import constants as c

#: Gradient reduction gross → net by engine count, 14 CFR 25.115(b). [–]
NET_GRADIENT_REDUCTION = {2: 0.008, 3: 0.009, 4: 0.010}
#: Vertical clearance of the net path over an obstacle, 14 CFR 121.189(d)(2): 35 ft. [m]
OBSTACLE_CLEARANCE_M = 35.0 * c.FT_M
#: Height where the takeoff path ends, 14 CFR 25.111(a): 1 500 ft. [m]
PATH_END_HEIGHT_M = 1500.0 * c.FT_M
#: Final takeoff speed over the clean stall speed, 14 CFR 25.121(c) (V_FTO ≥ 1.25 V_SR). [–]
FINAL_SPEED_RATIO = 1.25
#: Least gradient of the height line behind the screen (an obstacle the one-engine-out takeoff
#: distance runs past is under an aircraft still below the screen height; such a mass fails
#: TODA anyway, but the margin must keep falling as the mass rises). [–]
BEHIND_SCREEN_GRADIENT = 0.05
#: Acceleration heights tried between the type's default and its maximum (evenly spaced). [–]
ACCELERATION_HEIGHT_STEPS = 4


@dataclass(frozen=True)
class Obstacles:
    """Obstacles of each case's runway direction, padded with NaN (arrays of shape (n, K)).

    Attributes
    ----------
    distance_m : numpy.ndarray
        Ground distance from the end of TODA along the departure path. [m]
    height_m : numpy.ndarray
        Height above the runway end (the end of TODA). [m]
    """

    distance_m: np.ndarray
    height_m: np.ndarray

    def take_cases(self, index):
        """The obstacles of the cases at ``index`` (integer array)."""
        return Obstacles(np.asarray(self.distance_m)[index], np.asarray(self.height_m)[index])

    @property
    def present(self):
        """True per case with at least one obstacle."""
        return np.any(np.isfinite(self.distance_m) & np.isfinite(self.height_m), axis=1)


def net_gradient_reduction(engine_count):
    """Gross minus net gradient by engine count.

    Parameters
    ----------
    engine_count : array_like
        Number of engines. [–]

    Returns
    -------
    numpy.ndarray
        0.008 (two), 0.009 (three), 0.010 (four engines); 0 for a single. [–]

    Notes
    -----
    Δγ = 0.8 / 0.9 / 1.0 % for N = 2 / 3 / 4.

    References
    ----------
    .. [1] 14 CFR 25.115(b).
    """
    n = np.asarray(engine_count, dtype=float)
    return np.select([n == 2, n == 3, n >= 4], [0.008, 0.009, 0.010], 0.0)


def steady_gradient(thrust_n, mass_kg, density_kg_m3, airspeed_mps, wing_area_m2, cd0, induced_factor):
    """Gross climb gradient in steady flight (no ground effect).

    Parameters
    ----------
    thrust_n : array_like
        Thrust of the operating engines. [N]
    mass_kg : array_like
        Mass. [kg]
    density_kg_m3 : array_like
        Air density. [kg/m³]
    airspeed_mps : array_like
        True airspeed. [m/s]
    wing_area_m2 : array_like
        Reference area. [m²]
    cd0 : array_like
        Zero-lift drag coefficient of the configuration (engine-out increment included). [–]
    induced_factor : array_like
        K = 1/(pi e AR). [–]

    Returns
    -------
    numpy.ndarray
        tan(gamma) from sin(gamma) = (T − D)/W. [–]

    Notes
    -----
    C_L = W/(q S); D = q S (C_D0 + K C_L²); sin γ = (T − D)/W; gradient = tan γ.

    References
    ----------
    .. [3] Raymer, §17.3.
    """
    w = np.asarray(mass_kg, dtype=float) * c.G0
    q_s = 0.5 * np.asarray(density_kg_m3, dtype=float) * np.asarray(airspeed_mps, dtype=float) ** 2 \
        * np.asarray(wing_area_m2, dtype=float)
    cl = w / q_s
    drag = q_s * (np.asarray(cd0, dtype=float) + np.asarray(induced_factor, dtype=float) * cl * cl)
    s = np.clip((np.asarray(thrust_n, dtype=float) - drag) / w, -0.999, 0.999)
    return s / np.sqrt(1.0 - s * s)


def level_acceleration_distance_m(v_start_mps, v_end_mps, accel_mps2):
    """Air distance of a level acceleration at constant acceleration.

    Parameters
    ----------
    v_start_mps, v_end_mps : array_like
        True airspeeds at the start and end. [m/s]
    accel_mps2 : array_like
        Acceleration (taken at the mean speed). [m/s²]

    Returns
    -------
    numpy.ndarray
        (V_end² − V_start²)/(2 a); inf where a ≤ 0 and V_end > V_start. [m]

    Notes
    -----
    s = (V₁² − V₀²)/(2a) (uniform acceleration).

    References
    ----------
    .. [3] Raymer, §17.3 (level acceleration, dV/dt = g (T − D)/W).
    """
    v0 = np.asarray(v_start_mps, dtype=float)
    v1 = np.asarray(v_end_mps, dtype=float)
    a = np.asarray(accel_mps2, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        s = (v1 * v1 - v0 * v0) / (2.0 * a)
    return np.where(v1 <= v0, 0.0, np.where(a > 0.0, s, np.inf))


@dataclass(frozen=True)
class FlightPath:
    """A takeoff flight path as ground-distance breakpoints and heights, arrays (..., 5).

    ``x_m`` from the end of the one-engine-inoperative takeoff distance (the screen), ``h_m``
    above the takeoff surface there: screen, gear up, acceleration height reached, final speed
    reached, 1 500 ft. Heights are non-decreasing; inf distances where a segment is never
    finished (no climb or no acceleration).
    """

    x_m: np.ndarray
    h_m: np.ndarray

    def height_at(self, x_m):
        """Height of the path at ground distances ``x_m`` (shape (..., K)); NaN past its end
        and where ``x_m`` is NaN.

        Before the screen the height falls backwards at the first segment's gradient, at
        least :data:`BEHIND_SCREEN_GRADIENT` (below the screen, whatever that gradient).
        """
        xs, hs = self.x_m, self.h_m
        x = np.asarray(x_m, dtype=float)
        with np.errstate(invalid="ignore", divide="ignore"):
            # before the screen (an obstacle the takeoff distance runs past) the aircraft is
            # lower than the screen: a line falling backwards at least BEHIND_SCREEN_GRADIENT,
            # so the height there never rises as the takeoff distance grows
            slope0 = (hs[..., 1:2] - hs[..., :1]) / (xs[..., 1:2] - xs[..., :1])
            back = np.fmax(np.where(np.isfinite(slope0), slope0, 0.0), BEHIND_SCREEN_GRADIENT)
            # each segment from its start, linear in between; one that never ends (inf) or has
            # no length stays at its start height
            dx = xs[..., 1:] - xs[..., :-1]
            dx = np.where(np.isfinite(dx) & (dx > 0.0), dx, np.inf)
            dh = hs[..., 1:] - hs[..., :-1]
            out = None
            for j in range(xs.shape[-1] - 2, -1, -1):  # the last segment first, then those before
                h = x - xs[..., j:j + 1]
                h /= dx[..., j:j + 1]
                np.fmax(h, 0.0, out=h)
                h *= dh[..., j:j + 1]
                h += hs[..., j:j + 1]
                if out is None:
                    out = h
                else:
                    np.copyto(out, h, where=x < xs[..., j + 1:j + 2])
            np.copyto(out, hs[..., :1] + back * (x - xs[..., :1]), where=x < xs[..., :1])
            out[~(x <= xs[..., -1:])] = np.nan
        return out


def takeoff_flight_path(*, screen_m, v2_mps, v_final_mps, headwind_mps, gradient_gear_down, gradient_second,
                        accel_mps2, gradient_final, gear_time_s, acceleration_height_m, reduction=0.0):
    """The four-segment takeoff path (gross with ``reduction`` 0, net with the 25.115 one).

    Parameters
    ----------
    screen_m : array_like
        Height at the start (35 ft dry, 15 ft wet). [m]
    v2_mps, v_final_mps : array_like
        V2 and the final takeoff speed, true airspeed. [m/s]
    headwind_mps : array_like
        Factored headwind. [m/s]
    gradient_gear_down, gradient_second, gradient_final : array_like
        Gross gradients of the first, second and final segments. [–]
    accel_mps2 : array_like
        Gross level acceleration from V2 to V_FTO. [m/s²]
    gear_time_s : array_like
        Gear retraction time (first segment). [s]
    acceleration_height_m : array_like
        Height of the level acceleration. [m]
    reduction : array_like, optional
        Gradient reduction Δγ (0 for the gross path; :func:`net_gradient_reduction`). [–]

    Returns
    -------
    FlightPath
        Breakpoints. [m]

    Notes
    -----
    Segment 1: air distance V2 t_gear, height gain (γ1 − Δγ) V2 t_gear; segment 2 from there
    to h_acc at γ2 − Δγ; segment 3 level, air distance (V_FTO² − V2²)/(2 (a − g Δγ));
    segment 4 at γ4 − Δγ to 1 500 ft. Ground distance = air distance × (V − w)/V (mean speed
    on segment 3). A segment whose gradient (or acceleration) is not positive never ends
    (distance inf).

    References
    ----------
    .. [1] 14 CFR 25.111, 25.115, 25.121.
    """
    w = np.asarray(headwind_mps, dtype=float)
    v2 = np.asarray(v2_mps, dtype=float)
    vf = np.fmax(np.asarray(v_final_mps, dtype=float), v2)
    red = np.asarray(reduction, dtype=float)
    g1 = np.asarray(gradient_gear_down, dtype=float) - red
    g2 = np.asarray(gradient_second, dtype=float) - red
    g4 = np.asarray(gradient_final, dtype=float) - red
    acc = np.asarray(accel_mps2, dtype=float) - c.G0 * red
    ground2 = (v2 - w) / v2
    h0 = np.asarray(screen_m, dtype=float)
    air1 = v2 * np.asarray(gear_time_s, dtype=float)
    h1 = h0 + g1 * air1
    x1 = air1 * ground2
    h_acc = np.fmax(np.asarray(acceleration_height_m, dtype=float), h1)
    with np.errstate(divide="ignore", invalid="ignore"):
        x2 = x1 + np.where(h_acc > h1, np.where(g2 > 0, (h_acc - h1) / g2, np.inf), 0.0) * ground2
        vm = 0.5 * (v2 + vf)
        x3 = x2 + level_acceleration_distance_m(v2, vf, acc) * (vm - w) / vm
        h_end = np.fmax(PATH_END_HEIGHT_M, h_acc)
        x4 = x3 + np.where(h_end > h_acc, np.where(g4 > 0, (h_end - h_acc) / g4, np.inf), 0.0) * (vf - w) / vf
    shape = np.broadcast_shapes(*(np.shape(v) for v in (h0, h1, h_acc, x1, x2, x3, x4)))
    xs = np.stack(np.broadcast_arrays(np.zeros(shape), x1, x2, x3, x4), axis=-1)
    hs = np.stack(np.broadcast_arrays(h0 + np.zeros(shape), h1, h_acc, h_acc, h_end), axis=-1)
    return FlightPath(xs, hs)


@dataclass(frozen=True)
class PathInputs:
    """Gross gradients, acceleration and speeds of the path at one trial mass (arrays (n,))."""

    v2_mps: np.ndarray
    v_final_mps: np.ndarray
    gradient_gear_down: np.ndarray
    gradient_second: np.ndarray
    accel_mps2: np.ndarray
    gradient_final: np.ndarray


def path_inputs(aircraft, *, mass_kg, density_kg_m3, v2_mps, thrust_fn):
    """Speeds, gradients and the level acceleration of the takeoff path at a mass.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields (``cd0_*``, ``engine_out_drag_cd``, ``cl_max_clean``, ``mct_share``, wing).
    mass_kg : array_like
        Mass. [kg]
    density_kg_m3 : array_like
        Air density (field conditions for the whole path). [kg/m³]
    v2_mps : array_like
        V2, true airspeed. [m/s]
    thrust_fn : callable
        ``f(v) -> N``: takeoff thrust of the operating engines at true airspeed v. [N]

    Returns
    -------
    PathInputs
        Gross values. [–], [m/s²], [m/s]

    Notes
    -----
    V_FTO = 1.25 sqrt(2 W/(rho S C_Lmax,clean)); C_D0: segment 1 clean + flaps + gear + ΔC_D,eo,
    segment 2 clean + flaps + ΔC_D,eo, acceleration clean + ½ flaps + ΔC_D,eo at the mean speed,
    final segment clean + ΔC_D,eo at maximum continuous thrust (``mct_share`` × takeoff thrust);
    level acceleration a = g (T − D)/W.

    References
    ----------
    .. [1] 14 CFR 25.121(c). .. [3] Raymer, §17.3.
    """
    from fieldlimits.physics import aerodynamics

    a = aircraft
    m = np.asarray(mass_kg, dtype=float)
    rho = np.asarray(density_kg_m3, dtype=float)
    k = aerodynamics.induced_drag_factor(a.oswald_efficiency, aerodynamics.aspect_ratio(a.wing_span_m, a.wing_area_m2))
    multi = np.asarray(a.engine_count, dtype=float) > 1
    eo = np.where(multi, a.engine_out_drag_cd, 0.0)
    clean = np.asarray(a.cd0_clean, dtype=float) + eo
    flaps = np.asarray(a.cd0_takeoff_flaps, dtype=float)
    v2 = np.asarray(v2_mps, dtype=float)
    vs_clean = aerodynamics.stall_speed_mps(m, rho, a.wing_area_m2, a.cl_max_clean)
    vf = np.fmax(FINAL_SPEED_RATIO * vs_clean, v2)
    t2 = thrust_fn(v2)
    g1 = steady_gradient(t2, m, rho, v2, a.wing_area_m2, clean + flaps + np.asarray(a.cd0_gear, dtype=float), k)
    g2 = steady_gradient(t2, m, rho, v2, a.wing_area_m2, clean + flaps, k)
    vm = 0.5 * (v2 + vf)
    sin_acc = steady_gradient(thrust_fn(vm), m, rho, vm, a.wing_area_m2, clean + 0.5 * flaps, k)
    accel = c.G0 * sin_acc / np.sqrt(1.0 + sin_acc * sin_acc)  # back from tan to sin γ = (T − D)/W
    g4 = steady_gradient(np.asarray(a.mct_share, dtype=float) * thrust_fn(vf), m, rho, vf, a.wing_area_m2, clean, k)
    return PathInputs(v2, vf, g1, g2, accel, g4)


def obstacle_margins(path, obstacles_x_m, obstacles_h_m, heights_m=None):
    """Clearance margin of each obstacle under a net path: available/required − 1.

    Parameters
    ----------
    path : FlightPath
        Net path, breakpoints of shape (..., 5). [m]
    obstacles_x_m : array_like
        Ground distance of each obstacle from the path's start, shape (..., K). [m]
    obstacles_h_m : array_like
        Obstacle heights above the takeoff surface at the start, (..., K); NaN padding. [m]
    heights_m : array_like, optional
        ``path.height_at(obstacles_x_m)`` when already computed. [m]

    Returns
    -------
    numpy.ndarray
        (h_net(x) − h_req)/(max(h_req, 0) + 35 ft) with h_req = h_obs + 35 ft; +inf for padding
        (a NaN distance or height) and for obstacles past the end of the path. [–]

    Notes
    -----
    Required height h_obs + 35 ft (14 CFR 121.189(d)(2)); the scale max(h_req, 0) + 35 ft keeps
    the margin dimensionless for obstacles below the runway end too.

    References
    ----------
    .. [2] 14 CFR 121.189(d)(2).
    """
    h = path.height_at(obstacles_x_m) if heights_m is None else heights_m
    req = np.asarray(obstacles_h_m, dtype=float) + OBSTACLE_CLEARANCE_M
    with np.errstate(invalid="ignore", divide="ignore"):
        m = (h - req) / (np.fmax(req, 0.0) + OBSTACLE_CLEARANCE_M)
    past = np.asarray(obstacles_x_m) > path.x_m[..., -1:]
    return np.where(np.isnan(req) | np.isnan(obstacles_x_m) | past, np.inf, np.where(np.isnan(m), -1.0, m))


def acceleration_heights_m(default_m, maximum_m, steps=ACCELERATION_HEIGHT_STEPS):
    """Acceleration heights tried, from the type's default to its maximum.

    Parameters
    ----------
    default_m, maximum_m : array_like
        Default and highest acceleration height, shape (n,). [m]
    steps : int, optional
        Heights above the default. [–]

    Returns
    -------
    numpy.ndarray
        Shape (n, steps + 1), the default first. [m]

    Notes
    -----
    h_j = h_default + (h_max − h_default) j/steps.

    References
    ----------
    .. [1] 14 CFR 25.111(c)(2) (at least 400 ft).
    """
    lo = np.asarray(default_m, dtype=float)
    hi = np.fmax(np.asarray(maximum_m, dtype=float), lo)
    j = np.arange(steps + 1) / max(steps, 1)
    return lo[..., None] + (hi - lo)[..., None] * j


# --- the requirement of physics.weightlimit (margin(cases, mass_kg, memo) -> array) -----------

def weight_limit_flight_path(cases, mass_kg, memo):
    """Net takeoff path over the obstacles at the solver's trial masses (memoised per mass).

    Parameters
    ----------
    cases : physics.weightlimit.Cases
        Prepared cases; ``cases.cached("obstacles", …)`` holds an :class:`Obstacles`.
    mass_kg : numpy.ndarray
        Trial mass per case. [kg]
    memo : dict
        Per-trial-mass store.

    Returns
    -------
    dict
        ``margin`` (best over the acceleration heights of the least obstacle margin, [–]),
        ``height_m`` (the lowest acceleration height giving it, [m]), ``obstacle`` (index of
        the governing obstacle, float, NaN none) and ``clearance_m`` (net height over it less
        the obstacle and 35 ft, [m]).

    Notes
    -----
    The path starts at the end of the one-engine-inoperative takeoff distance at the chosen V1
    (all engines for a single-engine type), at the screen height; obstacle x = TODA + d − TOD.

    References
    ----------
    .. [1] 14 CFR 25.111, 25.115. .. [2] 14 CFR 121.189(d)(2).
    """
    if "flight_path" in memo:
        return memo["flight_path"]
    from fieldlimits.physics import climb, enginefailure, weightlimit

    a, s = cases.aircraft, cases.site
    obstacles = cases.cached("obstacles", lambda cs: None)
    multi = np.asarray(a.engine_count, dtype=float) > 1
    r = enginefailure.weight_limit_engine_failure(cases, mass_kg, memo)
    tod, v2 = r.takeoff_distance_m, r.speeds.v2_mps
    if not multi.all():  # single-engine types: the all-engines takeoff, computed for them only
        single = np.flatnonzero(~multi)
        if single.size == cases.n:
            aeo = weightlimit.all_engines(cases, mass_kg, memo)
            tod, v2 = aeo.takeoff_distance_m, aeo.v2_mps
        else:
            singles = cases.cached("flight_path_singles", lambda cs: cs.take(single))
            aeo = weightlimit.all_engines(singles, np.asarray(mass_kg, dtype=float)[single], {})
            tod, v2 = np.array(tod, dtype=float), np.array(v2, dtype=float)
            tod[single], v2[single] = aeo.takeoff_distance_m, aeo.v2_mps
    law = cases.cached("climb_thrust_law", climb.cases_climb_thrust_law)
    inputs = path_inputs(a, mass_kg=mass_kg, density_kg_m3=cases.density_kg_m3, v2_mps=v2, thrust_fn=law.thrust_n)
    x = (np.asarray(s.toda_m, dtype=float) - tod)[:, None] + obstacles.distance_m
    heights = acceleration_heights_m(a.acceleration_height_m, a.max_acceleration_height_m)
    net = net_gradient_reduction(a.engine_count)
    args = dict(screen_m=s.screen_height_m, v2_mps=inputs.v2_mps, v_final_mps=inputs.v_final_mps,
                headwind_mps=s.headwind_mps, gradient_gear_down=inputs.gradient_gear_down,
                gradient_second=inputs.gradient_second, accel_mps2=inputs.accel_mps2,
                gradient_final=inputs.gradient_final, gear_time_s=a.gear_retraction_s, reduction=net)
    # the default acceleration height first, for every case
    path = takeoff_flight_path(**args, acceleration_height_m=heights[:, 0])
    h_net = path.height_at(x)
    m = obstacle_margins(path, x, obstacles.height_m, heights_m=h_net)
    k = np.argmin(m, axis=1)[:, None]
    best = np.take_along_axis(m, k, axis=1)[:, 0]
    used = np.array(heights[:, 0], dtype=float)
    which = k[:, 0].astype(float)
    clear = (np.take_along_axis(h_net, k, axis=1) - np.take_along_axis(obstacles.height_m, k, axis=1))[:, 0] \
        - OBSTACLE_CLEARANCE_M
    # Every acceleration height's path climbs along the same line up to where the default one
    # levels off (path.x_m[:, 2]): where the default height's governing obstacle lies before
    # that point, it governs every height's path at least as closely, and the default height
    # is the best (and the lowest). The others are tried only where it lies beyond.
    with np.errstate(invalid="ignore"):
        far = (np.take_along_axis(x, k, axis=1)[:, 0] > path.x_m[:, 2]) & np.isfinite(best)
    if cases._cache.get("engine_failure_final"):
        # a closing evaluation (the check at a limit, the figures): only whether some height
        # clears counts, and where the default one does it is the height used
        far &= ~(best >= 0.0)
    more = np.flatnonzero(far & (heights.shape[1] > 1))
    if more.size:
        best[more], used[more], which[more], clear[more] = _every_height(
            {key: np.broadcast_to(np.asarray(v, dtype=float), (cases.n,))[more] for key, v in args.items()},
            heights[more], x[more], np.asarray(obstacles.height_m)[more])
    none = ~np.isfinite(best)
    memo["flight_path"] = {"margin": best, "height_m": used, "obstacle": np.where(none, np.nan, which),
                           "clearance_m": np.where(none, np.nan, clear)}
    return memo["flight_path"]


def _every_height(args, heights, x, obstacle_h):
    """Best margin over the acceleration heights ``heights`` (n, J) of the net paths of
    :func:`takeoff_flight_path` ``args`` (arrays (n,)) over obstacles at ``x`` (n, K) of
    heights ``obstacle_h``; the lowest height that clears (else the closest), its governing
    obstacle and clearance (see :func:`weight_limit_flight_path`)."""
    col = {key: v[:, None] for key, v in args.items()}
    path = takeoff_flight_path(**col, acceleration_height_m=heights)  # (n, J, 5)
    x3, h_obs = x[:, None, :], obstacle_h[:, None, :]
    h_net = path.height_at(x3)
    m = obstacle_margins(path, x3, h_obs, heights_m=h_net)
    k = np.argmin(m, axis=2)[..., None]  # governing obstacle per height
    margins = np.take_along_axis(m, k, axis=2)[..., 0]  # (n, J)
    # the search needs the best margin over the heights (it falls with the mass); the height
    # used is the lowest that clears every obstacle, else the one that comes closest
    best = margins.max(axis=1)
    clears = margins >= 0.0
    j = np.where(clears.any(axis=1), np.argmax(clears, axis=1), np.argmax(margins, axis=1))[:, None]
    used = np.take_along_axis(heights, j, axis=1)[:, 0]
    kj = np.take_along_axis(k[..., 0], j, axis=1)  # (n, 1)
    h_kj = np.take_along_axis(np.take_along_axis(h_net, j[..., None], axis=1)[:, 0, :], kj, axis=1)[:, 0]
    clear = h_kj - np.take_along_axis(obstacle_h, kj, axis=1)[:, 0] - OBSTACLE_CLEARANCE_M
    return best, used, kj[:, 0].astype(float), clear


def obstacle_clearance_margin(cases, mass_kg, memo):
    """Least obstacle margin of the net takeoff path (the solver's requirement). [–]

    Parameters
    ----------
    cases : physics.weightlimit.Cases
        Prepared cases with their obstacles.
    mass_kg : numpy.ndarray
        Trial mass per case. [kg]
    memo : dict
        Per-trial-mass store.

    Returns
    -------
    numpy.ndarray
        :func:`obstacle_margins` at the governing obstacle, best acceleration height; ≥ 0
        where every obstacle is cleared; +inf without obstacles in reach. [–]

    Notes
    -----
    See :func:`weight_limit_flight_path`.

    References
    ----------
    .. [1] 14 CFR 25.111, 25.115. .. [2] 14 CFR 121.189(d)(2).
    """
    return weight_limit_flight_path(cases, mass_kg, memo)["margin"]


def obstacle_report(cases, mass_kg, memo):
    """Result fields at the limit: clearance, acceleration height and governing obstacle.

    Parameters
    ----------
    cases : physics.weightlimit.Cases
        Prepared cases.
    mass_kg : numpy.ndarray
        Mass per case. [kg]
    memo : dict
        Per-trial-mass store.

    Returns
    -------
    dict
        ``obstacle_clearance_m`` [m], ``acceleration_height_m`` [m], ``governing_obstacle``
        (index into the case's obstacles, NaN none) [–].

    Notes
    -----
    See :func:`weight_limit_flight_path`.

    References
    ----------
    .. [1] 14 CFR 25.111.
    """
    r = weight_limit_flight_path(cases, mass_kg, memo)
    return {"obstacle_clearance_m": r["clearance_m"], "acceleration_height_m": r["height_m"],
            "governing_obstacle": r["obstacle"]}
