"""Calibration of a type's coefficients to published reference points.

A *reference point* is one figure a planner can read from the manufacturer's airport-planning
charts: the takeoff field length needed at a mass, pressure altitude, temperature, wind,
slope and runway condition, or the climb-limited mass at a pressure altitude and temperature.
This module computes the model's value of each point (:func:`model_values`) and fits chosen
coefficients of one type to the points (:func:`fit_coefficients`).

Model value of a field-length point
-----------------------------------
The takeoff field length is the shortest runway with TORA = TODA = ASDA = L (no clearway,
no stopway) on which the weight solve (:func:`physics.weightlimit.solve_takeoff_weight`)
accepts the mass: every distance requirement of its rules is met (transport rules: 1.15 ×
the all-engines distance and run, the one-engine-inoperative distance and run and the
accelerate-stop distance at the best V1, with the type's event sequence). It is found from
the solver's own requirement margins (:func:`physics.weightlimit.requirement_margins`), so a
runway of the model's field length gives back the point's mass as its limit: a calibrated
type reproduces the published lengths in the runs themselves. Every distance margin is
available/required − 1, and on a balanced runway the best V1 does not depend on L (go and
stop margins shift together), so the fixed-point step L ← L / (1 + min margin) is exact for
the all-engines distances and converges in two or three steps for the engine-failure ones.
The line-up allowance is added on top (the solve subtracts it from each declared distance);
a wet point is the greater of its wet length and the dry length of the same runway (the
solve keeps the lower of the wet and the dry limit). This equals the textbook figure
max(1.15 × TOD_all, balanced field length) where that binds, and covers the cases it does
not (V1 held at V_MCG or VR, a stop longer than the go at the balancing speed).

Climb-limited mass: :func:`physics.climb.climb_limited_mass_kg` (independent of the runway).

The fit
-------
Coefficients θ_j are fitted in prior-scaled form z_j = (θ_j − μ_j)/σ_j (μ the starting value,
e.g. a class default, σ its prior standard deviation). The residual vector is

    r = [(model_i(θ) / published_i − 1) / s_i  for each point i;  z_j for each coefficient j]

with s_i the relative uncertainty of a published value (1 % by default): a soft Gaussian prior
(ridge) that keeps a handful of points from moving coefficients they cannot see. Bounded
least squares (scipy ``least_squares``, trust-region reflective) within each coefficient's
hard limits. The Jacobian is by forward differences in z, all coefficients in one vectorised
evaluation (points × (coefficients + 1) cases).

What the points pin down: with J the point rows of the Jacobian in z at the solution, the
posterior covariance of z is (JᵀJ + I)⁻¹; its diagonal square root is each coefficient's
posterior standard deviation as a share of its prior one. A coefficient is *determined* when
that share is below :data:`DETERMINED_SHARE` (the points carry at least three times the
prior's information about it); otherwise it stays near its starting value and the report
says so. The singular values of J count the combinations of coefficients the points fix
(those above 1: more information than the prior).

References
----------
.. [1] 14 CFR 25.109, 25.113 (field length), 25.121(b) (climb). EASA CS-25 alike.
.. [2] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.8 (balanced field
   length).
.. [3] A. Tarantola, *Inverse Problem Theory*, SIAM 2005, §3.2 (least squares with a
   Gaussian prior; posterior covariance (GᵀC_d⁻¹G + C_m⁻¹)⁻¹).
.. [4] M. A. Branch, T. F. Coleman, Y. Li, *SIAM J. Sci. Comput.* 21(1), 1999 (trust-region
   reflective method of scipy ``least_squares``).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np
from scipy import optimize

from fieldlimits.physics import atmosphere
from fieldlimits.physics import climb
from fieldlimits.physics import constants as c
from fieldlimits.physics import friction
from fieldlimits.physics import weightlimit as wl
from fieldlimits.physics import wind

#: Kinds of reference point, by integer code (position).
KINDS = ("field_length", "climb_limited_mass")
FIELD_LENGTH = 0
CLIMB_LIMITED_MASS = 1

#: Limiting factors of the requirements a runway length satisfies.
DISTANCE_FACTORS = ("takeoff_distance", "takeoff_run", "accelerate_stop")

#: Posterior/prior standard-deviation share below which the points determine a coefficient
#: (posterior information ≥ 4 × prior, i.e. the points add at least three priors' worth). [–]
DETERMINED_SHARE = 0.5

#: Default relative uncertainty of a published reference value (chart reading, rounding to
#: 50 ft or 100 kg: about 1 %, common practice). [–]
POINT_SHARE_SD = 0.01

#: Forward-difference step of the Jacobian, in prior standard deviations. The model values
#: are smooth to ~1e-10 (field-length fixed point to 1e-12, climb bisection to 1e-12 of the
#: mass), so a step of 1e-4 σ (about 1e-5 of a coefficient) gives derivatives to ~1e-4. [–]
DIFF_STEP = 1e-4

#: How far inside its limits the fit starts a coefficient that starts on one, in prior
#: standard deviations. [–]
START_INSIDE = 0.05

#: Field-length fixed-point iterations at most, and the relative change that stops them.
FIELD_LENGTH_ITERATIONS = 30
FIELD_LENGTH_RTOL = 1e-12

#: First runway length tried by the fixed point. [m]
FIELD_LENGTH_START_M = 2000.0

#: Climb-limited-mass search range as multiples of MTOW (the published mass may lie beyond
#: the structural limit; the search needs room on both sides). [–]
CLIMB_SEARCH_RANGE = (0.2, 2.0)


@dataclass(frozen=True)
class ReferencePoints:
    """Reference points of one or more types, SI (arrays of one length, broadcastable).

    Attributes
    ----------
    kind : numpy.ndarray of int
        :data:`FIELD_LENGTH` or :data:`CLIMB_LIMITED_MASS`.
    mass_kg : numpy.ndarray
        Takeoff mass of a field-length point (ignored for climb points). [kg]
    pressure_pa, temperature_k : numpy.ndarray
        Station pressure and outside air temperature. [Pa], [K]
    headwind_mps : numpy.ndarray
        Headwind component already factored (negative: tailwind). [m/s]
    slope : numpy.ndarray
        Rise over run, + uphill. [–]
    mu_roll, mu_brake : numpy.ndarray
        Friction of the runway in its condition. [–]
    screen_height_m : numpy.ndarray
        35 ft dry, 15 ft wet. [m]
    mu_roll_dry, mu_brake_dry : numpy.ndarray
        Dry friction of the same runway for wet points (NaN for dry points). [–]
    published : numpy.ndarray
        The published value: field length [m] or climb-limited mass [kg].
    """

    kind: np.ndarray
    mass_kg: np.ndarray
    pressure_pa: np.ndarray
    temperature_k: np.ndarray
    headwind_mps: np.ndarray
    slope: np.ndarray
    mu_roll: np.ndarray
    mu_brake: np.ndarray
    screen_height_m: np.ndarray
    mu_roll_dry: np.ndarray
    mu_brake_dry: np.ndarray
    published: np.ndarray

    @property
    def n(self) -> int:
        """Number of points."""
        return int(np.broadcast_shapes(*(np.shape(getattr(self, f.name)) for f in dataclasses.fields(self)))[0])

    def take(self, index):
        """The points at ``index`` (integer array)."""
        return _per_case(self, self.n, index)


def reference_points(*, kind, mass_kg, pressure_altitude_m, temperature_k, reported_headwind_mps, slope, surface,
                     condition, published):
    """Reference points from the figures of a chart (the conversions a run makes for a case).

    Parameters
    ----------
    kind : array_like of str
        ``field_length`` or ``climb_limited_mass`` per point. [–]
    mass_kg : array_like
        Takeoff mass (field length points). [kg]
    pressure_altitude_m : array_like
        Pressure altitude; the station pressure is the standard atmosphere's there. [m]
    temperature_k : array_like
        Outside air temperature. [K]
    reported_headwind_mps : array_like
        Reported wind component along the runway, negative for a tailwind; factored here
        (50 % of a headwind, 150 % of a tailwind). [m/s]
    slope : array_like
        Rise over run, + uphill. [–]
    surface, condition : array_like of str
        Runway surface (``physics.friction.SURFACES``) and ``dry``/``wet``. [–]
    published : array_like
        Published value: field length [m] or climb-limited mass [kg].

    Returns
    -------
    ReferencePoints
        The points in SI units, with the friction of the surface and condition, the screen
        height of the condition and, for wet points, the dry friction of the same runway.
        [SI]

    Notes
    -----
    p = p_ISA(H_p); w_f = 0.5 w (headwind) or 1.5 w (tailwind); screen 35 ft dry, 15 ft wet.

    References
    ----------
    .. [1] ICAO Doc 7488/3 (standard atmosphere). .. [2] 14 CFR 25.105(d)(1), 25.113.
    """
    kind = np.asarray(kind, dtype=object)
    unknown = sorted({str(k) for k in np.ravel(kind)} - set(KINDS))
    if unknown:
        raise ValueError(f"unknown kind of reference point {unknown}; expected one of {list(KINDS)}")
    codes = np.where(kind == KINDS[CLIMB_LIMITED_MASS], CLIMB_LIMITED_MASS, FIELD_LENGTH)
    pressure = atmosphere.isa(np.asarray(pressure_altitude_m, dtype=float))[1]
    surf = friction.surface_code(np.asarray(surface, dtype=object))
    cond_names = np.asarray(condition, dtype=object)
    cond = friction.condition_code(cond_names)
    dry = np.full(np.shape(cond), friction.condition_code("dry"))
    wet = cond != dry
    return ReferencePoints(
        kind=codes, mass_kg=np.asarray(mass_kg, dtype=float), pressure_pa=np.asarray(pressure, dtype=float),
        temperature_k=np.asarray(temperature_k, dtype=float),
        headwind_mps=np.asarray(wind.factored_headwind(reported_headwind_mps), dtype=float),
        slope=np.asarray(slope, dtype=float),
        mu_roll=np.asarray(friction.rolling_friction(surf, cond), dtype=float),
        mu_brake=np.asarray(friction.braking_friction(surf, cond), dtype=float),
        screen_height_m=np.where(wet, c.SCREEN_HEIGHT_15FT_M, c.SCREEN_HEIGHT_35FT_M),
        mu_roll_dry=np.where(wet, friction.rolling_friction(surf, dry), np.nan),
        mu_brake_dry=np.where(wet, friction.braking_friction(surf, dry), np.nan),
        published=np.asarray(published, dtype=float))


@dataclass(frozen=True)
class FieldLength:
    """Takeoff field length per case and the requirement that sets it.

    Attributes
    ----------
    length_m : numpy.ndarray
        Shortest TORA = TODA = ASDA accepting the mass; NaN where no runway does. [m]
    factor : numpy.ndarray of int
        ``physics.limits`` code of the binding requirement (``no_takeoff`` where NaN).
    """

    length_m: np.ndarray
    factor: np.ndarray


def _per_case(obj, n, index=None):
    """``obj`` (Aircraft, Site or ReferencePoints) with every field an array of n (at ``index``)."""
    vals = {f.name: np.broadcast_to(np.asarray(getattr(obj, f.name), dtype=float), (n,))
            for f in dataclasses.fields(obj)}
    if index is not None:
        vals = {k: v[index] for k, v in vals.items()}
    return type(obj)(**vals)


def _site(points, length_m):
    return wl.Site(tora_m=length_m, toda_m=length_m, asda_m=length_m, slope=points.slope,
                   mu_roll=points.mu_roll, mu_brake=points.mu_brake, pressure_pa=points.pressure_pa,
                   temperature_k=points.temperature_k, headwind_mps=points.headwind_mps,
                   screen_height_m=points.screen_height_m)


def distance_requirements(rules="transport"):
    """The distance requirements of a rule set (those a runway length can satisfy).

    Parameters
    ----------
    rules : str, optional
        ``"transport"`` or ``"all_engines"`` (:data:`physics.weightlimit.RULES`). [–]

    Returns
    -------
    list of Requirement
        The rule set's requirements on takeoff distance, takeoff run and accelerate-stop
        distance.

    Notes
    -----
    The climb gradient and obstacle clearance do not scale with the runway length; the
    field length is set by the distance requirements (:data:`DISTANCE_FACTORS`).

    References
    ----------
    .. [1] 14 CFR 25.109, 25.113.
    """
    return [r for r in wl.RULES[rules] if r.factor in DISTANCE_FACTORS]


def _shortest_runway_m(aircraft, points, mass_kg, reqs):
    """Fixed point L ← L/(1 + min margin) per case; (length, binding requirement index)."""
    n = points.n
    length = np.full(n, FIELD_LENGTH_START_M)
    active = np.arange(n)
    done = np.full(n, np.nan)
    binding = np.full(n, -1)
    a, p, m = aircraft, points, np.broadcast_to(np.asarray(mass_kg, dtype=float), (n,))
    engine_failure = any(r in wl.ENGINE_FAILURE_REQUIREMENTS for r in reqs)
    for _ in range(FIELD_LENGTH_ITERATIONS):
        if active.size == 0:
            break
        sub_a = _per_case(a, n, active) if active.size < n else a
        sub_p = p.take(active) if active.size < n else p
        cases = wl.prepare_cases(sub_a, _site(sub_p, length[active]), vmcg_floor=engine_failure)
        margins, _ = wl.requirement_margins(cases, m[active], reqs)
        least = margins.min(axis=0)
        with np.errstate(divide="ignore", invalid="ignore"):
            new = length[active] / (1.0 + least)
        impossible = ~np.isfinite(new) | (least <= -1.0)
        converged = np.abs(new - length[active]) <= FIELD_LENGTH_RTOL * np.abs(new)
        length[active] = np.where(impossible, np.nan, new)
        finished = impossible | converged
        binding[active[finished]] = np.where(impossible[finished], -1, margins.argmin(axis=0)[finished])
        done[active[finished]] = length[active[finished]]
        active = active[~finished]
    return done, binding


def takeoff_field_length_m(aircraft, points, mass_kg, *, rules="transport"):
    """Takeoff field length: the shortest TORA = TODA = ASDA on which the solve accepts the mass.

    Parameters
    ----------
    aircraft : Aircraft
        Type fields, broadcastable to the points (:class:`physics.weightlimit.Aircraft`).
    points : ReferencePoints
        Day, runway condition, slope and factored wind per case (``kind`` and ``published``
        unused). [SI]
    mass_kg : array_like
        Takeoff mass. [kg]
    rules : str, optional
        Requirement set of the weight solve (``"transport"`` or ``"all_engines"``). [–]

    Returns
    -------
    FieldLength
        Length per case and the binding requirement's factor code. [m], [–]

    Notes
    -----
    L solves min_k margin_k(L) = 0 over the distance requirements, margin = L/d_k(L) − 1;
    fixed point L_{i+1} = L_i / (1 + min_k margin_k(L_i)) (exact in one step where d does not
    depend on L). Field length = L + line-up allowance. Wet points with the dry friction
    given: max(L_wet(15 ft), L_dry(35 ft)).

    References
    ----------
    .. [1] 14 CFR 25.109, 25.113. .. [2] Raymer, §17.8.
    """
    from fieldlimits.physics import limits

    reqs = distance_requirements(rules)
    n = points.n
    a = _per_case(aircraft, n)
    mass = np.broadcast_to(np.asarray(mass_kg, dtype=float), (n,))
    screen = np.broadcast_to(np.asarray(points.screen_height_m, dtype=float), (n,))
    dry_roll = np.broadcast_to(np.asarray(points.mu_roll_dry, dtype=float), (n,))
    dry_brake = np.broadcast_to(np.asarray(points.mu_brake_dry, dtype=float), (n,))
    wet = np.flatnonzero((screen < c.SCREEN_HEIGHT_35FT_M - 1e-6) & np.isfinite(dry_roll) & np.isfinite(dry_brake))
    if wet.size:  # the dry runway of each wet point, solved in the same batch
        dry = dataclasses.replace(points.take(wet), mu_roll=dry_roll[wet], mu_brake=dry_brake[wet],
                                  screen_height_m=np.full(wet.size, c.SCREEN_HEIGHT_35FT_M))
        both = ReferencePoints(**{f.name: np.concatenate([
            np.broadcast_to(np.asarray(getattr(points, f.name), dtype=float), (n,)),
            np.asarray(getattr(dry, f.name), dtype=float)]) for f in dataclasses.fields(points)})
        index = np.concatenate([np.arange(n), wet])
        length, binding = _shortest_runway_m(_per_case(a, n, index), both, mass[index], reqs)
        dry_len, dry_bind = length[n:], binding[n:]
        length, binding = length[:n].copy(), binding[:n].copy()
        longer = np.isnan(length[wet]) | (dry_len > length[wet])
        length[wet] = np.where(longer, dry_len, length[wet])
        binding[wet] = np.where(longer, dry_bind, binding[wet])
    else:
        length, binding = _shortest_runway_m(a, points, mass, reqs)
    codes = np.array([limits.code(r.factor) for r in reqs] + [limits.code("no_takeoff")])
    factor = codes[np.where(binding < 0, len(reqs), binding)]
    lineup = np.broadcast_to(np.asarray(a.lineup_allowance_m, dtype=float), (n,))
    return FieldLength(length + np.where(lineup > 0.0, lineup, 0.0), factor)


def climb_limited_mass_kg(aircraft, points):
    """Climb-limited mass at each point's pressure and temperature.

    Parameters
    ----------
    aircraft : Aircraft
        Type fields, broadcastable to the points.
    points : ReferencePoints
        Pressure and temperature per case (the rest unused). [SI]

    Returns
    -------
    numpy.ndarray
        Largest mass meeting the second-segment gradient, searched over
        :data:`CLIMB_SEARCH_RANGE` × MTOW; NaN where even the lightest fails. [kg]

    Notes
    -----
    :func:`physics.climb.climb_limited_mass_kg` (bisection on ln m, 40 steps: 1e-12 of the
    range), gradient(m) = required.

    References
    ----------
    .. [1] 14 CFR 25.121(b). .. [2] Raymer, §17.3.
    """
    mtow = np.asarray(aircraft.mtow_kg, dtype=float)
    lo, hi = CLIMB_SEARCH_RANGE
    out = climb.climb_limited_mass_kg(aircraft, pressure_pa=points.pressure_pa, temperature_k=points.temperature_k,
                                      mass_min_kg=lo * mtow, mass_max_kg=hi * mtow)
    out = np.atleast_1d(np.asarray(out, dtype=float))
    # the top of the search range means "not climb limited in the range": no finite model value
    return np.where(out >= hi * np.broadcast_to(mtow, out.shape) * (1.0 - 1e-12), np.nan, out)


def model_values(aircraft, points, *, rules="transport"):
    """The model's value of each reference point.

    Parameters
    ----------
    aircraft : Aircraft
        Type fields, broadcastable to the points.
    points : ReferencePoints
        The points. [SI]
    rules : str, optional
        Requirement set for field lengths. [–]

    Returns
    -------
    values : numpy.ndarray
        Field length [m] or climb-limited mass [kg], by kind; NaN where the model has none.
    factor : numpy.ndarray of int
        Binding requirement of field-length points (``physics.limits`` code), the
        ``climb_gradient`` code for climb points. [–]

    Notes
    -----
    See :func:`takeoff_field_length_m` and :func:`climb_limited_mass_kg`.

    References
    ----------
    .. [1] 14 CFR 25.109, 25.113, 25.121(b).
    """
    from fieldlimits.physics import limits

    n = points.n
    a = _per_case(aircraft, n)
    kind = np.broadcast_to(np.asarray(points.kind), (n,))
    values = np.full(n, np.nan)
    factor = np.full(n, limits.code("climb_gradient"))
    fl = np.flatnonzero(kind == FIELD_LENGTH)
    if fl.size:
        sub = points.take(fl)
        r = takeoff_field_length_m(_per_case(a, n, fl), sub, sub.mass_kg, rules=rules)
        values[fl], factor[fl] = r.length_m, r.factor
    cm = np.flatnonzero(kind == CLIMB_LIMITED_MASS)
    if cm.size:
        values[cm] = climb_limited_mass_kg(_per_case(a, n, cm), points.take(cm))
    return values, factor


# ---------------------------------------------------------------------------------------------
# The fit


@dataclass(frozen=True)
class Coefficient:
    """One coefficient to fit (an :class:`physics.weightlimit.Aircraft` field, SI).

    Attributes
    ----------
    name : str
        Field name.
    start : float
        Starting value and prior mean (e.g. the class default or the given value).
    prior_sd : float
        Prior standard deviation (same unit), > 0.
    lower, upper : float
        Hard limits of the fit.
    """

    name: str
    start: float
    prior_sd: float
    lower: float
    upper: float


@dataclass(frozen=True)
class Fit:
    """Result of :func:`fit_coefficients` (arrays over coefficients or over points).

    Attributes
    ----------
    names : tuple of str
        Coefficients fitted.
    start, value : numpy.ndarray
        Before and after (SI).
    prior_sd, posterior_sd : numpy.ndarray
        Standard deviations before and after (SI).
    determined : numpy.ndarray of bool
        posterior_sd / prior_sd < :data:`DETERMINED_SHARE`.
    at_bound : numpy.ndarray of bool
        The value sits on a hard limit (its posterior figure is then only indicative).
    published, model_start, model_value : numpy.ndarray
        Per point: published value, model before and after (m or kg).
    factor : numpy.ndarray of int
        Per point: the binding requirement after the fit.
    residual : numpy.ndarray
        Per point: model_value / published − 1 (NaN where the model has no value). [–]
    singular_values : numpy.ndarray
        Of the point Jacobian in prior-scaled coefficients; those above 1 count the
        combinations the points determine. [–]
    success : bool
        Whether the optimiser reported convergence.
    message : str
        The optimiser's message.
    evaluations : int
        Model evaluations (batches) used.
    """

    names: tuple
    start: np.ndarray
    value: np.ndarray
    prior_sd: np.ndarray
    posterior_sd: np.ndarray
    determined: np.ndarray
    at_bound: np.ndarray
    published: np.ndarray
    model_start: np.ndarray
    model_value: np.ndarray
    factor: np.ndarray
    residual: np.ndarray
    singular_values: np.ndarray
    success: bool
    message: str
    evaluations: int


def _with(aircraft, names, values, n_points):
    """``aircraft`` (scalars) with ``names`` set per parameter set: values (k, p) → k × n cases."""
    k = values.shape[0]
    base = {f.name: np.asarray(getattr(aircraft, f.name), dtype=float) for f in dataclasses.fields(aircraft)}
    out = {name: np.broadcast_to(v, (k * n_points,)) for name, v in base.items()}
    for j, name in enumerate(names):
        out[name] = np.repeat(values[:, j], n_points)
    return type(aircraft)(**out)


def _tile(points, k):
    n = points.n
    return ReferencePoints(**{f.name: np.tile(np.broadcast_to(np.asarray(getattr(points, f.name)), (n,)), k)
                              for f in dataclasses.fields(points)})


class _Model:
    """Evaluations of the point residuals at parameter sets, batched and remembered."""

    def __init__(self, aircraft, points, coefficients, point_share_sd, rules):
        self.aircraft, self.points, self.rules = aircraft, points, rules
        self.names = tuple(c_.name for c_ in coefficients)
        self.mu = np.array([c_.start for c_ in coefficients], dtype=float)
        self.sd = np.array([c_.prior_sd for c_ in coefficients], dtype=float)
        self.published = np.broadcast_to(np.asarray(points.published, dtype=float), (points.n,))
        self.share_sd = np.broadcast_to(np.asarray(point_share_sd, dtype=float), (points.n,))
        self.batches = 0
        self._last = None

    def values(self, z_sets):
        """Model values and factors, shape (k, n), at prior-scaled sets z (k, p)."""
        theta = self.mu + self.sd * z_sets
        n = self.points.n
        a = _with(self.aircraft, self.names, theta, n)
        v, f = model_values(a, _tile(self.points, z_sets.shape[0]), rules=self.rules)
        self.batches += 1
        return v.reshape(z_sets.shape[0], n), f.reshape(z_sets.shape[0], n)

    def point_residuals(self, values):
        r = (values / self.published - 1.0) / self.share_sd
        # no model value (e.g. no runway accepts the mass): a 100 % miss, so that the step back
        # into the model's range is downhill
        return np.where(np.isfinite(r), r, 1.0 / self.share_sd)

    def residuals(self, z):
        if self._last is not None and np.array_equal(self._last[0], z):
            return self._last[1]
        v, _ = self.values(z[None, :])
        r = np.concatenate([self.point_residuals(v[0]), z])
        self._last = (z.copy(), r)
        return r

    def jacobian(self, z, lower, upper):
        p = z.size
        step = np.full(p, DIFF_STEP)
        step = np.where(z + step > upper, -DIFF_STEP, step)  # stay inside the bounds
        sets = np.vstack([z[None, :], z[None, :] + np.diag(step)])
        v, _ = self.values(sets)
        r = self.point_residuals(v)
        jp = (r[1:] - r[0]).T / step  # (n, p)
        self._last = (z.copy(), np.concatenate([r[0], z]))
        return np.vstack([jp, np.eye(p)])


def fit_coefficients(aircraft, points, coefficients, *, point_share_sd=POINT_SHARE_SD, rules="transport",
                     max_evaluations=100):
    """Fit coefficients of one type to its reference points (bounded least squares, soft prior).

    Parameters
    ----------
    aircraft : Aircraft
        The type, every field a scalar (SI); the fitted fields start at ``Coefficient.start``.
    points : ReferencePoints
        Its reference points. [SI]
    coefficients : list of Coefficient
        What to fit, each with its prior and hard limits (start inside the limits). [SI]
    point_share_sd : float or array_like, optional
        Relative standard uncertainty of each published value. [–]
    rules : str, optional
        Requirement set of the field lengths. [–]
    max_evaluations : int, optional
        Optimiser's function evaluations at most. [–]

    Returns
    -------
    Fit
        Coefficients before and after, their uncertainty, and every point's residual. [SI]

    Notes
    -----
    Minimise ½ Σ_i ((model_i/published_i − 1)/s_i)² + ½ Σ_j ((θ_j − μ_j)/σ_j)² subject to
    lower ≤ θ ≤ upper, in z = (θ − μ)/σ. Posterior covariance of z: (JᵀJ + I)⁻¹, J the point
    rows of the Jacobian at the solution. With no coefficient, only the model values are
    computed.

    References
    ----------
    .. [3] Tarantola (2005), §3.2. .. [4] Branch, Coleman & Li (1999).
    """
    coefficients = list(coefficients)
    model = _Model(aircraft, points, coefficients, point_share_sd, rules)
    p = len(coefficients)
    start = model.mu.copy()
    if p == 0:
        v, f = model.values(np.zeros((1, 0)))
        empty = np.zeros(0)
        with np.errstate(invalid="ignore", divide="ignore"):
            res = v[0] / model.published - 1.0
        return Fit((), empty, empty, empty, empty, np.zeros(0, bool), np.zeros(0, bool), model.published.copy(),
                   v[0], v[0], f[0], res, empty, True, "no coefficient to fit", model.batches)
    if np.any(model.sd <= 0):
        raise ValueError("every prior standard deviation must be positive")
    lo = np.array([(c_.lower - c_.start) / c_.prior_sd for c_ in coefficients])
    hi = np.array([(c_.upper - c_.start) / c_.prior_sd for c_ in coefficients])
    if np.any(lo > 0) or np.any(hi < 0):
        bad = [c_.name for c_, a, b in zip(coefficients, lo, hi) if a > 0 or b < 0]
        raise ValueError(f"start outside its limits for {', '.join(bad)}")
    lo, hi = np.minimum(lo, -1e-12), np.maximum(hi, 1e-12)
    model_start = model.values(np.zeros((1, p)))[0][0]
    # start a little inside the limits: on a limit the reflective scaling of the trust region
    # stalls the first steps (a start on vr = vlof, say)
    inside = np.minimum(START_INSIDE, 0.25 * (hi - lo))
    z0 = np.clip(np.zeros(p), lo + inside, hi - inside)
    sol = optimize.least_squares(model.residuals, z0, jac=lambda z: model.jacobian(z, lo, hi), bounds=(lo, hi),
                                 method="trf", x_scale=1.0, max_nfev=max_evaluations, xtol=1e-8, ftol=1e-8,
                                 gtol=1e-8)
    z = sol.x
    jac = model.jacobian(z, lo, hi)[: points.n]
    v, f = model.values(z[None, :])
    with np.errstate(invalid="ignore", divide="ignore"):
        residual = v[0] / model.published - 1.0
    jf = np.where(np.isfinite(jac), jac, 0.0)
    posterior = np.linalg.inv(jf.T @ jf + np.eye(p))
    share = np.sqrt(np.clip(np.diag(posterior), 0.0, None))
    singular = np.linalg.svd(jf, compute_uv=False)
    at_bound = (z <= lo + 1e-9) | (z >= hi - 1e-9)
    lower = np.array([c_.lower for c_ in coefficients])
    upper = np.array([c_.upper for c_ in coefficients])
    value = np.clip(model.mu + model.sd * z, lower, upper)  # no rounding past a limit
    return Fit(model.names, start, value, model.sd.copy(), model.sd * share, share < DETERMINED_SHARE, at_bound,
               model.published.copy(), model_start, v[0], f[0], residual, singular, bool(sol.success),
               str(sol.message), model.batches)


def determined_combinations(fit):
    """Number of coefficient combinations the points determine.

    Parameters
    ----------
    fit : Fit
        A fit result. [–]

    Returns
    -------
    int
        Singular values of the prior-scaled point Jacobian above 1. [–]

    Notes
    -----
    A direction with singular value s carries s² times the prior's information.

    References
    ----------
    .. [3] Tarantola (2005), §3.2.
    """
    return int(np.sum(np.asarray(fit.singular_values) > 1.0))


__all__ = ["KINDS", "FIELD_LENGTH", "CLIMB_LIMITED_MASS", "DETERMINED_SHARE", "POINT_SHARE_SD", "ReferencePoints",
           "reference_points",
           "FieldLength", "Coefficient", "Fit", "distance_requirements", "takeoff_field_length_m",
           "climb_limited_mass_kg", "model_values", "fit_coefficients", "determined_combinations"]
