"""Climatology: daily-maximum temperature distribution, wind-rose runway components,
runway usability and reliability levels of the takeoff-weight limit.

The question answered here is the planner's: *what mass can I count on for p of the
departures of this month?* A day is a pair (daily maximum temperature, wind). The model:

1. **Temperature.** The daily maximum temperature of a month is normal with the month's mean
   and standard deviation (or follows given percentiles, interpolated in the standard-normal
   score, see :func:`daily_max_temperature_k`). Takeoffs are assumed at the hottest hour of
   the day (the daily maximum), which is conservative; no diurnal cycle is modelled.
2. **Wind.** A wind rose (direction sector × speed class, calms apart) is represented by
   *points*: each cell by a small midpoint grid of directions across the sector times
   speeds across the class, each point carrying an equal share of the cell's frequency
   (:func:`wind_rose_points`); the calm share is one point of zero speed.
3. **Usability.** A point is usable on a runway direction when its reported crosswind is
   within the type's crosswind limit and its reported tailwind within the tailwind limit
   (:func:`runway_usability`). Each point is flown on the usable direction that gives the
   highest mass at that temperature; if no direction is usable the day is not possible.
4. **Independence.** Temperature and wind are taken as statistically independent (stated
   assumption; in reality hot afternoons and sea breezes are correlated).
5. **Reliability level.** With S(M) the share of days on which mass M is achievable,
   the mass achievable on at least p of days is M_p = max{M : S(M) ≥ p}
   (:func:`reliability_masses`).
6. **Efficiency.** The weight limit is not solved for every day: the caller solves it on a
   grid of temperature × factored headwind (× two station-pressure layers) shared by the
   twelve months of a runway direction (:func:`temperature_nodes`, :func:`headwind_nodes`,
   :func:`interpolate_pressure`, :func:`fill_no_takeoff_nodes`), takes each month's window
   of temperature nodes (:func:`node_window`) at their standard-normal scores, and this
   module interpolates (:func:`interpolate_headwind`) and inverts the interpolant in
   temperature exactly, so the temperature distribution is treated as continuous, not
   binned. With given percentiles the mass is linear in temperature between nodes but the
   score is piecewise linear in temperature, so the interpolant is linear in score only
   between the percentile anchors (a second-order difference).
7. **Refinement.** The level masses of the interpolated surface are corrected with direct
   solves of a few days on each level's contour: the crossing days, slopes and densities
   of the wind points (:func:`level_crossings`), a systematic sample of those days over
   the density (:func:`refinement_samples`), one Newton step of the level from the
   sampled errors (:func:`share_equivalent_error`, :func:`refined_level_masses`), and the
   binding day moved onto the corrected mass (:func:`binding_score`,
   :func:`secant_score`); the caller does the solves.

Conventions (all arrays, no loops over cases):

- ``N`` groups (airfield × month × aircraft type), ``D`` runway directions of the airfield
  (padded with invalid directions), ``J`` wind points (index 0 is the calm point),
  ``G`` temperature nodes, ``H`` headwind nodes, ``L`` reliability levels.
- Masses that are not possible are ``-inf`` inside, NaN at the interface.

References
----------
.. [1] 14 CFR Part 25, §25.105(d)(1): not more than 50 % of the reported headwind and not
   less than 150 % of the reported tailwind (EASA CS 25.105(d)(1) identical).
.. [2] ICAO, *Annex 14, Aerodromes, Vol. I*, §3.1.1–3.1.4 and Attachment A §1: runway
   orientation for a usability factor of at least 95 % at the allowable crosswind component.
.. [3] FAA Advisory Circular 150/5300-13 (Airport Design), Appendix on wind analysis:
   wind coverage of a runway from a wind rose, wind uniform within each cell.
.. [4] D. S. Wilks, *Statistical Methods in the Atmospheric Sciences*, 3rd ed., Academic
   Press, 2011, §4.4.2 (Gaussian distribution) and §3.1 (quantiles) [from memory for the
   section numbers].
.. [6] W. G. Cochran, *Sampling Techniques*, 3rd ed., Wiley, 1977, ch. 8 (systematic
   sampling) [from memory for the chapter].
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

from fieldlimits.physics import limits, wind

#: Standard-normal scores of the default temperature grid nodes. [–]
DEFAULT_SCORE_NODES = (-2.5, -1.25, 0.0, 1.0, 1.75, 2.5)
#: Default reliability levels (share of days). [–]
DEFAULT_LEVELS = (0.50, 0.85, 0.95)
#: Probabilities of the optional percentile columns of the climate table. [–]
PERCENTILE_PROBABILITIES = (0.50, 0.85, 0.95)


# ----------------------------------------------------------------------------------------
# Temperature
# ----------------------------------------------------------------------------------------
def normal_score(probability):
    """Standard-normal score (probit) of a probability.

    Parameters
    ----------
    probability : array_like
        Non-exceedance probability, 0 … 1. [–]

    Returns
    -------
    numpy.ndarray or float
        z with Phi(z) = probability; ±inf at 0 and 1. [–]

    Notes
    -----
    z = Phi⁻¹(p), Phi the standard-normal distribution function.

    References
    ----------
    .. [4] Wilks (2011), §4.4.2.
    """
    return special.ndtri(np.asarray(probability, dtype=float))


def normal_probability(score):
    """Standard-normal distribution function Phi(z).

    Parameters
    ----------
    score : array_like
        Standard-normal score, ±inf allowed. [–]

    Returns
    -------
    numpy.ndarray or float
        Phi(z) = (1 + erf(z / √2)) / 2. [–]

    Notes
    -----
    Phi(z) = ½ [1 + erf(z/√2)].

    References
    ----------
    .. [4] Wilks (2011), §4.4.2.
    """
    return special.ndtr(np.asarray(score, dtype=float))


def daily_max_temperature_k(score, mean_k, sd_k, percentile_values_k=None,
                            percentile_probabilities=PERCENTILE_PROBABILITIES):
    """Daily maximum temperature at a standard-normal score (the quantile function).

    Parameters
    ----------
    score : array_like
        Standard-normal score z of the day (z = Phi⁻¹(p) for the p quantile). [–]
    mean_k : array_like
        Monthly mean of the daily maximum temperature. [K]
    sd_k : array_like
        Day-to-day standard deviation of the daily maximum temperature, ≥ 0. [K]
    percentile_values_k : array_like, optional
        Given percentiles of the daily maximum, shape ``(..., A)`` for the probabilities
        ``percentile_probabilities``; NaN where a percentile is not given. [K]
    percentile_probabilities : sequence of float, optional
        Increasing probabilities of the given percentiles, all ≥ 0.5. [–]

    Returns
    -------
    numpy.ndarray
        Temperature, broadcast of the inputs. [K]

    Notes
    -----
    Without percentiles the distribution is normal: T(z) = mean + sd z [4].

    With percentiles, T(z) is piecewise linear in the score z through the anchors
    (z_0 = 0, T_0) and (z_a = Phi⁻¹(p_a), T_a) for the given p_a > 0.5, where T_0 is the
    given median, else the mean. Below the first anchor (the cold side) the slope is sd
    (the normal's dT/dz); above the last given anchor the slope of the last segment is
    kept (sd when only the median is given). A normal distribution's own percentiles
    therefore reproduce the normal exactly. A missing percentile is skipped (the anchor
    falls on the extension of the previous segment).

    References
    ----------
    .. [4] Wilks (2011), §4.4.2 (Gaussian quantiles), §3.1 (empirical quantiles).
    """
    z = np.asarray(score, dtype=float)
    mean = np.asarray(mean_k, dtype=float)
    sd = np.asarray(sd_k, dtype=float)
    if percentile_values_k is None:
        return mean + sd * z
    pv = np.asarray(percentile_values_k, dtype=float)
    probs = np.asarray(percentile_probabilities, dtype=float)
    z_anchor = normal_score(probs)
    # Anchor 0 at z = 0: the given median if there is one, else the mean.
    first_is_median = np.isclose(probs[0], 0.5)
    t0 = np.where(np.isfinite(pv[..., 0]), pv[..., 0], mean) if first_is_median else mean
    knots_z = z_anchor[1:] if first_is_median else z_anchor
    knots_v = pv[..., 1:] if first_is_median else pv
    t = t0 + sd * np.minimum(z, 0.0)
    prev_z, prev_t, slope = 0.0, t0, sd
    for a in range(knots_z.size):  # a fixed, small number of anchors
        za = knots_z[a]
        ta = np.where(np.isfinite(knots_v[..., a]), knots_v[..., a], prev_t + slope * (za - prev_z))
        seg_slope = (ta - prev_t) / (za - prev_z)
        t = t + seg_slope * np.clip(z - prev_z, 0.0, za - prev_z)
        prev_z, prev_t, slope = za, ta, seg_slope
    return t + slope * np.maximum(z - prev_z, 0.0)


def daily_max_temperature_score(temperature_k, mean_k, sd_k, percentile_values_k=None,
                                percentile_probabilities=PERCENTILE_PROBABILITIES):
    """Standard-normal score of a daily maximum temperature (inverse of the quantiles).

    Parameters
    ----------
    temperature_k : array_like
        Temperature. [K]
    mean_k, sd_k : array_like
        Monthly mean and standard deviation (> 0) of the daily maximum. [K]
    percentile_values_k : array_like, optional
        Given percentiles, as for :func:`daily_max_temperature_k`. [K]
    percentile_probabilities : sequence of float, optional
        Their probabilities. [–]

    Returns
    -------
    numpy.ndarray
        z with daily_max_temperature_k(z) = temperature (NaN where sd = 0). [–]

    Notes
    -----
    Normal: z = (T − mean)/sd. With percentiles, the piecewise-linear T(z) of
    :func:`daily_max_temperature_k` is inverted segment by segment.

    References
    ----------
    .. [4] Wilks (2011), §4.4.2.
    """
    t = np.asarray(temperature_k, dtype=float)
    mean = np.asarray(mean_k, dtype=float)
    sd = np.asarray(sd_k, dtype=float)
    sd_safe = np.where(sd > 0, sd, np.nan)
    if percentile_values_k is None:
        return (t - mean) / sd_safe
    # Knots of T(z): evaluate the quantile function at the anchor scores and invert the
    # piecewise-linear function between them (slopes from the same evaluation).
    probs = np.asarray(percentile_probabilities, dtype=float)
    z_knots = np.unique(np.concatenate([[0.0], normal_score(probs[probs > 0.5])]))
    t_knots = daily_max_temperature_k(z_knots, mean[..., None], sd[..., None],
                                      np.asarray(percentile_values_k, dtype=float)[..., None, :],
                                      percentile_probabilities)
    t_far = daily_max_temperature_k(z_knots[-1] + 1.0, mean, sd, percentile_values_k,
                                    percentile_probabilities)
    z = np.where(t <= t_knots[..., 0], (t - t_knots[..., 0]) / sd_safe, 0.0)
    for k in range(z_knots.size - 1):  # a fixed, small number of anchors
        t0, t1 = t_knots[..., k], t_knots[..., k + 1]
        span = np.where(t1 > t0, t1 - t0, np.inf)
        z = z + (z_knots[k + 1] - z_knots[k]) * np.clip((t - t0) / span, 0.0, 1.0)
    last_slope = t_far - t_knots[..., -1]
    beyond = np.maximum(t - t_knots[..., -1], 0.0) / np.where(last_slope > 0, last_slope, np.nan)
    return z + np.where(t > t_knots[..., -1], beyond, 0.0)


# ----------------------------------------------------------------------------------------
# Wind rose
# ----------------------------------------------------------------------------------------
def wind_rose_points(direction_deg, sector_width_deg, speed_low_mps, speed_high_mps,
                     frequency, calm_frequency, *, directions_per_sector=5, speeds_per_class=2):
    """Representative wind points of a wind rose (midpoint rule over each cell).

    Parameters
    ----------
    direction_deg : array_like
        Centre of each direction sector, wind FROM, true; shape ``(..., C)``. [deg]
    sector_width_deg : array_like
        Width of each sector; shape ``(..., C)``. [deg]
    speed_low_mps, speed_high_mps : array_like
        Speed class bounds; shape ``(..., C)``. [m/s]
    frequency : array_like
        Share of the observations in each cell; padding cells have 0; shape ``(..., C)``. [–]
    calm_frequency : array_like
        Share of calms; shape ``(...)``. [–]
    directions_per_sector : int, optional
        Sub-directions per sector (midpoints of equal sub-sectors). [–]
    speeds_per_class : int, optional
        Sub-speeds per class (midpoints of equal sub-classes). [–]

    Returns
    -------
    direction_deg : numpy.ndarray
        Wind direction FROM of each point, shape ``(..., J)``, J = 1 + C × nd × ns;
        point 0 is the calm point. [deg]
    speed_mps : numpy.ndarray
        Wind speed of each point (0 for the calm point). [m/s]
    weight : numpy.ndarray
        Share of days of each point; the weights of a rose sum to 1 (the rose is
        normalised by its total, so percentages work too). [–]

    Notes
    -----
    Each cell's wind is taken as uniform in direction over the sector and uniform in speed
    over the class, as in the classical wind-coverage analysis [3]. The cell is represented
    by the nd × ns midpoints theta_i = c + w ((i + ½)/nd − ½), V_k = V_lo + (V_hi − V_lo)
    (k + ½)/ns, each with weight f/(nd ns): the midpoint rule for the cell's integral. The
    error on a usability share is of order one sub-cell per cell crossed by a limit line.

    References
    ----------
    .. [3] FAA AC 150/5300-13, wind analysis appendix (uniform distribution within a cell).
    """
    c = np.asarray(direction_deg, dtype=float)
    w = np.asarray(sector_width_deg, dtype=float)
    lo = np.asarray(speed_low_mps, dtype=float)
    hi = np.asarray(speed_high_mps, dtype=float)
    f = np.asarray(frequency, dtype=float)
    calm = np.asarray(calm_frequency, dtype=float)
    nd, ns = int(directions_per_sector), int(speeds_per_class)
    di = (np.arange(nd) + 0.5) / nd - 0.5
    sk = (np.arange(ns) + 0.5) / ns
    dirs = (c[..., :, None, None] + w[..., :, None, None] * di[:, None]) % 360.0
    spd = lo[..., :, None, None] + (hi - lo)[..., :, None, None] * sk[None, :]
    shape = np.broadcast_shapes(dirs.shape, spd.shape)
    flat = shape[:-3] + (shape[-3] * nd * ns,)  # explicit: -1 cannot be inferred for no groups
    dirs = np.broadcast_to(dirs, shape).reshape(flat)
    spd = np.broadcast_to(spd, shape).reshape(flat)
    wgt = np.broadcast_to(f[..., :, None, None] / (nd * ns), shape).reshape(flat)
    total = calm + f.sum(axis=-1)
    total = np.where(total > 0.0, total, 1.0)
    zero = np.zeros(shape[:-3] + (1,))
    direction = np.concatenate([zero, dirs], axis=-1)
    speed = np.concatenate([zero, spd], axis=-1)
    weight = np.concatenate([calm[..., None] + zero, wgt], axis=-1) / total[..., None]
    return direction, speed, weight


def runway_usability(wind_from_true_deg, wind_speed_mps, runway_heading_true_deg,
                     tailwind_limit_mps, crosswind_limit_mps):
    """Runway components of wind points, their factored headwind and usability.

    Parameters
    ----------
    wind_from_true_deg : array_like
        Wind direction FROM, true. [deg]
    wind_speed_mps : array_like
        Wind speed. [m/s]
    runway_heading_true_deg : array_like
        True heading of the takeoff direction. [deg]
    tailwind_limit_mps, crosswind_limit_mps : array_like
        The aircraft type's limits on the reported components. [m/s]

    Returns
    -------
    factored_headwind_mps : numpy.ndarray
        Headwind for performance, 50 % headwind / 150 % tailwind [1]. [m/s]
    crosswind_exceeded : numpy.ndarray of bool
        |crosswind| > crosswind limit. [–]
    tailwind_exceeded : numpy.ndarray of bool
        Tailwind (−headwind) > tailwind limit. [–]

    Notes
    -----
    headwind = W cos(theta), crosswind = W sin(theta), theta = wind − heading. A point is
    usable when neither limit is exceeded; the limits apply to the reported (unfactored)
    components, the performance to the factored one (common practice; [1] for factoring).
    A tiny tolerance (1e-9 m/s) keeps a point exactly on the limit usable.

    References
    ----------
    .. [1] 14 CFR 25.105(d)(1).
    .. [2] ICAO Annex 14, Vol. I, §3.1.3 (allowable crosswind components).
    """
    head, cross = wind.runway_wind_components(wind_from_true_deg, wind_speed_mps,
                                              runway_heading_true_deg)
    eps = 1e-9
    cross_exceeded = np.abs(cross) > np.asarray(crosswind_limit_mps, dtype=float) + eps
    tail_exceeded = -head > np.asarray(tailwind_limit_mps, dtype=float) + eps
    return wind.factored_headwind(head), cross_exceeded, tail_exceeded


def wind_coverage(weight, usable):
    """Usability factor (wind coverage): share of days with a usable wind.

    Parameters
    ----------
    weight : array_like
        Share of days of each wind point, shape ``(..., J)``. [–]
    usable : array_like of bool
        Whether each point is usable on at least one direction considered, ``(..., J)``. [–]

    Returns
    -------
    numpy.ndarray
        Coverage, 0 … 1. [–]

    Notes
    -----
    coverage = Σ_j w_j [usable_j] [2], [3].

    References
    ----------
    .. [2] ICAO Annex 14, Vol. I, §3.1.1 (usability factor ≥ 95 %).
    .. [3] FAA AC 150/5300-13, wind analysis appendix.
    """
    return np.sum(np.asarray(weight, dtype=float) * np.asarray(usable, dtype=bool), axis=-1)


# ----------------------------------------------------------------------------------------
# The solving grid
# ----------------------------------------------------------------------------------------
def headwind_nodes(min_factored_mps, max_factored_mps, *, tail_nodes=2, head_nodes=4, power=1.0):
    """Factored-headwind nodes of the solving grid, always including calm (0).

    Parameters
    ----------
    min_factored_mps : array_like
        Lowest factored headwind needed (≤ 0; the worst usable tailwind). [m/s]
    max_factored_mps : array_like
        Highest factored headwind needed (≥ 0). [m/s]
    tail_nodes, head_nodes : int, optional
        Nodes strictly below and strictly above zero. [–]
    power : float, optional
        Spacing exponent q ≥ 1: nodes crowd towards calm, where most days are. [–]

    Returns
    -------
    numpy.ndarray
        Non-decreasing nodes, shape ``(..., tail_nodes + 1 + head_nodes)``. [m/s]

    Notes
    -----
    On each side of zero: h = h_min (1 − i/n_t)^q and h = h_max (k/n_h)^q (q = 1: equal
    spacing). A zero range gives repeated nodes, which the interpolation handles
    (zero-width cells).

    References
    ----------
    .. [1] 14 CFR 25.105(d)(1) (the factored component is what the performance uses).
    """
    lo = np.minimum(np.asarray(min_factored_mps, dtype=float), 0.0)
    hi = np.maximum(np.asarray(max_factored_mps, dtype=float), 0.0)
    q = float(power)
    t = (1.0 - np.arange(tail_nodes) / tail_nodes) ** q if tail_nodes else np.zeros(0)
    h = (np.arange(head_nodes + 1) / head_nodes) ** q if head_nodes else np.zeros(1)
    return np.concatenate([lo[..., None] * t, hi[..., None] * h], axis=-1)


def interpolate_headwind(grid_mass_kg, nodes_mps, headwind_mps):
    """Linear interpolation of grid masses in factored headwind, at every temperature node.

    Parameters
    ----------
    grid_mass_kg : array_like
        Masses solved on the grid, shape ``(..., G, H)``; NaN where no takeoff. [kg]
    nodes_mps : array_like
        Headwind nodes, non-decreasing, shape ``(..., H)``. [m/s]
    headwind_mps : array_like
        Factored headwind of each point, shape ``(..., J)``. Values outside the nodes are
        clamped to the end nodes. [m/s]

    Returns
    -------
    numpy.ndarray
        Masses at the points on each temperature node, shape ``(..., J, G)``; NaN when
        either neighbouring node is NaN (the no-takeoff rule). [kg]

    Notes
    -----
    m(h) = (1 − s) m_k + s m_{k+1}, s = (h − h_k)/(h_{k+1} − h_k), k the cell of h; a
    zero-width cell gives s = 0. Together with the linear rule in temperature
    (:func:`reliability_masses`) this is bilinear interpolation.

    References
    ----------
    .. [1] W. H. Press et al., *Numerical Recipes*, 3rd ed., CUP, 2007, §3.6
       (interpolation in two dimensions, bilinear).
    """
    grid = np.asarray(grid_mass_kg, dtype=float)
    nodes = np.asarray(nodes_mps, dtype=float)
    h = np.asarray(headwind_mps, dtype=float)
    n_g, n_h = grid.shape[-2:]
    n_j = h.shape[-1]
    lead = np.broadcast_shapes(grid.shape[:-2], nodes.shape[:-1], h.shape[:-1])
    rows = int(np.prod(lead, dtype=np.int64))
    nodes = np.broadcast_to(nodes, lead + (n_h,)).reshape(rows, n_h)
    h = np.broadcast_to(h, lead + (n_j,)).reshape(rows, n_j)
    # Grid as (row, H, G): gathering a headwind node fetches all temperature nodes at once.
    grid_t = np.ascontiguousarray(np.swapaxes(np.broadcast_to(grid, lead + (n_g, n_h)), -1, -2)
                                  ).reshape(rows * n_h, n_g)
    hc = np.clip(h, nodes[:, :1], nodes[:, -1:])
    k = np.zeros((rows, n_j), dtype=np.int64)
    for i in range(1, n_h - 1):  # a fixed, small number of headwind nodes
        k += nodes[:, i:i + 1] <= hc
    k1 = np.minimum(k + 1, n_h - 1)
    h0 = np.take_along_axis(nodes, k, axis=-1)
    h1 = np.take_along_axis(nodes, k1, axis=-1)
    width = h1 - h0
    s = np.where(width > 0.0, (hc - h0) / np.where(width > 0.0, width, 1.0), 0.0)
    base = (np.arange(rows) * n_h)[:, None]
    m0 = grid_t[base + k]  # (rows, J, G)
    m1 = grid_t[base + k1]
    # NaN propagates from either neighbour (0 × NaN is NaN): the no-takeoff rule.
    out = m0 + s[..., None] * (m1 - m0)
    return out.reshape(lead + (n_j, n_g))


def temperature_nodes(low_k, high_k, count, corner_k=None):
    """Temperature nodes of a solving grid shared by the months, one on the flat-rating corner.

    Parameters
    ----------
    low_k, high_k : array_like
        Lowest and highest temperature needed (over all months of the family). [K]
    count : int
        Number of nodes G ≥ 2. [–]
    corner_k : array_like, optional
        Thrust flat-rating corner temperature; the interior node nearest to it is moved onto
        it when it lies strictly inside (low, high). [K]

    Returns
    -------
    numpy.ndarray
        Non-decreasing nodes, shape ``(..., G)``. [K]

    Notes
    -----
    T_g = low + (high − low) g/(G − 1). The mass is piecewise smooth in temperature with a
    kink where the thrust stops being flat-rated; piecewise-linear interpolation is exact
    to first order across a kink only when a node sits on it [1]. The nearest interior node
    is within half a spacing of the corner, so the nodes stay ordered.

    References
    ----------
    .. [1] de Boor (2001), ch. II (breakpoints at slope changes).
    """
    lo = np.asarray(low_k, dtype=float)
    hi = np.maximum(np.asarray(high_k, dtype=float), lo)
    g = int(count)
    nodes = lo[..., None] + (hi - lo)[..., None] * (np.arange(g) / (g - 1))
    if corner_k is None or g < 3:
        return nodes
    corner = np.broadcast_to(np.asarray(corner_k, dtype=float), lo.shape)
    inside = (corner > lo) & (corner < hi)
    k = 1 + np.argmin(np.abs(nodes[..., 1:-1] - corner[..., None]), axis=-1)
    at = (np.arange(g) == k[..., None]) & inside[..., None]
    return np.where(at, corner[..., None], nodes)


def node_window(nodes_k, low_k, high_k, size):
    """First index of ``size`` consecutive nodes that cover [low, high] (a month's range).

    Parameters
    ----------
    nodes_k : array_like
        Non-decreasing nodes, ``(..., G)``. [K]
    low_k, high_k : array_like
        Range to cover, ``(...)``. [K]
    size : int
        Window length K ≤ G. [–]

    Returns
    -------
    start : numpy.ndarray of int
        First node of the window, ``(...)``. [–]
    needed : numpy.ndarray of int
        Nodes from the last one at or below ``low`` to the first at or above ``high``. [–]

    Notes
    -----
    i0 = max{g : T_g ≤ low} (0 if none), i1 = min{g : T_g ≥ high} (G − 1 if none); the
    window starts at clip(i0, 0, G − K), so it covers [i0, i1] whenever K ≥ i1 − i0 + 1.

    References
    ----------
    .. [1] Press et al. (2007), §3.1 (bracketing a value in a table).
    """
    t = np.asarray(nodes_k, dtype=float)
    g = t.shape[-1]
    i0 = np.clip(np.sum(t <= np.asarray(low_k, dtype=float)[..., None], axis=-1) - 1, 0, g - 1)
    i1 = np.clip(g - np.sum(t >= np.asarray(high_k, dtype=float)[..., None], axis=-1), 0, g - 1)
    return np.clip(i0, 0, g - int(size)), i1 - i0 + 1


def interpolate_pressure(mass_low_kg, mass_high_kg, pressure_low_pa, pressure_high_pa, pressure_pa):
    """Linear interpolation of grid masses between two station-pressure layers.

    Parameters
    ----------
    mass_low_kg, mass_high_kg : array_like
        Masses at the lower and the higher pressure, broadcastable; NaN where no takeoff. [kg]
    pressure_low_pa, pressure_high_pa : array_like
        The two layer pressures (equal: no pressure spread, the lower layer is used). [Pa]
    pressure_pa : array_like
        Station pressure of the month. [Pa]

    Returns
    -------
    numpy.ndarray
        m = m_lo + s (m_hi − m_lo), s = (p − p_lo)/(p_hi − p_lo) in [0, 1]; NaN when the
        layer used is NaN. [kg]

    Notes
    -----
    Within one airfield the monthly station pressure varies by about 1 % (QNH); the mass is
    smooth in pressure there, so two layers and linear interpolation suffice.

    References
    ----------
    .. [1] Press et al. (2007), §3.1 (linear interpolation).
    """
    lo = np.asarray(mass_low_kg, dtype=float)
    hi = np.asarray(mass_high_kg, dtype=float)
    p_lo = np.asarray(pressure_low_pa, dtype=float)
    span = np.asarray(pressure_high_pa, dtype=float) - p_lo
    s = np.where(span > 0, (np.asarray(pressure_pa, dtype=float) - p_lo) / np.where(span > 0, span, 1.0), 0.0)
    s = np.clip(s, 0.0, 1.0)
    return np.where(s > 0, lo + s * (hi - lo), lo)


def fill_no_takeoff_nodes(nodes, mass_kg, floor_kg, *, reverse=False):
    """Give the first no-takeoff node after a possible one a mass just below the floor.

    Parameters
    ----------
    nodes : array_like
        Increasing nodes along the last axis, ``(..., G)`` (temperature [K] or factored
        headwind [m/s]).
    mass_kg : array_like
        Masses at the nodes, ``(..., G)``; NaN where no takeoff is possible at the floor. [kg]
    floor_kg : array_like
        Lowest mass solved for (OEW), ``(...)``. [kg]
    reverse : bool, optional
        False: no-takeoff nodes follow the possible ones (hot end of a temperature row);
        True: they precede them (tailwind end of a headwind row). [–]

    Returns
    -------
    numpy.ndarray
        Masses with that node set to min(linear extrapolation of the two possible nodes
        before it, floor − 1 kg); nodes further on stay NaN. [kg]

    Notes
    -----
    The mass falls monotonically towards the no-takeoff side, so between the last possible
    node and the first no-takeoff node it crosses the floor once. With NaN at that node the
    whole cell would count as not possible; the extrapolated value below the floor puts the
    crossing near where the trend of the last possible cell puts it, and a day beyond the
    crossing (mass below the floor) still counts as not possible.

    References
    ----------
    .. [1] Press et al. (2007), §3.0–3.1 (extrapolation from a table, its risks).
    """
    x = np.asarray(nodes, dtype=float)
    f = np.array(mass_kg, dtype=float)
    if reverse:
        x, f = -x[..., ::-1], f[..., ::-1]
    floor = np.asarray(floor_kg, dtype=float)[..., None] + np.zeros(f.shape[:-1] + (1,))
    g = f.shape[-1]
    out = f.copy()
    for k in range(1, g):  # a fixed, small number of nodes
        prev = f[..., k - 1]
        before = f[..., k - 2] if k >= 2 else np.full_like(prev, np.nan)
        dx0 = x[..., k - 1] - (x[..., k - 2] if k >= 2 else x[..., k - 1])
        slope = np.where(np.isfinite(before) & (dx0 > 0), (prev - before) / np.where(dx0 > 0, dx0, 1.0), 0.0)
        guess = prev + np.minimum(slope, 0.0) * (x[..., k] - x[..., k - 1])
        first = np.isnan(f[..., k]) & np.isfinite(prev)
        out[..., k] = np.where(first, np.minimum(guess, floor[..., 0] - 1.0), out[..., k])
    return out[..., ::-1] if reverse else out


# ----------------------------------------------------------------------------------------
# Reliability levels
# ----------------------------------------------------------------------------------------
_NOT_POSSIBLE_KG = -1.0e12  # finite stand-in for "not possible" inside the inversion
_TIE_KG = 0.05  # masses equal within this count as achieved (float32 inside the search)
_INV_SQRT_2PI = 1.0 / math.sqrt(2.0 * math.pi)
_FAR_SCORE = 6.0  # |z| beyond this is taken as infinite (Phi within 1e-9 of 0 or 1)
_BINDING_SCORE = 3.5  # a binding day further out than this is not "typical"


def _segments(f, scores):
    """Precompute the inversion of node masses f (..., G), non-increasing, -inf allowed.

    Single precision: masses to ~0.05 kg and scores to ~1e-6 are plenty here, and the
    search is bound by memory traffic.
    """
    f = np.where(np.isfinite(f), f, _NOT_POSSIBLE_KG).astype(np.float32)
    z = np.asarray(scores, dtype=np.float32)
    d = f[..., :-1] - f[..., 1:]  # drop over each segment, ≥ 0
    inv = np.where(d > 0.0, 1.0 / np.where(d > 0.0, d, 1.0), 1.0e9).astype(np.float32)
    return f, z, inv


def _crossing_score(seg, mass, slope=False):
    """z*(M) = sup{z : m(z) ≥ M} for the piecewise-linear m of _segments (mass broadcast).

    z* = z_0 + Σ_g Δz_g c_g with c_g = (f_g − M)/(f_g − f_{g+1}) clipped to [0, 1], except
    that the first segment is not clipped below and the last not above: the end segments
    extend linearly beyond the nodes (a flat end segment extends to ±inf in effect).
    With ``slope``, also dz*/dM = −Σ Δz_g/(f_g − f_{g+1}) over the segments not clipped.
    """
    f, z, inv = seg
    m = (np.asarray(mass, dtype=float) - _TIE_KG).astype(np.float32)
    g = f.shape[-1]
    if g == 1:
        out = np.where(f[..., 0] >= m, np.inf, -np.inf)
        return (out, np.zeros(out.shape, dtype=np.float32)) if slope else out
    dz = np.diff(z, axis=-1)
    shape = np.broadcast_shapes(f.shape[:-1], np.shape(m), z.shape[:-1])
    out = np.broadcast_to(z[..., 0], shape).copy()
    d_out = np.zeros(shape, dtype=np.float32) if slope else None
    for k in range(g - 1):  # a fixed, small number of temperature segments
        c = (f[..., k] - m) * inv[..., k]
        lo = -np.inf if k == 0 else 0.0
        hi = np.inf if k == g - 2 else 1.0
        out = out + dz[..., k] * np.clip(c, lo, hi)
        if slope:
            d_out = d_out - np.where((c > lo) & (c < hi), dz[..., k] * inv[..., k], 0.0)
    # Beyond ±_FAR_SCORE the extension is flat in effect (Phi is 0 or 1 to 1e-300).
    out = np.where(out > _FAR_SCORE, np.inf, np.where(out < -_FAR_SCORE, -np.inf, out))
    return (out, d_out) if slope else out


def flown_direction(point_mass_kg, crosswind_exceeded=None, tailwind_exceeded=None,
                    direction_valid=None):
    """Runway direction each day is flown on (the best usable one), and why a wind is lost.

    Parameters
    ----------
    point_mass_kg : array_like
        Mass of each wind point on each direction at each temperature node, ignoring the
        wind limits, shape ``(N, D, J, G)``; NaN where no takeoff is possible. [kg]
    crosswind_exceeded, tailwind_exceeded : array_like of bool, optional
        ``(N, D, J)`` flags from :func:`runway_usability`. Default: nothing exceeded. [–]
    direction_valid : array_like of bool, optional
        ``(N, D)``; False marks padding directions. Default all valid. [–]

    Returns
    -------
    direction : numpy.ndarray of int
        Direction index flown at each wind point and temperature node, ``(N, J, G)`` (a
        usable direction; the best candidate when none is usable). [–]
    mass_kg : numpy.ndarray
        Highest mass over the usable directions at each node, ``(N, J, G)``; -inf where the
        point is usable on no direction, NaN where no takeoff on any usable direction. [kg]
    lost_reason : numpy.ndarray of int
        ``physics.limits`` code ``crosswind_limit`` or ``tailwind_limit`` for a point usable
        on no direction, else -1; ``(N, J)``. [–]

    Notes
    -----
    Each day (wind point and temperature) is flown on the usable direction with the highest
    mass that day: m_j(T) = max_{d usable} m_{d,j}(T), taken at the temperature nodes and
    interpolated linearly between them (:func:`reliability_masses`). Where two directions
    cross in mass between two nodes, the interpolated envelope lies above the true one by
    at most the interpolation error of that kink (the refinement with direct solves,
    :func:`refinement_samples`, sees it as a surface error). The direction of a day
    between nodes is the best one at its own temperature (:func:`direction_at_score`). A
    point usable nowhere is lost; its reason is the limit that excludes the best candidate
    (the direction with the highest mass summed over the nodes, limits ignored), crosswind
    when that direction exceeds both.

    References
    ----------
    .. [2] ICAO Annex 14, Vol. I, §3.1.1 and Attachment A §1 (usability of a runway system).
    """
    raw = np.asarray(point_mass_kg, dtype=float)
    shape3 = raw.shape[:3]
    cross_ex = (np.zeros(shape3, dtype=bool) if crosswind_exceeded is None
                else np.broadcast_to(np.asarray(crosswind_exceeded, dtype=bool), shape3))
    tail_ex = (np.zeros(shape3, dtype=bool) if tailwind_exceeded is None
               else np.broadcast_to(np.asarray(tailwind_exceeded, dtype=bool), shape3))
    valid = (np.ones(raw.shape[:2], dtype=bool) if direction_valid is None
             else np.asarray(direction_valid, dtype=bool))[:, :, None]
    usable = valid & ~cross_ex & ~tail_ex  # (N, D, J)
    any_usable = np.any(usable, axis=1)  # (N, J)
    # The best usable direction and its mass, first on ties: a pass over the few
    # directions (elementwise over the rest; numpy's argmax over a middle axis copies).
    top = np.where(usable[:, 0, :, None] & ~np.isnan(raw[:, 0]), raw[:, 0], -np.inf)  # (N, J, G)
    best = np.zeros(top.shape, dtype=np.int64)
    for d in range(1, raw.shape[1]):  # a handful of runway directions, not a loop over cases
        cand_d = np.where(usable[:, d, :, None] & ~np.isnan(raw[:, d]), raw[:, d], -np.inf)
        better = cand_d > top
        best[better] = d
        top = np.where(better, cand_d, top)
    merit_all = np.where(valid, np.sum(np.where(np.isnan(raw), 0.0, raw), axis=-1), -np.inf)
    cand = np.argmax(merit_all, axis=1)  # (N, J)
    direction = np.where(any_usable[..., None] & np.isfinite(top), best,
                         np.where(any_usable, np.argmax(usable, axis=1), cand)[..., None])
    mass = np.where(any_usable[..., None], np.where(np.isfinite(top), top, np.nan), -np.inf)
    c_ex = np.take_along_axis(cross_ex, cand[:, None, :], axis=1)[:, 0]
    reason = np.where(any_usable, -1, np.where(c_ex, limits.code("crosswind_limit"),
                                                limits.code("tailwind_limit")))
    return direction, mass, reason.astype(np.int64)


def mass_at_score(node_mass_kg, scores, score):
    """Mass at a temperature score from the masses at the temperature nodes.

    Parameters
    ----------
    node_mass_kg : array_like
        Masses at the nodes, ``(..., G)``; NaN or -inf where not possible. [kg]
    scores : array_like
        Increasing node scores, ``(..., G)`` or ``(G,)``. [–]
    score : array_like
        Score of the day, ``(...)``. [–]

    Returns
    -------
    numpy.ndarray
        m(z), linear between the nodes and extended linearly beyond the end nodes (the
        rule of :func:`share_of_days`); NaN when a neighbouring node is not possible. [kg]

    Notes
    -----
    m(z) = (1 − s) m_g + s m_{g+1}, s = (z − z_g)/(z_{g+1} − z_g), g the segment of z (the
    first or last segment beyond the ends).

    References
    ----------
    .. [1] Press et al. (2007), §3.1 (linear interpolation).
    """
    f = np.asarray(node_mass_kg, dtype=float)
    z = np.broadcast_to(np.asarray(scores, dtype=float), f.shape)
    x = np.asarray(score, dtype=float)
    g = f.shape[-1]
    if g == 1:
        return f[..., 0] + 0.0 * x
    k = np.clip(np.sum(z[..., 1:-1] <= x[..., None], axis=-1), 0, g - 2)[..., None]
    z0 = np.take_along_axis(z, k, axis=-1)[..., 0]
    z1 = np.take_along_axis(z, k + 1, axis=-1)[..., 0]
    f0 = np.take_along_axis(f, k, axis=-1)[..., 0]
    f1 = np.take_along_axis(f, k + 1, axis=-1)[..., 0]
    with np.errstate(invalid="ignore"):
        s = (x - z0) / np.where(z1 > z0, z1 - z0, np.inf)
        out = f0 + s * (f1 - f0)
    return np.where(np.isfinite(f0) & np.isfinite(f1), out, np.nan)


def direction_at_score(point_mass_kg, usable, scores, score, margin=0.0):
    """Best usable runway direction of a day between the temperature nodes, and the
    directions within a margin of it.

    Parameters
    ----------
    point_mass_kg : array_like
        Mass of the day's wind point on each direction at the nodes, ``(R, D, G)``; NaN
        where no takeoff. [kg]
    usable : array_like of bool
        ``(R, D)``: directions usable for that wind. [–]
    scores : array_like
        Node scores, ``(G,)`` or ``(R, G)``. [–]
    score : array_like
        Score of each day, ``(R,)``. [–]
    margin : float, optional
        Relative margin: directions whose mass is at least (1 − margin) × the best one's
        are candidates too (their interpolated masses may be off by about that much). [–]

    Returns
    -------
    best : numpy.ndarray of int
        Index of the usable direction with the highest interpolated mass at the day's
        score (the first usable one when none is possible), ``(R,)``. [–]
    candidates : numpy.ndarray of bool
        ``(R, D)``: usable directions strictly within the margin of the best, and the best
        (only the best with margin 0). [–]

    Notes
    -----
    argmax_{d usable} m_d(z) with m_d of :func:`mass_at_score`: the per-day choice of
    :func:`flown_direction` between the nodes.

    References
    ----------
    .. [2] ICAO Annex 14, Vol. I, §3.1.1 (usability of a runway system).
    """
    f = np.asarray(point_mass_kg, dtype=float)
    z = np.asarray(scores, dtype=float)
    zz = z[:, None, :] if z.ndim == 2 else z
    m = mass_at_score(f, zz, np.asarray(score, dtype=float)[:, None])
    u = np.asarray(usable, dtype=bool)
    cand = np.where(u & np.isfinite(m), m, -np.inf)
    top = np.max(cand, axis=1)
    best = np.where(np.isfinite(top), np.argmax(cand, axis=1), np.argmax(u, axis=1))
    within = np.isfinite(cand) & (cand > (1.0 - float(margin)) * top[:, None]) & (float(margin) > 0)
    within[np.arange(best.size), best] = True
    return best, within


@dataclass(frozen=True)
class ReliabilityLevels:
    """Reliability levels of groups (airfield × month × type).

    Attributes
    ----------
    mass_kg : numpy.ndarray
        Mass achievable on at least p of days, ``(N, L)``; NaN when not possible. [kg]
    reason : numpy.ndarray of int
        ``physics.limits`` code where not possible (crosswind_limit, tailwind_limit or
        no_takeoff: the largest share of days lost), else -1; ``(N, L)``. [–]
    point : numpy.ndarray of int
        Binding wind point j of each level (the most typical day with exactly that mass),
        ``(N, L)``. [–]
    score : numpy.ndarray
        Standard-normal temperature score of the binding day, ``(N, L)``. [–]
    share_days : numpy.ndarray
        Share of days on which the target mass is achievable, ``(N,)``. [–]
    possible_share : numpy.ndarray
        Share of days on which a takeoff (≥ OEW) is possible, ``(N,)``. [–]
    estimate_kg : numpy.ndarray, optional
        Second-order estimate of the exact level (the false-position point of the search's
        final bracket; the level itself where there was no search), ``(N, L)``. [kg]
    """

    mass_kg: np.ndarray
    reason: np.ndarray
    point: np.ndarray
    score: np.ndarray
    share_days: np.ndarray
    possible_share: np.ndarray
    estimate_kg: np.ndarray | None = None


def _prepare(point_mass_kg):
    f = np.asarray(point_mass_kg, dtype=float)
    f = np.where(np.isnan(f), -np.inf, f)
    return np.minimum.accumulate(f, axis=-1)


def _single_point_level(f, scores, weight, p):
    """First estimate of each level: Σ_j w_j m_j(Φ⁻¹(p)) / Σ_j w_j over the possible points.

    f (n, J, G) float32 node masses (not possible: _NOT_POSSIBLE_KG), scores (G,) or (n, G),
    weight (n, J), p (n,). Exact where the wind is one point; NaN where no point is possible.
    """
    z = np.broadcast_to(np.asarray(scores, dtype=float), (f.shape[0], f.shape[-1]))
    zq = special.ndtri(np.clip(np.asarray(p, dtype=float), 1e-9, 1.0 - 1e-9))
    k = np.clip(np.sum(z <= zq[:, None], axis=1) - 1, 0, z.shape[1] - 2)  # segment (n,)
    z0 = np.take_along_axis(z, k[:, None], 1)[:, 0]
    z1 = np.take_along_axis(z, k[:, None] + 1, 1)[:, 0]
    s = (zq - z0) / (z1 - z0)  # beyond the end nodes: linear extension
    f0 = np.take_along_axis(f, k[:, None, None], 2)[..., 0].astype(float)
    f1 = np.take_along_axis(f, k[:, None, None] + 1, 2)[..., 0].astype(float)
    m = f0 + s[:, None] * (f1 - f0)
    possible = (f0 > 0.5 * _NOT_POSSIBLE_KG) & (f1 > 0.5 * _NOT_POSSIBLE_KG)
    w = np.where(possible, weight, 0.0)
    total = w.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(total > 0, (w * np.where(possible, m, 0.0)).sum(axis=1) / total, np.nan)


def _share(f, scores, weight, m):
    """S(m) for f (N, J, G) (or its _segments) and m (N,) or (N, L); also z*_j,
    shape m.shape + (J,)."""
    f, z, inv = f if isinstance(f, tuple) else _segments(f, scores)
    # A levels axis after the groups; per-group scores (N, G) line up with (N, L, J, G).
    seg = (f[:, None], z if z.ndim == 1 else z[:, None, None, :], inv[:, None])
    m = np.asarray(m, dtype=float)
    zj = _crossing_score(seg, m.reshape(m.shape[0], math.prod(m.shape[1:]))[:, :, None])
    s = np.sum(weight[:, None, :] * special.ndtr(zj), axis=-1, dtype=float)
    if m.ndim == 1:
        return s[:, 0], zj[:, 0]
    return s, zj


def share_of_days(mass_kg, point_mass_kg, scores, weight):
    """Share of days on which a mass is achievable, S(M).

    Parameters
    ----------
    mass_kg : array_like
        Mass asked for, ``(N,)`` or ``(N, L)``. [kg]
    point_mass_kg : array_like
        Mass of each wind point on its flown direction at each temperature node,
        ``(N, J, G)``; -inf or NaN where not possible. [kg]
    scores : array_like
        Standard-normal scores of the temperature nodes, increasing, ``(G,)`` or per
        group ``(N, G)``. [–]
    weight : array_like
        Share of days of each wind point, ``(N, J)``. [–]

    Returns
    -------
    numpy.ndarray
        S(M), shape of ``mass_kg``. [–]

    Notes
    -----
    With temperature and wind independent and the mass non-increasing in temperature,
    S(M) = Σ_j w_j Phi(z*_j(M)), z*_j(M) = sup{z : m_j(z) ≥ M}: on wind point j a day
    achieves M if and only if its temperature score is at most z*_j. m_j(z) is linear
    between the temperature nodes (a running minimum over the nodes makes it
    non-increasing, which can only lower it), extended linearly beyond the end nodes, and
    not possible beyond a no-takeoff node. With zero temperature spread every node holds
    the same temperature, m_j is constant and S is a weighted count (Phi(±inf) = 1, 0).

    References
    ----------
    .. [4] Wilks (2011), §4.4.2; total probability over independent variables.
    """
    m = np.asarray(mass_kg, dtype=float)
    return _share(_prepare(point_mass_kg), np.asarray(scores, dtype=float),
                  np.asarray(weight, dtype=float), m)[0]


def reliability_masses(point_mass_kg, scores, weight, oew_kg, mtow_kg, *,
                       levels=DEFAULT_LEVELS, target_mass_kg=None, lost_reason=None,
                       tol_kg=1.0):
    """Mass achievable on at least p of days, for each group and level.

    Parameters
    ----------
    point_mass_kg : array_like
        Mass of each wind point on its flown direction at each temperature node,
        ``(N, J, G)`` (from :func:`flown_direction`), **not** capped at MTOW; -inf where the
        wind point is usable nowhere, NaN where no takeoff is possible. [kg]
    scores : array_like
        Standard-normal scores of the temperature nodes, increasing, ``(G,)`` or per
        group ``(N, G)`` (e.g. with a node moved onto a thrust flat-rating corner). [–]
    weight : array_like
        Share of days of each wind point, ``(N, J)``, summing to 1 per group. [–]
    oew_kg, mtow_kg : array_like
        Operating empty mass and maximum takeoff mass, ``(N,)``. Below OEW is no takeoff. [kg]
    levels : sequence of float, optional
        Reliability levels p (share of days), each in (0, 1]. [–]
    target_mass_kg : array_like, optional
        Mass whose share of days is reported, ``(N,)``; default MTOW. [kg]
    lost_reason : array_like of int, optional
        ``(N, J)`` codes of points usable nowhere (from :func:`flown_direction`). [–]
    tol_kg : float, optional
        Tolerance on the level mass. [kg]

    Returns
    -------
    ReliabilityLevels
        Masses, reasons, binding day and shares.

    Notes
    -----
    S(M) is the share of days with mass M achievable (:func:`share_of_days`). The level-p
    mass is M_p = max{M ∈ [OEW, MTOW] : S(M) ≥ p}; ties count as achieved (S is compared
    with p − 1e-9 to absorb rounding). It is MTOW if S(MTOW) ≥ p, not possible if
    S(OEW) < p, and otherwise found on the bracket [OEW, MTOW] until it is narrower than
    ``tol_kg``: first trial the weighted mean of the wind points' masses at the score
    Φ⁻¹(p), then Newton steps (dS/dM from the crossing scores' slopes) where they land
    inside the bracket, false position with the Illinois modification [5] otherwise, and a
    bisection where the bracket has not halved in two steps; only the (group, level) pairs
    still open are evaluated.
    Equivalently M_p is the lower (1 − p) quantile of the day-to-day mass, days that are
    not possible counting as mass 0.

    When a level is not possible its reason is whichever of crosswind limit, tailwind
    limit (wind points usable nowhere) or no takeoff (too hot) loses the largest share of
    days.

    The binding day of a level is the wind point j whose temperature score z*_j(M_p) lies
    within ±3.5 and has the highest density w_j phi(z*_j): the most typical day on which
    the mass is exactly M_p (for a level at MTOW: a typical day on which MTOW is just
    achievable). Without such a point (zero temperature spread, flat masses, or
    a level set by a step in the wind share) it is the point with the smallest mass ≥ M_p
    at the node nearest the median, on a median day. Beyond ±6 the linear extension of the
    temperature nodes is taken as infinite (Phi within 1e-9 of 0 or 1).

    References
    ----------
    .. [2] ICAO Annex 14, Vol. I, §3.1.1 (usability over the days of the record).
    .. [4] Wilks (2011), §3.1 (quantiles), §4.4.2.
    .. [5] M. Dowell and P. Jarratt, "A modified regula falsi method for computing the
       root of an equation", *BIT* 11 (1971) 168–174 (the Illinois method).
    """
    f = _prepare(point_mass_kg)
    z = np.asarray(scores, dtype=float)
    w = np.asarray(weight, dtype=float)
    oew = np.asarray(oew_kg, dtype=float)
    mtow = np.asarray(mtow_kg, dtype=float)
    p = np.asarray(levels, dtype=float)
    n_groups, n_pts, _ = f.shape
    eps = 1e-9

    seg = _segments(f, z)
    s_mtow = _share(seg, z, w, mtow)[0]
    s_oew, zj_oew = _share(seg, z, w, oew)
    share_target = s_mtow if target_mass_kg is None else _share(
        seg, z, w, np.asarray(target_mass_kg, dtype=float))[0]
    at_top = s_mtow[:, None] >= p[None, :] - eps
    search = (s_oew[:, None] >= p[None, :] - eps) & ~at_top
    # Each (group, level) pair still searching is iterated on its own, on the bracket
    # [OEW, MTOW] (S(lo) ≥ p > S(hi)). The first trial is the weighted mean over the wind
    # points of their mass at the score Φ⁻¹(p) (the level itself were the wind one point);
    # then Newton from the last trial (S and dS/dM = Σ w φ(z*) dz*/dM come with each
    # evaluation) where it lands inside the bracket, else false position with the Illinois
    # halving of a retained end; a bisection where the bracket has not halved over the last
    # two steps (so it at least halves every third step). Once the estimate is within tol/2
    # of lo, a step to lo + tol certifies it (S(lo + tol) < p closes the bracket, also where
    # S is a step); within tol/2 of hi, a step to hi − tol does the same from above.
    lo = np.repeat(oew[:, None], p.size, axis=1)
    polished = lo.copy()
    g_idx, l_idx = np.nonzero(search)
    if g_idx.size:
        f_s, z_s, inv_s = seg
        z_p = z if z.ndim == 1 else z_s[g_idx]
        f_p, inv_p, w_p = f_s[g_idx], inv_s[g_idx], w[g_idx]
        pp = p[l_idx]
        lo_p = oew[g_idx].copy()
        hi_p = mtow[g_idx].copy()
        s_lo = s_oew[g_idx] - pp
        s_hi = s_mtow[g_idx] - pp
        side = np.zeros(g_idx.size, dtype=np.int8)  # end retained last step: +1 lo, -1 hi
        width_2 = np.full(g_idx.size, np.inf)  # bracket width one and two steps ago
        width_1 = np.full(g_idx.size, np.inf)
        newton = _single_point_level(f_p, z_p, w_p, pp)  # estimate for the next trial
        span = float(np.max(hi_p - lo_p))
        max_steps = 3 * int(np.ceil(np.log2(max(span, tol_kg) / tol_kg))) + 3
        act = np.arange(g_idx.size)
        for step in range(max_steps):
            act = act[hi_p[act] - lo_p[act] > tol_kg]
            if act.size == 0:
                break
            lo_a, hi_a, sl, sh = lo_p[act], hi_p[act], s_lo[act], s_hi[act]
            width = hi_a - lo_a
            drop = sl - sh
            t = sl / np.where(drop > 0, drop, 1.0)
            est = lo_a + np.clip(t, 0.01, 0.99) * width
            xn = newton[act]
            use_n = (xn > lo_a) & (xn < hi_a)
            est = np.where(use_n, xn, est)
            bisect = width > 0.5 * width_2[act]
            width_2[act], width_1[act] = width_1[act], width
            x = np.where(bisect, 0.5 * (lo_a + hi_a), est)
            near_lo = np.where(use_n, xn - lo_a, t * width) <= 0.5 * tol_kg
            near_hi = use_n & (hi_a - xn <= 0.5 * tol_kg) & ~near_lo
            x = np.where(near_lo, lo_a + tol_kg, np.where(near_hi, hi_a - tol_kg, x))
            x = np.minimum(x, hi_a)
            zz = z_p if z_p.ndim == 1 else z_p[act][:, None, :]
            zj, dzj = _crossing_score((f_p[act], zz, inv_p[act]), x[:, None], slope=True)
            s_x = np.sum(w_p[act] * special.ndtr(zj), axis=-1, dtype=float) - pp[act]
            with np.errstate(invalid="ignore", over="ignore"):
                fin = np.isfinite(zj)
                phi = np.where(fin, np.exp(-0.5 * np.where(fin, zj, 0.0) ** 2), 0.0)
                ds = np.sum(w_p[act] * phi * dzj, axis=-1, dtype=float) * _INV_SQRT_2PI
            with np.errstate(divide="ignore", invalid="ignore"):
                newton[act] = np.where(ds < 0.0, x - s_x / np.where(ds < 0.0, ds, -1.0), np.nan)
            ok = s_x >= -eps
            # Illinois: halve the function value at an end retained twice in a row.
            sd = side[act]
            new_sl = np.where(ok, s_x, np.where(sd == 1, 0.5 * sl, sl))
            new_sh = np.where(ok, np.where(sd == -1, 0.5 * sh, sh), s_x)
            lo_p[act] = np.where(ok, x, lo_a)
            hi_p[act] = np.where(ok, hi_a, x)
            s_lo[act], s_hi[act] = new_sl, new_sh
            side[act] = np.where(ok, -1, 1)
        lo[g_idx, l_idx] = lo_p
        # For the binding day only: the false-position point of the final bracket, a
        # second-order estimate of the exact level (the level itself stays lo, certified).
        t = s_lo / np.where(s_lo - s_hi > 0, s_lo - s_hi, np.inf)
        polished[g_idx, l_idx] = lo_p + np.clip(t, 0.0, 1.0) * (hi_p - lo_p)
    level = np.where(at_top, mtow[:, None], np.where(search, lo, np.nan))
    mass = level

    # Binding day at each level mass.
    m_eval = np.where(search, polished, np.where(np.isfinite(level), level, oew[:, None]))
    zj = _share(f, z, w, m_eval)[1]  # (N, L, J)
    finite = np.isfinite(zj) & (np.abs(zj) <= _BINDING_SCORE) & (w[:, None, :] > 0)
    dens = np.where(finite, w[:, None, :] * np.exp(-0.5 * np.where(finite, zj, 0.0) ** 2), -1.0)
    z_grp = np.broadcast_to(z, (n_groups, z.shape[-1]))
    mid_node = np.argmin(np.abs(z_grp), axis=-1)  # node nearest the median, per group
    f_mid = np.take_along_axis(f, mid_node[:, None, None], axis=-1)[:, None, :, 0]
    slack = np.where((f_mid >= m_eval[..., None] - tol_kg) & (w[:, None, :] > 0),
                     f_mid - m_eval[..., None], np.inf)
    has_dens = np.max(dens, axis=-1) > 0.0
    point = np.where(has_dens, np.argmax(dens, axis=-1), np.argmin(slack, axis=-1))
    zb = np.take_along_axis(zj, point[..., None], axis=-1)[..., 0]
    score = np.where(has_dens & np.isfinite(zb), zb, z_grp[np.arange(n_groups), mid_node][:, None])

    # Why days are lost, for levels that are not possible.
    lost = np.full((n_groups, n_pts), -1) if lost_reason is None else np.asarray(lost_reason)
    cross_share = np.sum(w * (lost == limits.code("crosswind_limit")), axis=-1)
    tail_share = np.sum(w * (lost == limits.code("tailwind_limit")), axis=-1)
    temp_share = np.sum(w * (lost < 0) * (1.0 - normal_probability(zj_oew)), axis=-1)
    codes = np.array([limits.code("crosswind_limit"), limits.code("tailwind_limit"),
                      limits.code("no_takeoff")])
    reason = codes[np.argmax(np.stack([cross_share, tail_share, temp_share], axis=-1), axis=-1)]
    reason_l = np.where(np.isnan(mass), reason[:, None], -1).astype(np.int64)
    return ReliabilityLevels(mass_kg=mass, reason=reason_l, point=point, score=score,
                             share_days=share_target, possible_share=s_oew,
                             estimate_kg=np.where(search, polished, level))


# ----------------------------------------------------------------------------------------
# Refinement of the levels with direct solves
# ----------------------------------------------------------------------------------------
_FLAT_RATE = 1.0  # |dz*/dM| above this (a slope under 1 kg per unit score) counts as flat


def _crossing_score_rate(seg, mass):
    """z*(M) as :func:`_crossing_score`, and |dz*/dM| there (0 beyond ±_FAR_SCORE).

    dz*/dM = −Σ_g Δz_g / (f_g − f_{g+1}) over the segment whose c_g is strictly inside its
    clip range (the one holding z*; the end segments unbounded outwards).
    """
    f, z, inv = seg
    m = (np.asarray(mass, dtype=float) - _TIE_KG).astype(np.float32)
    g = f.shape[-1]
    shape = np.broadcast_shapes(f.shape[:-1], np.shape(m), z.shape[:-1])
    if g == 1:
        return np.where(f[..., 0] >= m, np.inf, -np.inf), np.zeros(shape, dtype=np.float32)
    dz = np.diff(z, axis=-1)
    out = np.broadcast_to(z[..., 0], shape).copy()
    rate = np.zeros(shape, dtype=np.float32)
    for k in range(g - 1):  # a fixed, small number of temperature segments
        c = (f[..., k] - m) * inv[..., k]
        lo = -np.inf if k == 0 else 0.0
        hi = np.inf if k == g - 2 else 1.0
        out = out + dz[..., k] * np.clip(c, lo, hi)
        rate = rate + np.where((c > lo) & (c < hi), dz[..., k] * inv[..., k], 0.0)
    far = np.abs(out) > _FAR_SCORE
    out = np.where(out > _FAR_SCORE, np.inf, np.where(out < -_FAR_SCORE, -np.inf, out))
    return out, np.where(far, 0.0, rate)


def level_crossings(point_mass_kg, scores, weight, mass_kg):
    """Crossing day of each wind point at a mass, the slope there and its mass density.

    Parameters
    ----------
    point_mass_kg : array_like
        Mass of each wind point on its flown direction at each temperature node, ``(N, J,
        G)`` as for :func:`reliability_masses`; -inf or NaN where not possible. [kg]
    scores : array_like
        Standard-normal scores of the temperature nodes, increasing, ``(G,)`` or ``(N, G)``. [–]
    weight : array_like
        Share of days of each wind point, ``(N, J)``. [–]
    mass_kg : array_like
        Mass asked for, ``(N,)`` (e.g. a level mass or MTOW). [kg]

    Returns
    -------
    score : numpy.ndarray
        z*_j(M) = sup{z : m_j(z) ≥ M} (as in :func:`share_of_days`), ``(N, J)``; ±inf
        where M is achieved on no day or on every day of that point. [–]
    slope_kg : numpy.ndarray
        dm_j/dz of the interpolated mass at z*_j (< 0; the segment of the nodes holding
        z*_j, an end segment beyond the end nodes), ``(N, J)``; NaN where the point
        has no density. [kg]
    density_per_kg : numpy.ndarray
        Contribution of the point to the density of the day-to-day mass at M,
        w_j phi(z*_j) / |dm_j/dz|, ``(N, J)``; 0 where z*_j is not finite, beyond ±3.5
        or on a flat segment (a point whose mass is constant in temperature adds a step to
        S(M), not a density). [1/kg]

    Notes
    -----
    With S(M) = Σ_j w_j Phi(z*_j(M)) (:func:`share_of_days`), the density of the mass
    achievable on a day is −dS/dM = Σ_j w_j phi(z*_j) |dz*_j/dM| with dz*_j/dM =
    1/m_j'(z*_j) (change of variables through the monotone m_j). An error ε_j of the
    interpolated m_j near z*_j moves z*_j by ε_j/|m_j'| and S(M) by density_j × ε_j to
    first order, which is what :func:`refined_level_masses` uses. Segments flatter than
    1 kg per unit score count as flat.

    References
    ----------
    .. [4] Wilks (2011), §4.4.2 (Gaussian density) and §4.2 (distributions of functions
       of a random variable) [from memory for the section numbers].
    """
    f = _prepare(point_mass_kg)
    z = np.asarray(scores, dtype=float)
    w = np.asarray(weight, dtype=float)
    m = np.asarray(mass_kg, dtype=float)
    seg = _segments(f, z)
    zs = seg[1]
    zj, rate = _crossing_score_rate((seg[0], zs if zs.ndim == 1 else zs[:, None, :], seg[2]),
                                    m[:, None])
    zj = zj.astype(float)
    rate = rate.astype(float)
    steep = (rate > 0.0) & (rate < _FLAT_RATE) & (np.abs(np.where(np.isfinite(zj), zj, np.inf))
                                                 <= _BINDING_SCORE) & (w > 0)
    zc = np.where(steep, zj, 0.0)
    density = np.where(steep, w * np.exp(-0.5 * zc**2) / np.sqrt(2.0 * np.pi) * rate, 0.0)
    slope = np.where(steep, -1.0 / np.where(steep, rate, 1.0), np.nan)
    return zj, slope, density


@dataclass(frozen=True)
class RefinementSamples:
    """Days chosen for direct solves, per row (group and mass; see :func:`refinement_samples`).

    Attributes
    ----------
    point : numpy.ndarray of int
        Wind point j of each sample, ``(N, K)``; -1 where the slot is empty. [–]
    score : numpy.ndarray
        Its crossing score z*_j(M) (the day to solve), ``(N, K)``; NaN in empty slots. [–]
    slope_kg : numpy.ndarray
        Slope dm_j/dz of the interpolated mass there, ``(N, K)``. [kg]
    stratum_density_per_kg : numpy.ndarray
        Share of the mass density at M the sample stands for, ``(N, K)``; 0 for an empty
        slot. [1/kg]
    density_per_kg : numpy.ndarray
        Total mass density at M over all points, ``(N,)``. [1/kg]
    risk_kg : numpy.ndarray
        Density-weighted mean error indicator of the points' cells at their crossings,
        ``(N,)`` (0 without indicators): the size of level error the surface risks. [kg]
    """

    point: np.ndarray
    score: np.ndarray
    slope_kg: np.ndarray
    stratum_density_per_kg: np.ndarray
    density_per_kg: np.ndarray
    risk_kg: np.ndarray


def refinement_samples(point_mass_kg, scores, weight, mass_kg, order_key, count, risk_kg=None):
    """The days to solve directly to correct a level mass: K days spread evenly over the
    density of the day-to-day mass along the level's contour.

    Parameters
    ----------
    point_mass_kg, scores, weight : array_like
        As for :func:`reliability_masses`: ``(N, J, G)`` [kg], ``(G,)`` or ``(N, G)`` [–],
        ``(N, J)`` [–].
    mass_kg : array_like
        Mass to correct, ``(N,)``. [kg]
    order_key : array_like
        Position of each wind point along the contour m = M, ``(N, J)`` or per
        temperature node ``(N, J, G)`` (then taken at the node nearest its crossing): e.g.
        flown direction × 1000 + factored headwind, so points next to each other in the
        order lie next to each other on the surface. [–]
    count : int
        Number of samples K (fewer where points repeat). [–]
    risk_kg : array_like, optional
        Interpolation-error indicator of each point's grid cell per temperature segment,
        ``(N, J, G − 1)`` (:func:`grid_error_indicator`), taken at the segment of its
        crossing; gives ``RefinementSamples.risk_kg``. [kg]

    Returns
    -------
    RefinementSamples
        Days, slopes and the density each day stands for.

    Notes
    -----
    The level mass moves, to first order, by the density-weighted mean of the surface
    errors at the crossing days of all wind points (:func:`refined_level_masses`). That
    mean is estimated by systematic sampling: with the points in contour order and C(j)
    their cumulative density, sample k is the point holding C = (k + ½)/K × f (f the total
    density), standing for f/K (a point picked by several k stands for their sum: one
    solve). A dominant point (often the calm) is then solved once and carries its own
    share; the others spread along the contour, so a smooth error is integrated by the
    midpoint rule over the density.

    References
    ----------
    .. [6] W. G. Cochran, *Sampling Techniques*, 3rd ed., Wiley, 1977, ch. 8 (systematic
       sampling) [from memory for the chapter].
    """
    zj, slope, dens = level_crossings(point_mass_kg, scores, weight, mass_kg)
    n_rows, n_pts = dens.shape
    key = np.asarray(order_key, dtype=float)
    if key.ndim == 3:
        z = np.broadcast_to(np.asarray(scores, dtype=float), (n_rows, key.shape[-1]))
        node = np.argmin(np.abs(z[:, None, :] - np.where(np.isfinite(zj), zj, 0.0)[..., None]),
                         axis=-1)
        key = np.take_along_axis(key, node[..., None], axis=-1)[..., 0]
    order = np.argsort(key, axis=1, kind="stable")
    cum = np.cumsum(np.take_along_axis(dens, order, axis=1), axis=1)  # (N, J)
    total = cum[:, -1] if n_pts else np.zeros(n_rows)
    k = max(1, int(count))
    target = (np.arange(k) + 0.5)[None, :] / k * total[:, None]  # (N, K)
    pos = np.minimum(np.sum(cum[:, None, :] < target[..., None], axis=-1), n_pts - 1)
    best = np.take_along_axis(order, pos, axis=1)  # (N, K), non-decreasing positions
    share = np.repeat(np.where(total > 0, total / k, 0.0)[:, None], k, axis=1)
    for i in range(k - 1, 0, -1):  # merge repeats into the first slot (a fixed, small K)
        same = pos[:, i] == pos[:, i - 1]
        share[:, i - 1] += np.where(same, share[:, i], 0.0)
        share[:, i] = np.where(same, 0.0, share[:, i])
    filled = share > 0
    take = lambda a: np.take_along_axis(a, best, axis=-1)  # noqa: E731
    risk = np.zeros(n_rows)
    if risk_kg is not None:
        u = np.asarray(risk_kg, dtype=float)
        n_seg = u.shape[-1]
        z = np.broadcast_to(np.asarray(scores, dtype=float), (n_rows, n_seg + 1))
        seg = np.clip(np.sum(z[:, None, 1:-1] <= np.where(np.isfinite(zj), zj, 0.0)[..., None],
                             axis=-1), 0, n_seg - 1)
        u_pt = np.take_along_axis(u, seg[..., None], axis=-1)[..., 0]
        with np.errstate(invalid="ignore"):
            risk = np.where(total > 0, np.sum(np.where(dens > 0, dens * u_pt, 0.0), axis=-1)
                            / np.where(total > 0, total, 1.0), 0.0)
    return RefinementSamples(point=np.where(filled, best, -1),
                             score=np.where(filled, take(zj), np.nan),
                             slope_kg=np.where(filled, take(slope), np.nan),
                             stratum_density_per_kg=share, density_per_kg=total, risk_kg=risk)


def refined_level_masses(mass_kg, excess_share, density_per_kg, stratum_density_per_kg,
                         error_kg, low_kg, high_kg):
    """Level masses corrected by the errors of the interpolated surface at sampled days.

    Parameters
    ----------
    mass_kg : array_like
        Level masses from the interpolated surface, ``(N,)``. [kg]
    excess_share : array_like
        S(M) − p of the surface at those masses, ``(N,)`` (0 for a level found by the
        search, ≥ 0 for a level capped at MTOW). [–]
    density_per_kg : array_like
        Total mass density at M, ``(N,)`` (:class:`RefinementSamples`). [1/kg]
    stratum_density_per_kg : array_like
        Density of each sampled stratum, ``(N, K)``; 0 for empty slots. [1/kg]
    error_kg : array_like
        Direct-solve mass minus M at each sampled day, ``(N, K)`` (any value in empty
        slots). [kg]
    low_kg, high_kg : array_like
        Bounds of the level (OEW and MTOW), ``(N,)``. [kg]

    Returns
    -------
    mass_kg : numpy.ndarray
        M_c, ``(N,)``; M where the density is 0. [kg]
    share_change : numpy.ndarray
        First-order change of S(M) from the sampled errors, Σ_k D_k ε_k, ``(N,)`` (for
        M = MTOW: the correction of the share of days on which MTOW is achievable). [–]

    Notes
    -----
    One Newton step on S_true(M) = p with S_true(M) ≈ S(M) + Σ_k D_k ε_k and
    −dS/dM = f = Σ_j density_j (:func:`level_crossings`):
    M_c = clip(M + (S(M) − p + Σ_k D_k ε_k) / f, low, high). For a level capped at MTOW
    (excess ≥ 0) the level only moves when the errors outweigh the excess.

    References
    ----------
    .. [1] Press et al. (2007), §9.4 (Newton–Raphson step).
    .. [6] Cochran (1977), ch. 8 (systematic sample: estimate of the mean error).
    """
    m = np.asarray(mass_kg, dtype=float)
    d = np.asarray(stratum_density_per_kg, dtype=float)
    e = np.where(d > 0, np.asarray(error_kg, dtype=float), 0.0)
    change = np.sum(d * e, axis=-1)
    f = np.asarray(density_per_kg, dtype=float)
    step = (np.asarray(excess_share, dtype=float) + change) / np.where(f > 0, f, 1.0)
    lo = np.asarray(low_kg, dtype=float)
    hi = np.asarray(high_kg, dtype=float)
    return np.where((f > 0) & np.isfinite(m), np.clip(m + step, lo, hi), m), change


def binding_score(score, slope_kg, direct_mass_kg, target_mass_kg):
    """Temperature score on a wind point at which its direct mass meets a target.

    Parameters
    ----------
    score : array_like
        Score of a directly solved day on the point. [–]
    slope_kg : array_like
        dm/dz of the interpolated mass there (< 0). [kg]
    direct_mass_kg : array_like
        The direct solve's mass at ``score``. [kg]
    target_mass_kg : array_like
        Mass wanted (the corrected level). [kg]

    Returns
    -------
    numpy.ndarray
        z = score + (M − m_d)/slope, clipped to ±6; ``score`` where the slope is not
        negative or not finite. [–]

    Notes
    -----
    A Newton step on m(z) = M along the wind point, with the interpolated slope.

    References
    ----------
    .. [1] Press et al. (2007), §9.4 (Newton–Raphson step).
    """
    z = np.asarray(score, dtype=float)
    s = np.asarray(slope_kg, dtype=float)
    ok = np.isfinite(s) & (s < 0)
    with np.errstate(invalid="ignore"):
        step = (np.asarray(target_mass_kg, dtype=float) - np.asarray(direct_mass_kg, dtype=float)) \
            / np.where(ok, s, -1.0)
    return np.clip(np.where(ok & np.isfinite(step), z + step, z), -_FAR_SCORE, _FAR_SCORE)


def secant_score(score0, mass0_kg, score1, mass1_kg, target_mass_kg, slope_kg):
    """Secant step on a wind point's direct mass towards a target mass.

    Parameters
    ----------
    score0, score1 : array_like
        Scores of the two last solved days on the point. [–]
    mass0_kg, mass1_kg : array_like
        Their direct masses. [kg]
    target_mass_kg : array_like
        Mass wanted. [kg]
    slope_kg : array_like
        Fallback slope dm/dz (< 0) where the secant is not usable. [kg]

    Returns
    -------
    numpy.ndarray
        z = z1 + (M − m1)/s with s = (m1 − m0)/(z1 − z0) when that is negative and finite
        (the mass falls with temperature), else the fallback slope; clipped to ±6. [–]

    Notes
    -----
    The secant method on m(z) = M (superlinear convergence where m is smooth).

    References
    ----------
    .. [1] Press et al. (2007), §9.2 (secant method).
    """
    z0 = np.asarray(score0, dtype=float)
    z1 = np.asarray(score1, dtype=float)
    m0 = np.asarray(mass0_kg, dtype=float)
    m1 = np.asarray(mass1_kg, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        s = (m1 - m0) / (z1 - z0)
    s = np.where(np.isfinite(s) & (s < 0) & (np.abs(z1 - z0) > 1e-9), s,
                 np.asarray(slope_kg, dtype=float))
    return binding_score(z1, s, m1, target_mass_kg)


def share_equivalent_error(error_kg, score, slope_kg):
    """Mass error of a sampled day in terms of the share of days it moves (saturating).

    Parameters
    ----------
    error_kg : array_like
        Direct-solve mass minus the interpolated mass at the day's crossing score. [kg]
    score : array_like
        Crossing score z* of the day's wind point. [–]
    slope_kg : array_like
        Slope dm/dz of the interpolated mass there (< 0). [kg]

    Returns
    -------
    numpy.ndarray
        ε_e = [Phi(z* + ε/|s|) − Phi(z*)] |s| / phi(z*): the error that, used to first
        order (density × ε_e), moves the share of days of that point exactly as shifting
        its crossing by ε/|s| does; ε_e → ε for small ε. ε where the slope or score is not
        finite. [kg]

    Notes
    -----
    A point's share of days at M is w Phi(z*); a mass error ε at the crossing moves z* by
    ε/|s| (the mass linear in z near z*, slope s), hence its share by
    w [Phi(z* + ε/|s|) − Phi(z*)]; the density there is w phi(z*)/|s|. On a nearly flat
    mass (|s| small) a large ε moves the crossing far into the tail, where the linear
    estimate density × ε would overstate the change in share.

    References
    ----------
    .. [4] Wilks (2011), §4.4.2 (Gaussian distribution and density).
    """
    e = np.asarray(error_kg, dtype=float)
    z = np.asarray(score, dtype=float)
    s = np.abs(np.asarray(slope_kg, dtype=float))
    ok = np.isfinite(z) & np.isfinite(s) & (s > 0) & np.isfinite(e)
    zz = np.where(ok, z, 0.0)
    ss = np.where(ok, s, 1.0)
    phi = np.exp(-0.5 * zz**2) / np.sqrt(2.0 * np.pi)
    moved = special.ndtr(zz + np.where(ok, e, 0.0) / ss) - special.ndtr(zz)
    return np.where(ok, moved * ss / phi, e)


def grid_error_indicator(grid_mass_kg):
    """Interpolation-error indicator of each cell of a temperature × headwind grid.

    Parameters
    ----------
    grid_mass_kg : array_like
        Masses at the nodes, ``(..., G, H)``; NaN where no takeoff. [kg]

    Returns
    -------
    numpy.ndarray
        Indicator per cell, ``(..., G − 1, H − 1)``: half the largest absolute second
        difference (along either axis) at the cell's four corners; +inf for a cell with a
        no-takeoff corner or next to one. [kg]

    Notes
    -----
    Piecewise-linear interpolation of a smooth m over a cell of width Δ errs by at most
    |m''| Δ²/8 = |Δ²m|/8. Where the slope jumps by J at a distance a from the nearer node
    of the cell (a change of limiting regime), it errs by up to J a (Δ − a)/Δ, at most
    J Δ/4 for a kink mid-cell, while the second difference at that node is J (Δ − a) ≥
    J Δ/2. Half the second difference at the corners therefore bounds both (a kink
    mid-cell exactly), up to the curvature of the neighbouring cells; second differences
    are taken at interior nodes, an end node takes its neighbour's.

    References
    ----------
    .. [1] Press et al. (2007), §3.0–3.1 (error of polynomial interpolation); C. de Boor,
       *A Practical Guide to Splines*, rev. ed., Springer, 2001, ch. II (error of broken-line
       interpolation) [from memory for the chapters].
    """
    m = np.asarray(grid_mass_kg, dtype=float)
    big = np.inf

    def second(a, axis):
        a = np.moveaxis(a, axis, -1)
        if a.shape[-1] < 3:
            d = np.zeros_like(a)
        else:
            inner = np.abs(a[..., 2:] - 2.0 * a[..., 1:-1] + a[..., :-2])
            d = np.concatenate([inner[..., :1], inner, inner[..., -1:]], axis=-1)
        return np.moveaxis(np.where(np.isfinite(d), d, big), -1, axis)

    node = np.maximum(second(m, -2), second(m, -1))  # (..., G, H)
    corner = np.maximum(np.maximum(node[..., :-1, :-1], node[..., 1:, :-1]),
                        np.maximum(node[..., :-1, 1:], node[..., 1:, 1:]))
    return 0.5 * corner
