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

Conventions (all arrays in and out, no loops over cases in Python):

- ``N`` groups (airfield × month × aircraft type), ``D`` runway directions of the airfield
  (padded with invalid directions), ``J`` wind points (index 0 is the calm point),
  ``G`` temperature nodes, ``L`` reliability levels.
- Masses that are not possible are ``-inf`` inside, NaN at the interface.
- The crossing scores, the share of days, the level search and the binding day are
  compiled kernels (:mod:`physics.compiled`) that loop over groups, levels and wind points
  in double precision: many short passes over J and G per group, which as numpy were
  bound by temporaries and call overhead. They are the only implementation; the tests
  check them against closed forms and brute-force quantiles.

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
from fieldlimits.physics.compiled import kernel

#: Default reliability levels (share of days). [–]
DEFAULT_LEVELS = (0.50, 0.85, 0.95)


# ----------------------------------------------------------------------------------------
# Reliability levels
# ----------------------------------------------------------------------------------------
_NOT_POSSIBLE_KG = -1.0e12  # finite stand-in for "not possible" inside the inversion
_TIE_KG = 0.05  # masses equal within this count as achieved (absorbs rounding of the nodes)
_INV_SQRT_2PI = 1.0 / math.sqrt(2.0 * math.pi)
_INV_SQRT_2 = 1.0 / math.sqrt(2.0)
_FLAT_INV = 1.0e9  # inverse drop of a flat segment (a crossing there is a step)
_FAR_SCORE = 6.0  # |z| beyond this is taken as infinite (Phi within 1e-9 of 0 or 1)
_BINDING_SCORE = 3.5  # a binding day further out than this is not "typical"
_FLAT_RATE = 1.0  # |dz*/dM| above this (a slope under 1 kg per unit score) counts as flat
_SHARE_EPS = 1e-9  # S(M) is compared with p − this (rounding of the sum over the points)

def _kernel_array(a, dtype=float):
    """``a`` as a C-contiguous, writable array of ``dtype``: the one layout the kernels are
    compiled for (another layout or a read-only view would compile another version)."""
    return np.require(a, dtype=dtype, requirements=("C", "W"))


# The kernels below are the one implementation of the crossing scores, the share of days,
# the level search, the binding day, the flown direction and the refinement samples
# (physics.compiled: loops over groups, levels and wind points in compiled code, no
# temporaries; the public functions further down wrap them). Node masses inside are the
# prepared ones (:func:`prepare_masses`): non-increasing in temperature, "not possible" as
# _NOT_POSSIBLE_KG, with the inverse drop of each segment beside them; double precision.


@kernel
def _scan(f, inv, z, row, w, i, mass, idx, n_idx, slope, score, rate):
    """Crossing scores of wind points ``idx[:n_idx]`` of group i at a mass, and their share.

    f (N', J, G) prepared node masses, inv (N', J, G − 1) inverse drops, z (N', G) node
    scores, the group's at ``row``; w (N, J) shares of days, the group's at i. For each
    listed point j (position a), z*_j(M) = sup{z : m_j(z) ≥ M} goes to ``score[a]`` and
    |dz*_j/dM| to ``rate[a]``; returns Σ w_j Phi(z*_j) with Phi(z) = erfc(−z/√2)/2 and,
    with ``slope``, dS/dM = −Σ w_j phi(z*_j) |dz*_j/dM| over them (else 0). m_j(z) is
    linear between the nodes, the first segment extended below the first node and the last
    beyond the last (a flat end segment: to ±inf in effect); the rate is that of the segment
    holding z* (0 where z* sits exactly on an inner node from above, and beyond
    ±_FAR_SCORE, where z* is taken as ±inf). This loop is the one place the crossing is
    computed: every search, share and crossing below calls it once per group and mass (a
    call per point would cost more than the point).
    """
    n_nodes = f.shape[2]
    m = mass - _TIE_KG
    s = 0.0
    ds = 0.0
    for a in range(n_idx):
        j = idx[a]
        if n_nodes == 1:
            zj = math.inf if f[row, j, 0] >= m else -math.inf
            r = 0.0
        else:
            k = 0
            if f[row, j, 0] >= m:  # the segment where the mass falls below M (else the last)
                k = n_nodes - 2
                for g in range(n_nodes - 2):
                    if f[row, j, g + 1] < m:
                        k = g
                        break
            dz = z[row, k + 1] - z[row, k]
            c = (f[row, j, k] - m) * inv[row, j, k]
            zj = z[row, k] + dz * c
            r = dz * inv[row, j, k]
            if zj > _FAR_SCORE:
                zj = math.inf
                r = 0.0
            elif zj < -_FAR_SCORE:
                zj = -math.inf
                r = 0.0
            elif k > 0 and c <= 0.0:
                r = 0.0
        score[a] = zj
        rate[a] = r
        if zj == math.inf:
            s += w[i, j]
        elif zj > -math.inf:
            s += w[i, j] * 0.5 * math.erfc(-zj * _INV_SQRT_2)
        if slope and r > 0.0:
            ds -= w[i, j] * math.exp(-0.5 * zj * zj) * r
    return s, ds * _INV_SQRT_2PI


@kernel
def _points_with_days(w, i, idx):
    """The wind points of group i with a share of days, into ``idx``; returns their count."""
    n_idx = 0
    for j in range(w.shape[1]):
        if w[i, j] > 0.0:
            idx[n_idx] = j
            n_idx += 1
    return n_idx


@kernel
def _prepare_kernel(raw):
    """Running minimum over the nodes (NaN as -inf) with the stand-in for "not possible",
    and the inverse drops."""
    n, n_pts, n_nodes = raw.shape
    f = np.empty((n, n_pts, n_nodes))
    inv = np.empty((n, n_pts, max(n_nodes - 1, 0)))
    for i in range(n):
        for j in range(n_pts):
            run = math.inf
            for k in range(n_nodes):
                v = raw[i, j, k]
                if v < run:  # False for NaN: taken as -inf below
                    run = v
                elif math.isnan(v):
                    run = -math.inf
                f[i, j, k] = run if math.isfinite(run) else _NOT_POSSIBLE_KG
            for k in range(n_nodes - 1):
                d = f[i, j, k] - f[i, j, k + 1]
                inv[i, j, k] = 1.0 / d if d > 0.0 else _FLAT_INV
    return f, inv


@kernel
def _shares_kernel(f, inv, z, rows, w, mass):
    """S at masses (N, K) of each group (its prepared masses at ``rows``)."""
    n, n_mass = mass.shape
    n_pts = f.shape[1]
    out = np.empty((n, n_mass))
    idx = np.empty(n_pts, dtype=np.int64)
    score = np.empty(n_pts)
    rate = np.empty(n_pts)
    for i in range(n):
        n_idx = _points_with_days(w, i, idx)
        for c in range(n_mass):
            out[i, c] = _scan(f, inv, z, rows[i], w, i, mass[i, c], idx, n_idx, False, score, rate)[0]
    return out


@kernel
def _single_point_level(f, z, row, w, i, zq):
    """First trial of a level of group i: Σ_j w_j m_j(zq) / Σ_j w_j over the points possible
    at both nodes around zq = Φ⁻¹(p); exact where the wind is one point, NaN where no point
    is possible."""
    n_nodes = z.shape[1]
    if n_nodes < 2:
        return math.nan
    k = -1
    for g in range(n_nodes):
        if z[row, g] <= zq:
            k += 1
    k = min(max(k, 0), n_nodes - 2)
    s = (zq - z[row, k]) / (z[row, k + 1] - z[row, k])  # beyond the end nodes: linear extension
    total = 0.0
    acc = 0.0
    for j in range(f.shape[1]):
        f0 = f[row, j, k]
        f1 = f[row, j, k + 1]
        if f0 > 0.5 * _NOT_POSSIBLE_KG and f1 > 0.5 * _NOT_POSSIBLE_KG:
            total += w[i, j]
            acc += w[i, j] * (f0 + s * (f1 - f0))
    return acc / total if total > 0.0 else math.nan


@kernel
def _level_search(f, inv, z, row, w, i, p, lo, hi, s_lo, s_hi, ds_hi, trial, tol, idx, n_idx, z_lo,
                  z_hi, act, z_x, r_x):
    """The level of group i on the bracket [lo, hi] with S(lo) − p = s_lo ≥ 0 > s_hi:
    returns the certified lower end (hi − lo ≤ tol), the false-position point of the
    final bracket (see :func:`reliability_masses`) and the number of points still undecided
    on that bracket (listed in ``act``). The first trial is ``trial`` where it lies inside
    the bracket, else the Newton step from hi (ds_hi = dS/dM there).

    idx[:n_idx] the points with days, z_lo and z_hi their z*_j at lo and hi (by position);
    act, z_x and r_x (J,) are work space. z*_j(M) does not increase with M, so a point with
    z*_j = +inf at the upper end of the bracket counts w_j on all of it and one with −inf
    at the lower end nothing: only the points undecided on the bracket are evaluated, and
    each new end of the bracket decides more of them.
    """
    n_act = 0
    base = 0.0  # share of the points achieving every mass of the bracket
    for a in range(n_idx):
        if z_lo[a] == -math.inf:
            continue
        if z_hi[a] == math.inf:
            base += w[i, idx[a]]
            continue
        act[n_act] = idx[a]
        n_act += 1
    side = 0  # end retained last step: +1 lo, -1 hi
    width_2 = math.inf  # bracket width one and two steps ago
    width_1 = math.inf
    if trial > lo and trial < hi:  # estimate for the next trial
        newton = trial
    else:
        newton = hi - s_hi / ds_hi if ds_hi < 0.0 else math.nan
    max_steps = 3 * int(math.ceil(math.log2(max(hi - lo, tol) / tol))) + 3
    for _ in range(max_steps):
        width = hi - lo
        if width <= tol:
            break
        drop = s_lo - s_hi
        t = s_lo / (drop if drop > 0.0 else 1.0)
        use_n = newton > lo and newton < hi  # False for NaN
        est = newton if use_n else lo + min(max(t, 0.01), 0.99) * width
        bisect = width > 0.5 * width_2
        width_2 = width_1
        width_1 = width
        x = 0.5 * (lo + hi) if bisect else est
        # An estimate within tol/2 of an end: a step to tol from it certifies that end. Not
        # where S equals p at lo (S − p = 0 on a stretch of masses: false position stays on
        # lo, and each certifying step would move lo by tol only).
        if (newton - lo if use_n else (t * width if s_lo > 0.0 else math.inf)) <= 0.5 * tol:
            x = lo + tol
        elif use_n and hi - newton <= 0.5 * tol:
            x = hi - tol
        x = min(x, hi)
        s_x, ds = _scan(f, inv, z, row, w, i, x, act, n_act, True, z_x, r_x)
        s_x += base - p
        newton = x - s_x / ds if ds < 0.0 else math.nan
        ok = s_x >= -_SHARE_EPS
        if ok:
            # Illinois: halve the function value at an end retained twice in a row.
            if side == -1:
                s_hi *= 0.5
            lo = x
            s_lo = s_x
            side = -1
        else:
            if side == 1:
                s_lo *= 0.5
            hi = x
            s_hi = s_x
            side = 1
        kept = 0
        for a in range(n_act):  # the points the new end decides
            if ok and z_x[a] == -math.inf:
                continue
            if not ok and z_x[a] == math.inf:
                base += w[i, act[a]]
                continue
            act[kept] = act[a]
            kept += 1
        n_act = kept
    drop = s_lo - s_hi
    t = min(max(s_lo / drop, 0.0), 1.0) if drop > 0.0 else 0.0
    return lo, lo + t * (hi - lo), n_act


@kernel
def _binding_day(f, z, row, w, i, mass, mid, tol, idx, n_idx, pts, n_scored, z_x, r_x):
    """Binding wind point, its score and the slope dm/dz there of group i at a level mass
    (see :func:`reliability_masses`); mid is the node nearest the median, idx[:n_idx] the
    points with days, and pts[:n_scored] those of them with z*_j(M) possibly finite, their
    z*_j(M) and |dz*_j/dM| in z_x and r_x (by position)."""
    best = -1.0
    point = 0
    zb = 0.0
    rate_b = 0.0
    slack_min = math.inf
    slack_point = 0
    for a in range(n_scored):
        zj = z_x[a]
        if abs(zj) <= _BINDING_SCORE:
            dens = w[i, pts[a]] * math.exp(-0.5 * zj * zj)
            if dens > best:
                best, point, zb, rate_b = dens, pts[a], zj, r_x[a]
    for a in range(n_idx):
        j = idx[a]
        f_mid = f[row, j, mid]
        if f_mid >= mass - tol and f_mid - mass < slack_min:
            slack_min = f_mid - mass
            slack_point = j
    if best > 0.0:
        return point, zb, (-1.0 / rate_b if rate_b > 0.0 else math.nan)
    return slack_point, z[row, mid], math.nan


@kernel
def _levels_kernel(f, inv, z, rows, w, oew, mtow, target, p, zq, lost, lost_codes, tol):
    """Every output of :func:`reliability_masses` for groups (N) × levels (L) (a group's
    prepared masses at ``rows``)."""
    n = rows.shape[0]
    n_pts, n_nodes = f.shape[1], f.shape[2]
    n_lev = p.shape[0]
    mass = np.full((n, n_lev), math.nan)
    estimate = np.full((n, n_lev), math.nan)
    reason = np.full((n, n_lev), -1, dtype=np.int64)
    point = np.zeros((n, n_lev), dtype=np.int64)
    score = np.empty((n, n_lev))
    score_slope = np.empty((n, n_lev))
    share_target = np.empty(n)
    share_oew = np.empty(n)
    idx = np.empty(n_pts, dtype=np.int64)
    act = np.empty(n_pts, dtype=np.int64)
    z_top = np.empty(n_pts)
    r_top = np.empty(n_pts)
    z_low = np.empty(n_pts)
    r_low = np.empty(n_pts)
    z_x = np.empty(n_pts)
    r_x = np.empty(n_pts)
    for i in range(n):
        row = rows[i]
        n_idx = _points_with_days(w, i, idx)
        s_top, ds_top = _scan(f, inv, z, row, w, i, mtow[i], idx, n_idx, True, z_top, r_top)
        s_low = _scan(f, inv, z, row, w, i, oew[i], idx, n_idx, False, z_low, r_low)[0]
        share_target[i] = s_top if target[i] == mtow[i] else \
            _scan(f, inv, z, row, w, i, target[i], idx, n_idx, False, z_x, r_x)[0]
        share_oew[i] = s_low
        mid = 0
        for g in range(1, n_nodes):
            if abs(z[row, g]) < abs(z[row, mid]):
                mid = g
        lost_any = False
        for l in range(n_lev):
            # The binding day at the level (MTOW, the search's estimate, or OEW where the
            # level is not possible) from the crossings there: those of the group's ends are
            # known; after a search only the points undecided on its final bracket can cross.
            if s_top >= p[l] - _SHARE_EPS:
                mass[i, l] = mtow[i]
                estimate[i, l] = mtow[i]
                point[i, l], score[i, l], score_slope[i, l] = _binding_day(
                    f, z, row, w, i, mtow[i], mid, tol, idx, n_idx, idx, n_idx, z_top, r_top)
            elif s_low >= p[l] - _SHARE_EPS:
                trial = _single_point_level(f, z, row, w, i, zq[l])
                level, m_eval, n_act = _level_search(
                    f, inv, z, row, w, i, p[l], oew[i], mtow[i], s_low - p[l], s_top - p[l], ds_top,
                    trial, tol, idx, n_idx, z_low, z_top, act, z_x, r_x)
                mass[i, l] = level
                estimate[i, l] = m_eval
                _scan(f, inv, z, row, w, i, m_eval, act, n_act, False, z_x, r_x)
                point[i, l], score[i, l], score_slope[i, l] = _binding_day(
                    f, z, row, w, i, m_eval, mid, tol, idx, n_idx, act, n_act, z_x, r_x)
            else:
                lost_any = True
                point[i, l], score[i, l], score_slope[i, l] = _binding_day(
                    f, z, row, w, i, oew[i], mid, tol, idx, n_idx, idx, n_idx, z_low, r_low)
        if lost_any:
            # Why days are lost: crosswind, tailwind (points usable nowhere) or too hot.
            shares = np.zeros(3)
            for a in range(n_idx):
                j = idx[a]
                if lost[i, j] == lost_codes[0]:
                    shares[0] += w[i, j]
                elif lost[i, j] == lost_codes[1]:
                    shares[1] += w[i, j]
                elif lost[i, j] < 0:
                    shares[2] += w[i, j] * (1.0 - 0.5 * math.erfc(-z_low[a] * _INV_SQRT_2))
            code = lost_codes[np.argmax(shares)]
            for l in range(n_lev):
                if math.isnan(mass[i, l]):
                    reason[i, l] = code
    return mass, reason, point, score, share_target, share_oew, estimate, score_slope


@kernel
def _crossings_kernel(f, inv, z, rows, w, mass):
    """z*_j, dm_j/dz and density of every wind point of each group at a mass (N,)."""
    n, n_pts = rows.shape[0], f.shape[1]
    score = np.empty((n, n_pts))
    slope = np.full((n, n_pts), math.nan)
    density = np.zeros((n, n_pts))
    idx = np.arange(n_pts)
    rate = np.empty(n_pts)
    for i in range(n):
        _scan(f, inv, z, rows[i], w, i, mass[i], idx, n_pts, False, score[i], rate)
        for j in range(n_pts):
            density[i, j] = _density(w[i, j], score[i, j], rate[j])
            if density[i, j] > 0.0:
                slope[i, j] = -1.0 / rate[j]
    return score, slope, density


@kernel
def _density(weight, score, rate):
    """Density of the day-to-day mass from one wind point, w phi(z*) |dz*/dM|
    (:func:`level_crossings`); 0 beyond ±_BINDING_SCORE, on a flat segment or without days."""
    if rate > 0.0 and rate < _FLAT_RATE and abs(score) <= _BINDING_SCORE and weight > 0.0:
        return weight * math.exp(-0.5 * score * score) * _INV_SQRT_2PI * rate
    return 0.0

@kernel
def _flown_kernel(raw, cross_ex, tail_ex, valid, cross_code, tail_code):
    """:func:`flown_direction` over groups (N), wind points (J) and nodes (G) in one pass."""
    n, n_dir, n_pts, n_nodes = raw.shape
    direction = np.empty((n, n_pts, n_nodes), dtype=np.int64)
    mass = np.empty((n, n_pts, n_nodes))
    reason = np.full((n, n_pts), -1, dtype=np.int64)
    usable = np.empty(n_dir, dtype=np.bool_)
    for i in range(n):
        for j in range(n_pts):
            first_usable = -1
            for d in range(n_dir):
                usable[d] = valid[i, d] and not cross_ex[i, d, j] and not tail_ex[i, d, j]
                if usable[d] and first_usable < 0:
                    first_usable = d
            if first_usable < 0:
                # Usable nowhere: the best candidate (highest mass summed over the nodes,
                # limits ignored, first on ties) names the limit that excludes it.
                cand = 0
                merit_best = -math.inf
                for d in range(n_dir):
                    if not valid[i, d]:
                        continue
                    merit = 0.0
                    for g in range(n_nodes):
                        v = raw[i, d, j, g]
                        if not math.isnan(v):
                            merit += v
                    if merit > merit_best:
                        merit_best = merit
                        cand = d
                for g in range(n_nodes):
                    direction[i, j, g] = cand
                    mass[i, j, g] = -math.inf
                reason[i, j] = cross_code if cross_ex[i, cand, j] else tail_code
                continue
            for g in range(n_nodes):
                # The best usable direction and its mass, first on ties.
                top = -math.inf
                best = 0
                for d in range(n_dir):
                    v = raw[i, d, j, g]
                    if usable[d] and v > top:  # False for NaN
                        top = v
                        best = d
                if math.isfinite(top):
                    direction[i, j, g] = best
                    mass[i, j, g] = top
                else:
                    direction[i, j, g] = first_usable
                    mass[i, j, g] = math.nan
    return direction, mass, reason



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
    when that direction exceeds both. One pass over groups, wind points, directions and
    nodes in a compiled kernel (:mod:`physics.compiled`).

    References
    ----------
    .. [2] ICAO Annex 14, Vol. I, §3.1.1 and Attachment A §1 (usability of a runway system).
    """
    raw = _kernel_array(point_mass_kg, dtype=float)
    shape3 = raw.shape[:3]
    def flags(a, shape, default):
        if a is None:
            return np.full(shape, default)
        return _kernel_array(np.broadcast_to(np.asarray(a, dtype=bool), shape), bool)

    cross_ex = flags(crosswind_exceeded, shape3, False)
    tail_ex = flags(tailwind_exceeded, shape3, False)
    valid = flags(direction_valid, raw.shape[:2], True)
    return _flown_kernel(raw, cross_ex, tail_ex, valid, limits.code("crosswind_limit"),
                         limits.code("tailwind_limit"))


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


@dataclass(frozen=True)
class PreparedMasses:
    """Point masses made ready for repeated level and crossing searches on one surface
    (:func:`prepare_masses`): :func:`reliability_masses`, :func:`share_of_days`,
    :func:`level_crossings` and :func:`refinement_samples` take it in place of the
    ``(N, J, G)`` masses and skip preparing them again.

    Attributes
    ----------
    scores : numpy.ndarray
        Node scores, ``(G,)`` or ``(N, G)``. [–]
    segments : tuple
        The inversion of the piecewise-linear masses, the compiled kernels' input (internal):
        node masses with a finite stand-in for "not possible" ``(N', J, G)``, node scores
        ``(N', G)`` and the inverse drop of each segment ``(N', J, G − 1)``, of the surface
        prepared, which may hold more groups than this one.
    rows : numpy.ndarray of int, optional
        Index of each group in ``segments``, ``(N,)`` (:meth:`take`); None: all, in order. [–]
    mass_kg : numpy.ndarray
        Masses non-increasing in temperature (running minimum over the nodes), ``(N, J, G)``;
        -inf where not possible (made from ``segments`` when asked for). [kg]
    """

    scores: np.ndarray
    segments: tuple
    rows: np.ndarray | None = None

    @property
    def mass_kg(self):
        """Masses non-increasing in temperature, -inf where not possible, ``(N, J, G)``. [kg]"""
        f = self.segments[0] if self.rows is None else self.segments[0][self.rows]
        return np.where(f > 0.5 * _NOT_POSSIBLE_KG, f, -np.inf)

    def take(self, rows):
        """The same for groups ``rows`` only (an index into the prepared arrays, no copy)."""
        n = self.segments[0].shape[0] if self.rows is None else self.rows.size
        index = np.arange(n)[rows]
        return PreparedMasses(self.scores if self.scores.ndim == 1 else self.scores[rows], self.segments,
                              index if self.rows is None else self.rows[index])


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
    it, :func:`share_of_days`); each segment's inverse drop 1/(f_g − f_{g+1}) is kept for
    the crossing scores z*_j(M) (a flat segment: 1e9, a step). One pass in compiled code
    (:mod:`physics.compiled`).

    References
    ----------
    .. [1] Press et al. (2007), §3.1 (linear interpolation).
    """
    raw = _kernel_array(point_mass_kg, dtype=float)
    z = np.asarray(scores, dtype=float)
    f, inv = _prepare_kernel(raw)
    z_grp = _kernel_array(np.broadcast_to(z, (raw.shape[0], raw.shape[-1])))
    return PreparedMasses(z, (f, z_grp, inv))


def _prepared(point_mass_kg, scores):
    """The kernels' inputs (f, z, inv, rows) of point masses or of a PreparedMasses."""
    if not isinstance(point_mass_kg, PreparedMasses):
        point_mass_kg = prepare_masses(point_mass_kg, scores)
    f, z, inv = point_mass_kg.segments
    rows = point_mass_kg.rows
    return f, z, inv, np.arange(f.shape[0]) if rows is None else rows


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
    f, z, inv, rows = _prepared(point_mass_kg, scores)
    m = np.asarray(mass_kg, dtype=float)
    s = _shares_kernel(f, inv, z, rows, _kernel_array(weight, dtype=float),
                       _kernel_array(m.reshape(m.shape[0], -1)))
    return s.reshape(m.shape)


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
    Φ⁻¹(p) (where that lies outside the bracket, the Newton step from MTOW), then Newton
    steps (dS/dM from the crossing scores' slopes) where they land inside the bracket, false
    position with the Illinois modification [5] otherwise, and a bisection where the bracket
    has not halved in two steps (at most 3 ⌈log2(span/tol)⌉ + 3 steps per pair). An
    estimate within tol/2 of an end is replaced by a step tol from that end, which closes
    the bracket when it lands across the level (also where S is a step; not from lo where
    S(lo) = p exactly, where it would move lo by tol a step). Each (group, level) pair is
    searched on its own in one compiled kernel (:mod:`physics.compiled`, double
    precision): a wind point whose crossing score is +inf at the bracket's upper end
    achieves every mass of the bracket and one at −inf at its lower end none (z*_j(M) does
    not increase with M), so each evaluation of S sums only the points still undecided on
    the bracket; the same holds for the binding day below.
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
    f, z, inv, rows = _prepared(point_mass_kg, scores)
    n_groups, n_pts = rows.size, f.shape[1]
    w = _kernel_array(weight, dtype=float)
    oew = _kernel_array(oew_kg, dtype=float)
    mtow = _kernel_array(mtow_kg, dtype=float)
    target = mtow if target_mass_kg is None else _kernel_array(target_mass_kg, dtype=float)
    p = _kernel_array(levels, dtype=float)
    zq = special.ndtri(np.clip(p, 1e-9, 1.0 - 1e-9))
    lost = (np.full((n_groups, n_pts), -1, dtype=np.int64) if lost_reason is None
            else _kernel_array(lost_reason, np.int64))
    codes = np.array([limits.code("crosswind_limit"), limits.code("tailwind_limit"),
                      limits.code("no_takeoff")], dtype=np.int64)
    mass, reason, point, score, share_target, s_oew, estimate, score_slope = _levels_kernel(
        f, inv, z, rows, w, oew, mtow, target, p, zq, lost, codes, float(tol_kg))
    return ReliabilityLevels(mass_kg=mass, reason=reason, point=point, score=score,
                             share_days=share_target, possible_share=s_oew,
                             estimate_kg=estimate, score_slope_kg=score_slope)


# ----------------------------------------------------------------------------------------
# Refinement of the levels with direct solves
# ----------------------------------------------------------------------------------------
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
    f, z, inv, rows = _prepared(point_mass_kg, scores)
    return _crossings_kernel(f, inv, z, rows, _kernel_array(weight, dtype=float),
                             _kernel_array(mass_kg, dtype=float))


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
    midpoint rule over the density. Row by row in a compiled kernel (:mod:`physics.compiled`):
    the crossings of :func:`level_crossings`, a stable sort of the contour key, the
    cumulative density and the K positions.

    References
    ----------
    .. [6] W. G. Cochran, *Sampling Techniques*, 3rd ed., Wiley, 1977, ch. 8 (systematic
       sampling) [from memory for the chapter].
    """
    f, z_seg, inv, rows = _prepared(point_mass_kg, scores)
    n_rows, n_pts, n_nodes = rows.size, f.shape[1], f.shape[2]
    z = _kernel_array(np.broadcast_to(np.asarray(scores, dtype=float), (n_rows, n_nodes)))
    key = np.asarray(order_key, dtype=float)
    per_node = key.ndim == 3
    key = _kernel_array(key if per_node else key[..., None])
    has_risk = risk_kg is not None
    risk = _kernel_array(risk_kg, dtype=float) if has_risk else np.zeros((n_rows, n_pts, 1))
    point, score, slope, share, total, risk_row = _samples_kernel(
        f, inv, z_seg, rows, _kernel_array(weight, dtype=float),
        _kernel_array(mass_kg, dtype=float), z, key, per_node, max(1, int(count)), risk, has_risk)
    return RefinementSamples(point=point, score=score, slope_kg=slope, stratum_density_per_kg=share,
                             density_per_kg=total, risk_kg=risk_row)


@kernel
def _samples_kernel(f, inv, z_seg, rows, w, mass, z, key, per_node, count, risk, has_risk):
    """:func:`refinement_samples` row by row (key (N, J, 1) or per node (N, J, G); risk
    (N, J, G − 1) when ``has_risk``)."""
    n = rows.shape[0]
    n_pts, n_nodes = f.shape[1], f.shape[2]
    point = np.full((n, count), -1, dtype=np.int64)
    score = np.full((n, count), math.nan)
    slope = np.full((n, count), math.nan)
    share = np.zeros((n, count))
    total = np.zeros(n)
    risk_row = np.zeros(n)
    idx = np.arange(n_pts)
    zj = np.empty(n_pts)
    rate = np.empty(n_pts)
    dens = np.empty(n_pts)
    key_j = np.empty(n_pts)
    cum = np.empty(n_pts)
    pos = np.empty(count, dtype=np.int64)
    n_seg = risk.shape[2]
    for i in range(n):
        _scan(f, inv, z_seg, rows[i], w, i, mass[i], idx, n_pts, False, zj, rate)
        risk_sum = 0.0
        for j in range(n_pts):
            zc = zj[j] if math.isfinite(zj[j]) else 0.0
            dens[j] = _density(w[i, j], zj[j], rate[j])
            if per_node:  # the key at the node nearest the crossing
                node = 0
                for g in range(1, n_nodes):
                    if abs(z[i, g] - zc) < abs(z[i, node] - zc):
                        node = g
                key_j[j] = key[i, j, node]
            else:
                key_j[j] = key[i, j, 0]
            if has_risk and n_seg > 0 and dens[j] > 0.0:  # the indicator of the crossing's segment
                seg = 0
                for g in range(1, n_nodes - 1):
                    if z[i, g] <= zc:
                        seg += 1
                risk_sum += dens[j] * risk[i, j, min(seg, n_seg - 1)]
        order = np.argsort(key_j, kind="mergesort")  # stable: ties keep the point order
        acc = 0.0
        for a in range(n_pts):
            acc += dens[order[a]]
            cum[a] = acc
        tot = acc
        total[i] = tot
        if has_risk and tot > 0.0:
            risk_row[i] = risk_sum / tot
        if tot <= 0.0:
            continue
        # Sample k: the first point in contour order whose cumulative density reaches
        # (k + 1/2)/K of the total (the last point at most).
        a = 0
        for k in range(count):
            target = (k + 0.5) / count * tot
            while a < n_pts and cum[a] < target:
                a += 1
            pos[k] = min(a, n_pts - 1)
            share[i, k] = tot / count
        for k in range(count - 1, 0, -1):  # repeats merged into their first slot
            if pos[k] == pos[k - 1]:
                share[i, k - 1] += share[i, k]
                share[i, k] = 0.0
        for k in range(count):
            if share[i, k] > 0.0:
                j = order[pos[k]]
                point[i, k] = j
                score[i, k] = zj[j]
                slope[i, k] = -1.0 / rate[j] if dens[j] > 0.0 else math.nan
    return point, score, slope, share, total, risk_row


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
