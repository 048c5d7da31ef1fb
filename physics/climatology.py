"""Climatology: the weather statistics of a month at an airfield: the daily-maximum
temperature distribution, the wind rose as wind points, and runway usability.

These are the inputs of the planner's question *what mass can I count on for p of the
departures of this month?*, answered in :mod:`physics.reliabilitylevels` on a solving grid
of :mod:`physics.solvinggrid`. A day is a pair (daily maximum temperature, wind). The model:

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
   (:func:`runway_usability`); the share of days with a usable wind is the coverage
   (:func:`wind_coverage`).
4. **Independence.** Temperature and wind are taken as statistically independent (stated
   assumption; in reality hot afternoons and sea breezes are correlated).

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
"""

from __future__ import annotations

import numpy as np
from scipy import special

from fieldlimits.physics import wind

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
                     tailwind_limit_mps, crosswind_limit_mps, rows=None):
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
    rows : array_like of int, optional
        Output row i takes the components of row ``rows[i]`` of the wind and heading arrays
        (first axis); the limits are per output row. Cases that share a runway direction
        and a month (e.g. several aircraft types) then share one evaluation of the
        components. Default: the arrays broadcast as they are. [–]

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
    factored = wind.factored_headwind(head)
    if rows is not None:
        rows = np.asarray(rows)
        shape = np.broadcast_shapes(head.shape, cross.shape)
        head, cross, factored = (np.take(np.broadcast_to(a, shape), rows, axis=0)
                                 for a in (head, cross, factored))
    eps = 1e-9
    cross_exceeded = np.abs(cross) > np.asarray(crosswind_limit_mps, dtype=float) + eps
    tail_exceeded = -head > np.asarray(tailwind_limit_mps, dtype=float) + eps
    return factored, cross_exceeded, tail_exceeded


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
