"""Reliability levels of the takeoff-weight limit: the mass achievable on at least p of the
days of a month, the runway direction each day is flown on, and the refinement of the levels
with direct solves.

The days are those of :mod:`physics.climatology` (daily-maximum temperature score ×
wind point, independent); their masses come from a solving grid
(:mod:`physics.solvinggrid`), given here at the temperature nodes of each wind point.

1. **Flown direction.** Each point is flown on the usable direction that gives the highest
   mass at that temperature (:func:`flown_direction`); if no direction is usable the day is
   not possible.
2. **Reliability level.** With S(M) the share of days on which mass M is achievable,
   the mass achievable on at least p of days is M_p = max{M : S(M) ≥ p}
   (:func:`share_of_days`, :func:`reliability_masses`). The mass of a wind point is linear
   in the temperature score between the nodes and the interpolant is inverted exactly, so
   the temperature distribution is treated as continuous, not binned. With given
   percentiles the mass is linear in temperature between nodes but the score is piecewise
   linear in temperature, so the interpolant is linear in score only between the
   percentile anchors (a second-order difference).
3. **Refinement.** The level masses of the interpolated surface are corrected with direct
   solves of a few days on each level's contour: the crossing days, slopes and densities
   of the wind points (:func:`level_crossings`), a systematic sample of those days over
   the density (:func:`refinement_samples`), one Newton step of the level from the
   sampled errors (:func:`share_equivalent_error`, :func:`refined_level_masses`), and the
   binding day moved onto the corrected mass (:func:`binding_score`,
   :func:`secant_score`); the caller does the solves.

Conventions (all arrays, no loops over cases):

- ``N`` groups (airfield × month × aircraft type), ``D`` runway directions of the airfield
  (padded with invalid directions), ``J`` wind points (index 0 is the calm point),
  ``G`` temperature nodes, ``L`` reliability levels.
- Masses that are not possible are ``-inf`` inside, NaN at the interface.

References
----------
.. [1] W. H. Press et al., *Numerical Recipes*, 3rd ed., CUP, 2007, §3.1 (linear
   interpolation), §9.2 (secant method), §9.4 (Newton–Raphson step).
.. [2] ICAO, *Annex 14, Aerodromes, Vol. I*, §3.1.1–3.1.4 and Attachment A §1 (usability of
   a runway system).
.. [4] D. S. Wilks, *Statistical Methods in the Atmospheric Sciences*, 3rd ed., Academic
   Press, 2011, §4.4.2 (Gaussian distribution) and §3.1 (quantiles) [from memory for the
   section numbers].
.. [5] M. Dowell and P. Jarratt, "A modified regula falsi method for computing the
   root of an equation", *BIT* 11 (1971) 168–174 (the Illinois method).
.. [6] W. G. Cochran, *Sampling Techniques*, 3rd ed., Wiley, 1977, ch. 8 (systematic
   sampling) [from memory for the chapter].
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

from fieldlimits.physics import limits
from fieldlimits.physics.climatology import normal_probability

#: Default reliability levels (share of days). [–]
DEFAULT_LEVELS = (0.50, 0.85, 0.95)


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
    # In place, in the order of the formula (the same float32 operations as written out):
    # this is the inner loop of every level search.
    out = np.empty(shape, dtype=np.float32)
    out[...] = z[..., 0]
    c = np.empty(shape, dtype=np.float32)
    term = np.empty(shape, dtype=np.float32)
    d_out = np.zeros(shape, dtype=np.float32) if slope else None
    inside = np.empty(shape, dtype=bool) if slope else None
    for k in range(g - 1):  # a fixed, small number of temperature segments
        np.subtract(f[..., k], m, out=c)
        np.multiply(c, inv[..., k], out=c)
        lo = -np.inf if k == 0 else 0.0
        hi = np.inf if k == g - 2 else 1.0
        np.clip(c, lo, hi, out=term)
        np.multiply(dz[..., k], term, out=term)
        np.add(out, term, out=out)
        if slope:
            np.greater(c, lo, out=inside)
            np.logical_and(inside, c < hi, out=inside)
            np.subtract(d_out, dz[..., k] * inv[..., k], out=d_out, where=inside)
    # Beyond ±_FAR_SCORE the extension is flat in effect (Phi is 0 or 1 to 1e-300).
    out[out > _FAR_SCORE] = np.inf
    out[out < -_FAR_SCORE] = -np.inf
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
        ``(N, D, J)`` flags from :func:`physics.climatology.runway_usability`. Default: nothing exceeded. [–]
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
    # The best candidate of a point usable nowhere (only those need one).
    cand = np.zeros(any_usable.shape, dtype=np.int64)  # (N, J)
    lost_n, lost_j = np.nonzero(~any_usable)
    if lost_n.size:
        r = raw[lost_n, :, lost_j]  # (P, D, G)
        merit = np.where(valid[lost_n, :, 0], np.sum(np.where(np.isnan(r), 0.0, r), axis=-1), -np.inf)
        cand[lost_n, lost_j] = np.argmax(merit, axis=1)
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
    score_slope_kg : numpy.ndarray, optional
        dm/dz of the binding day's wind point on the surface at the binding score (< 0),
        NaN where the mass does not fall with temperature there, ``(N, L)``: the first
        step where a direct solve of the binding day misses the level. [kg]
    """

    mass_kg: np.ndarray
    reason: np.ndarray
    point: np.ndarray
    score: np.ndarray
    share_days: np.ndarray
    possible_share: np.ndarray
    estimate_kg: np.ndarray | None = None
    score_slope_kg: np.ndarray | None = None


def _prepare(point_mass_kg):
    f = np.asarray(point_mass_kg, dtype=float)
    f = np.where(np.isnan(f), -np.inf, f)
    return np.minimum.accumulate(f, axis=-1)


@dataclass(frozen=True)
class PreparedMasses:
    """Point masses made ready for repeated level and crossing searches on one surface
    (:func:`prepare_masses`): :func:`reliability_masses`, :func:`share_of_days`,
    :func:`level_crossings` and :func:`refinement_samples` take it in place of the
    ``(N, J, G)`` masses and skip preparing them again.

    Attributes
    ----------
    mass_kg : numpy.ndarray
        Masses non-increasing in temperature (running minimum over the nodes), ``(N, J, G)``;
        -inf where not possible. [kg]
    scores : numpy.ndarray
        Node scores, ``(G,)`` or ``(N, G)``. [–]
    segments : tuple
        The single-precision inversion of the piecewise-linear masses (internal).
    """

    mass_kg: np.ndarray
    scores: np.ndarray
    segments: tuple

    def take(self, rows):
        """The same for groups ``rows`` only."""
        f, z, inv = self.segments
        return PreparedMasses(self.mass_kg[rows], self.scores if self.scores.ndim == 1 else self.scores[rows],
                              (f[rows], z if z.ndim == 1 else z[rows], inv[rows]))


def prepare_masses(point_mass_kg, scores):
    """Prepare point masses once for several level and crossing searches.

    Parameters
    ----------
    point_mass_kg : array_like
        Mass of each wind point on its flown direction at each temperature node,
        ``(N, J, G)``; -inf or NaN where not possible. [kg]
    scores : array_like
        Standard-normal scores of the temperature nodes, increasing, ``(G,)`` or ``(N, G)``. [–]

    Returns
    -------
    PreparedMasses
        The masses made non-increasing in temperature and their inversion. [kg]

    Notes
    -----
    m_j(z) is made non-increasing by a running minimum over the nodes (which can only lower
    it, :func:`share_of_days`); each segment's drop f_g − f_{g+1} and its inverse are kept
    for the crossing scores z*_j(M).

    References
    ----------
    .. [1] Press et al. (2007), §3.1 (linear interpolation).
    """
    f = _prepare(point_mass_kg)
    z = np.asarray(scores, dtype=float)
    return PreparedMasses(f, z, _segments(f, z))


def _prepared(point_mass_kg, scores):
    """(masses, segments) of point masses or of a PreparedMasses."""
    if isinstance(point_mass_kg, PreparedMasses):
        return point_mass_kg.mass_kg, point_mass_kg.segments
    f = _prepare(point_mass_kg)
    return f, _segments(f, np.asarray(scores, dtype=float))


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
    point_mass_kg : array_like or PreparedMasses
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
    return _share(_prepared(point_mass_kg, scores)[1], np.asarray(scores, dtype=float),
                  np.asarray(weight, dtype=float), m)[0]


def reliability_masses(point_mass_kg, scores, weight, oew_kg, mtow_kg, *,
                       levels=DEFAULT_LEVELS, target_mass_kg=None, lost_reason=None,
                       tol_kg=1.0):
    """Mass achievable on at least p of days, for each group and level.

    Parameters
    ----------
    point_mass_kg : array_like or PreparedMasses
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
    f, seg = _prepared(point_mass_kg, scores)
    z = np.asarray(scores, dtype=float)
    w = np.asarray(weight, dtype=float)
    oew = np.asarray(oew_kg, dtype=float)
    mtow = np.asarray(mtow_kg, dtype=float)
    p = np.asarray(levels, dtype=float)
    n_groups, n_pts, _ = f.shape
    eps = 1e-9

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
    f_s, z_s, inv_s = seg  # the crossing scores only (the share of days is not needed)
    zj = _crossing_score((f_s[:, None], z_s if z_s.ndim == 1 else z_s[:, None, None, :], inv_s[:, None]),
                         m_eval[:, :, None])  # (N, L, J)
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
    # The surface's slope dm/dz there (1 / dz*/dM on the binding point's segment).
    rows = np.arange(n_groups)[:, None]
    _, dz_dm = _crossing_score((f_s[rows, point], z_s if z_s.ndim == 1 else z_s[:, None, :],
                                inv_s[rows, point]), m_eval, slope=True)
    with np.errstate(divide="ignore", invalid="ignore"):
        score_slope = np.where((dz_dm < 0) & has_dens & np.isfinite(zb), 1.0 / dz_dm.astype(float), np.nan)

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
                             estimate_kg=np.where(search, polished, level), score_slope_kg=score_slope)


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
    point_mass_kg : array_like or PreparedMasses
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
    _, seg = _prepared(point_mass_kg, scores)
    z = np.asarray(scores, dtype=float)
    w = np.asarray(weight, dtype=float)
    m = np.asarray(mass_kg, dtype=float)
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
        ``point_mass_kg`` may be a :class:`PreparedMasses` of the same scores.
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
        ``(N, J, G − 1)`` (:func:`physics.solvinggrid.grid_error_indicator`), taken at the segment of its
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
