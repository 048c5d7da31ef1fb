"""The mass search: the largest mass whose requirements are all met, for every case at once.

Each case has a bracket [a, b] on the mass, feasible at a (every margin ≥ 0) and not at b,
narrowed to a tolerance by the ITP method (interpolation, truncation, projection; Oliveira &
Takahashi 2020) on g = −ln(1 + margin), the requirements interpolated each on its own. The
search calls its caller back for the margins of every case still open at one trial mass per
case (:func:`bracket_search`), so the requirements, and how they are evaluated as arrays, stay
with the caller (:mod:`physics.weightlimit`).

The step from one trial to the next is a handful of scalar operations per case (an
interpolated root, a truncation, a projection, the Illinois halving, three evaluations kept
for the next interpolation), over arrays that shrink from tens of thousands of cases to a
few: as numpy passes it was bound by call overhead and temporaries, a fifth of a
transport-rule solve. It is therefore compiled kernels (:mod:`physics.compiled`), each a loop
over the cases: the interpolated roots (:func:`_interpolate`), the next trial masses
(:func:`_propose`), taking in the margins found there (:func:`_record`); the logarithms and
exponentials between them are numpy passes (vectorised). The tests keep the numpy
formulation of the same step as their reference.

Planning estimates only: the aircraft flight manual, the operator's approved performance
methods and local regulations govern.

References
----------
.. [1] I. F. D. Oliveira, R. H. C. Takahashi, "An enhancement of the bisection method
   average performance preserving minmax optimality", *ACM Trans. Math. Software* 47(1),
   2020, Algorithm 1.
.. [2] W. H. Press et al., *Numerical Recipes*, 3rd ed., §9.1–9.2 (bisection, false position).
.. [3] M. Dowell, P. Jarratt, "A modified regula falsi method for computing the root of an
   equation", *BIT* 11, 1971 (the Illinois method).
"""

from __future__ import annotations

import math

import numpy as np

from fieldlimits.physics.compiled import kernel

#: ITP parameters (Oliveira & Takahashi 2020): kappa1 = ITP_KAPPA1/(b0 − a0), kappa2, n0.
#: A small kappa1 keeps the first steps close to the interpolated root (the margins are
#: smooth in the mass); n0 = 3 allows at most three evaluations beyond bisection.
ITP_KAPPA1 = 1e-4
ITP_KAPPA2 = 2.0
ITP_N0 = 3

#: Exponent p of the estimate d ∝ m^p used for the value at OEW before it is evaluated
#: (ground run ∝ V_LOF²/a with V_LOF² ∝ m and a falling with m: p ≈ 2). [–]
DISTANCE_MASS_EXPONENT = 2.0

#: Failed trials before OEW is evaluated when no trial has yet succeeded (the secant through
#: two failed trials landing at or below OEW calls for it at once). [–]
OEW_CHECK_FAILS = 3

#: Cases whose bracket has closed are dropped from the evaluations once those still open are
#: at most this share of the cases evaluated (gathering the state costs far less than
#: evaluating the closed ones again, above all with the engine-failure requirements). [–]
COMPACT_SHARE = 0.7

# rows of the search state F (see bracket_search)
_ROWS = 15
(_A, _B, _UA, _UB, _GA, _GB, _R_BASE, _K1, _LO0, _UL, _UP, _UQ, _GL, _GP, _GQ) = range(_ROWS)


def least_met(g):
    """Index (int8) and value of the largest g_i (the least-met requirement) over the first
    axis; the first of equal values, as ``argmax``. A pass over the few requirement rows:
    ``argmax`` along a short first axis is many times slower."""
    val = g[0]
    i = np.zeros(g.shape[1:], dtype=np.int8)
    for k in range(1, g.shape[0]):
        more = g[k] > val
        i += more * np.int8(k) - more * i  # i = k where more (branch-free: the mask is random)
        val = np.maximum(val, g[k])
    return i, val


def _search_values(margins, out):
    """g = −ln(1 + margin) of every margin, into ``out``: the value the search interpolates
    (−margin to first order).

    For the distance margins A/d − 1 this is ln(d/A), close to linear in ln m (d grows
    roughly as m²); its sign is that of −margin, so feasibility is unchanged. A margin ≤ −1
    (impossible) or NaN gives +inf, i.e. a bisection step. (A numpy pass over every
    requirement and case: numpy's log1p is vectorised, many times faster than one call per
    value in a compiled loop.)"""
    np.fmax(margins, -1.0, out=out)  # NaN → −1
    with np.errstate(divide="ignore"):
        np.log1p(out, out=out)
    return np.negative(out, out=out)


@kernel
def _root(ul, up, uq, gl, gp, gq, j):
    """Root in u of the interpolant through the last evaluations (u, g): the secant through
    the last two (j = 1), inverse quadratic interpolation through the last three (j ≥ 2), in
    Newton's form ul − gl u[gl, gp] + gl gp u[gl, gp, gq]; NaN or inf where degenerate."""
    f1 = (ul - up) / (gl - gp)  # divided difference du/dg
    est = ul - gl * f1
    if j >= 2:
        est = est + gl * gp * ((f1 - (up - uq) / (gp - gq)) / (gl - gq))
    return est


@kernel
def _open_cases(F, known, none, tol, live):
    """Mark the cases still searched (bracket wider than ``tol``, or closed with OEW not yet
    evaluated) in ``live``; their number."""
    count = 0
    for c in range(F.shape[1]):
        go = (F[_B, c] - F[_A, c] > tol) or not (known[c] or none[c])
        live[c] = go
        count += go
    return count


@kernel
def _interpolate(j, F, H, AR, head, known, u, below):
    """The estimate of each case's root in u = ln m (``u``) and whether the secants through
    its failed trials put the root at or below the low end (``below``). ``H`` and ``AR``
    hold the last three evaluations' values and least-met requirements as a ring, the newest
    at ``head``. See :func:`bracket_search`."""
    h0, h1, h2 = head, (head + 2) % 3, (head + 1) % 3  # newest, previous, the one before
    n_req = H.shape[1]
    for c in range(F.shape[1]):
        ua, ub, ga, gb = F[_UA, c], F[_UB, c], F[_GA, c], F[_GB, c]
        ul, up, uq, gl, gp, gq = F[_UL, c], F[_UP, c], F[_UQ, c], F[_GL, c], F[_GP, c], F[_GQ, c]
        # regula falsi on the bracket (the least margin); the secant through the last two
        # evaluations, or inverse quadratic interpolation through the last three, where it
        # falls inside the bracket: of the least margin where the same requirement was least
        # met at those evaluations, else of each requirement on its own, the lowest of their
        # roots
        uf = (gb * ua - ga * ub) / (gb - ga)
        low = False
        if j >= 1:
            est = _root(ul, up, uq, gl, gp, gq, j)
            if est > ua and est < ub:
                uf = est
            kink = AR[h0, c] != AR[h1, c]
            if j >= 2 and AR[h1, c] != AR[h2, c]:
                kink = True
            if kink:
                lowest = np.inf
                for i in range(n_req):
                    e = _root(ul, up, uq, H[h0, i, c], H[h1, i, c], H[h2, i, c], j)
                    if e > ua and e < ub and e < lowest:
                        lowest = e
                if lowest < np.inf:
                    uf = lowest
                else:
                    uf = (gb * ua - ga * ub) / (gb - ga)
            if not known[c]:  # the secants of the requirements, through failed trials
                lowest = np.inf
                for i in range(n_req):
                    e = _root(ul, up, uq, H[h0, i, c], H[h1, i, c], 0.0, 1)
                    if e < ub and e < lowest:
                        lowest = e
                low = lowest <= ua
        u[c] = uf
        below[c] = low


@kernel
def _propose(j, tol, eps, grid, F, xf_all, below, known, fails, x, open_, check):
    """The next trial mass of every case (``x``) from its interpolated root ``xf_all`` (a
    mass: exp of :func:`_interpolate`'s), and which brackets are open and which cases
    evaluate OEW itself (``check``). See :func:`bracket_search`."""
    scale = 2.0 ** -j
    near = 0.9 * tol
    half_eps = 0.5 * eps
    for c in range(F.shape[1]):
        a, b = F[_A, c], F[_B, c]
        w = b - a
        is_open = w > tol
        xh = 0.5 * (a + b)
        r = F[_R_BASE, c] * scale - 0.5 * w  # projection radius eps 2^(n_max − j) − (b − a)/2
        if r < 0.0:
            r = 0.0
        delta = F[_K1, c] * (w * w)  # kappa2 = 2
        if delta < half_eps:  # at least half a tolerance: straddle the root
            delta = half_eps
        xf = xf_all[c]
        if not math.isfinite(xf):
            xf = xh
        d = xh - xf
        sigma = 1.0 if d > 0.0 else (-1.0 if d < 0.0 else 0.0)
        xt = xf + sigma * delta if delta <= abs(d) else xh
        # close-out: the estimate within 0.9 tolerance of an end → step across it, to midway
        # between it and one tolerance from that end, so the bracket closes
        near_b, near_a = (b - xf) < near, (xf - a) < near
        if near_b and not near_a:
            xt = 0.5 * (xf + b - tol)
        elif near_a and not near_b:
            xt = 0.5 * (xf + a + tol)
        xv = xt if abs(xt - xh) <= r else xh - sigma * r  # the projection binds only in the worst case
        # on a grid of tol/64 from the starting end: rounding noise of the margins (SIMD paths
        # differ with the batch) then cannot move the result, so a scalar call equals the
        # array element exactly
        lo0 = F[_LO0, c]
        xv = np.rint((xv - lo0) / grid) * grid + lo0
        xv = min(max(xv, a), b)
        # OEW itself where the bracket closed before any trial succeeded, where the secant
        # through two failed trials puts the root at or below OEW, or after OEW_CHECK_FAILS
        # failed trials
        chk = (not is_open or (j >= 1 and (below[c] or fails[c] >= OEW_CHECK_FAILS))) and not known[c]
        if chk:
            xv = a
        x[c] = xv
        open_[c] = is_open
        check[c] = chk


@kernel
def _record(x, ux, margins, values, least, F, MH, known, none, side, fails, open_, check, feasible):
    """Take in the margins found at the trial masses ``x`` (``ux`` = ln x; ``values`` their
    :func:`_search_values`): move the bracket's ends (with the Illinois halving of an end
    kept twice in a row), keep the last evaluation for the interpolation, the least-met
    requirement in ``least``, mark the ``feasible`` trials. See :func:`bracket_search`."""
    n_req = margins.shape[0]
    for c in range(x.shape[0]):
        best = 0
        g = values[0, c]
        for i in range(1, n_req):
            gi = values[i, c]
            if gi > g:
                g = gi
                best = i
        least[c] = best
        ok = g <= 0.0
        is_open, chk = open_[c], check[c]
        feas = (is_open or chk) and ok
        infeas = is_open and not ok and not chk
        failed = chk and not ok
        feasible[c] = feas
        xc = x[c]
        uc = ux[c]
        prev = side[c]
        kn = known[c] or feas
        known[c] = kn
        if failed:
            none[c] = True
        fails[c] = 0 if kn else fails[c] + (1 if infeas else 0)  # failed trials while the low end is unknown
        # Illinois: an end kept twice in a row has its value halved for the interpolation
        if infeas and prev == -1:
            F[_GA, c] *= 0.5
        if feas and prev == 1 and not chk:
            F[_GB, c] *= 0.5
        if feas:
            F[_A, c], F[_UA, c], F[_GA, c] = xc, uc, g
        if failed:
            F[_B, c], F[_UB, c] = F[_A, c], F[_UA, c]
        if infeas:
            F[_B, c], F[_UB, c], F[_GB, c] = xc, uc, g
            for i in range(n_req):
                MH[i, c] = margins[i, c]
        s = prev
        if feas:
            s = 1
        elif infeas:
            s = -1
        if chk:
            s = 0  # OEW was checked
        side[c] = s
        F[_UQ, c], F[_UP, c], F[_UL, c] = F[_UP, c], F[_UL, c], uc
        F[_GQ, c], F[_GP, c], F[_GL, c] = F[_GP, c], F[_GL, c], g


def bracket_search(cases, margins_fn, lo, hi, m_hi, tol_kg, capture=None):
    """Vectorised ITP bracket search for the largest mass with least margin ≥ 0.

    Parameters
    ----------
    cases : physics.weightlimit.Cases
        Prepared cases (one per element of ``lo``).
    margins_fn : callable
        ``margins_fn(cases, mass) -> (margins, memo)``: every requirement's margin, shape
        (n_requirements, n) (−inf where impossible), and the trial mass's memo. [–]
    lo, hi : numpy.ndarray
        Bracket: OEW (not yet evaluated) and a mass that fails (MTOW). [kg]
    m_hi : numpy.ndarray
        Margins at ``hi``, shape (n_requirements, n). [–]
    tol_kg : float
        Final bracket width. [kg]
    capture : callable, optional
        ``capture(cases, mass, memo, local, index)``, called after each evaluation with the
        positions ``local`` (into ``cases``) and ``index`` (into the full arrays) of the
        cases found feasible at ``mass``: the last call for a case is at its final mass.

    Returns
    -------
    lo, hi : numpy.ndarray
        Bracket narrower than ``tol_kg``, feasible at ``lo``, infeasible at ``hi``; where
        ``none``, lo = hi = OEW. [kg]
    margins_hi : numpy.ndarray
        Every requirement's margin at ``hi``. [–]
    none : numpy.ndarray of bool
        Cases that fail at OEW (``no_takeoff``).
    iterations : int
        Evaluations made. [–]
    v1_state : dict or None
        The last V1 of each case and the mass it was found for (warm start for the final
        evaluations). [m/s], [kg]

    Notes
    -----
    Interpolate each requirement on its own (g_i = −ln(1 + margin_i), :func:`_search_values`):
    the secant through the last two evaluations, or inverse quadratic interpolation through
    the last three, where it falls inside the bracket; the estimate is the lowest of the
    requirements' roots (the least margin, max g_i, has a kink wherever the requirement that
    is least met changes, e.g. a climb margin, flat in the mass, least met at light masses
    and a distance binding at the limit; interpolating it across the kink costs steps).
    Where no requirement's estimate is inside, regula falsi on max g_i with the Illinois
    halving of an end's value when the other end has moved twice in a row. Then truncate towards
    the midpoint by max(kappa1 (b − a)^kappa2, eps/2) (the floor of eps/2 makes the step land
    across the root once the interpolation is that accurate, so the bracket closes from both
    sides), project into the ball of radius eps 2^(n_max − j) − (b − a)/2 around the midpoint
    (eps = tol/2, n_max = ceil(log2((b0 − a0)/tol)) + n0): never more than n0 evaluations
    beyond bisection, superlinear where the margin is smooth. A margin of −inf (impossible)
    makes that step a bisection.

    OEW is evaluated only when needed: until then its value is estimated from the value at
    MTOW as g(MTOW) + p ln(OEW/MTOW) (:data:`DISTANCE_MASS_EXPONENT`, d ∝ m^p); a case
    found feasible at a trial mass is feasible at OEW (margins fall with the mass). A case
    with no feasible trial yet has OEW evaluated when the secant through its failed trials
    puts the root at or below OEW, after :data:`OEW_CHECK_FAILS` failed trials, or when its
    bracket has closed; failing there ends its search as ``no_takeoff``. Each case follows
    its own sequence, so a scalar call equals the array element. Cases whose bracket has
    closed are dropped from the evaluations once they are at least 1 − :data:`COMPACT_SHARE`
    of those still evaluated.

    References
    ----------
    .. [1] Oliveira & Takahashi (2020), Algorithm 1. .. [2] Numerical Recipes §9.1–9.2.
    .. [3] Dowell & Jarratt (1971).
    """
    lo_out, hi_out = lo.astype(float).copy(), hi.astype(float).copy()
    mhi_out = np.array(m_hi, dtype=float, copy=True, order="C")
    none_out = np.zeros(lo.size, dtype=bool)
    v1_state = None  # last V1 of each case (engine-failure search), handed back for reuse
    if lo.size == 0:
        return lo_out, hi_out, mhi_out, none_out, 0, v1_state
    tol = float(tol_kg)
    eps = 0.5 * tol
    grid = tol / 64.0
    n_req = mhi_out.shape[0]
    # State of the cases still searched, one column each (compacted together as brackets
    # close): F, rows _A … _GQ: ends A < B (masses, their logarithms u and the interpolated
    # values G, Illinois-halved), the ITP constants, and the last three evaluations (u, g)
    # for the secant and inverse quadratic steps; margins at B in MH; each requirement's
    # value at the last three evaluations in H (a ring, the newest at ``head``) and which was
    # least met in AR (the same ring)
    # (where that changed, the steps interpolate each requirement on its own: the least
    # margin has a kink there).
    F = np.empty((_ROWS, lo.size))
    F[_A], F[_B] = lo_out, hi_out
    MH = mhi_out.copy()
    np.log(F[_A], out=F[_UA])
    np.log(F[_B], out=F[_UB])
    H = np.full((3, n_req, lo.size), np.nan)
    AR = np.full((3, lo.size), -1, dtype=np.int8)
    head = 0  # H[head], AR[head]: the newest evaluation (a ring of three)
    AR[0], F[_GB] = least_met(_search_values(MH, H[0]))
    with np.errstate(invalid="ignore"):
        F[_GA] = np.minimum(F[_GB] + DISTANCE_MASS_EXPONENT * (F[_UA] - F[_UB]), -1e-3)  # estimate until evaluated
    width0 = np.maximum(F[_B] - F[_A], tol)
    n_max = np.ceil(np.log2(width0 / tol)) + ITP_N0
    F[_R_BASE] = eps * 2.0 ** n_max  # projection radius eps 2^(n_max − j), before − (b − a)/2
    F[_K1] = ITP_KAPPA1 / width0
    F[_LO0] = F[_A]
    F[_UL], F[_GL] = F[_UB], F[_GB]
    F[_UP] = F[_UQ] = F[_GP] = F[_GQ] = np.nan
    idx = np.arange(lo.size)
    known = np.zeros(lo.size, dtype=bool)  # the low end is known feasible (evaluated, or a trial)
    none = np.zeros(lo.size, dtype=bool)
    side = np.zeros(lo.size, dtype=np.int8)  # +1: the low end moved last, −1: the high end
    fails = np.zeros(lo.size, dtype=np.int8)  # trials failed while the low end is not yet known
    live = np.empty(lo.size, dtype=bool)
    sub = cases
    # V1, the mass it was found for (and the previous pair) of each case's own last trial: a
    # closed bracket evaluated until the batch is compacted keeps those of the trial before
    # it closed (taken when it is first left out, or when the batch is compacted), so what
    # follows does not depend on the batch
    kept = np.zeros(lo.size, dtype=bool)

    def keep_v1(k):
        nonlocal v1_state
        st = sub._cache.get("engine_failure_state")
        if k.size and st and st.get("v1") is not None:
            if v1_state is None:
                v1_state = {}
            i = idx.take(k)
            for key, val in st.items():
                if np.shape(val) == idx.shape:
                    if key not in v1_state:  # (setdefault would build the default every time)
                        v1_state[key] = np.full(lo.size, np.nan)
                    v1_state[key][i] = val.take(k)
            kept[k] = True

    def flush(k):
        i = idx.take(k)
        lo_out[i], hi_out[i], none_out[i] = F[_A].take(k), F[_B].take(k), none.take(k)
        mhi_out[:, i] = MH.take(k, axis=1)
        keep_v1(k[~kept.take(k)])

    j = 0
    limit_iter = int(n_max.max()) + 3
    while j < limit_iter:
        n_live = _open_cases(F, known, none, tol, live)
        if n_live == 0:
            break
        if n_live <= COMPACT_SHARE * idx.size:
            flush(np.flatnonzero(~live))
            keep = np.flatnonzero(live)
            sub = sub.take(keep)
            F, MH, AR, H = F.take(keep, axis=1), MH.take(keep, axis=1), AR.take(keep, axis=1), H.take(keep, axis=2)
            idx, known, none, side, fails, kept, live = (
                v.take(keep) for v in (idx, known, none, side, fails, kept, live))
        # the trial masses: a new array each time (an evaluation may keep it, as the mass its
        # V1 was found for)
        x = np.empty(idx.size)
        open_, check, feasible = (np.empty(idx.size, dtype=bool) for _ in range(3))
        u, below = np.empty(idx.size), np.empty(idx.size, dtype=bool)
        _interpolate(j, F, H, AR, head, known, u, below)
        with np.errstate(over="ignore", invalid="ignore"):
            xf = np.exp(u, out=u)  # (vectorised: several times faster than exp per case in the loop)
        _propose(j, tol, eps, grid, F, xf, below, known, fails, x, open_, check)
        if j and sub._cache.get("engine_failure_state"):
            # the cases this trial does not serve for the first time: their last trial's V1
            keep_v1(np.flatnonzero(~(open_ | check | kept)))
        mg, memo = margins_fn(sub, x)
        mg = np.ascontiguousarray(np.broadcast_to(np.asarray(mg, dtype=float), (n_req, idx.size)))
        head = (head + 1) % 3  # the new evaluation takes the place of the oldest
        _record(x, np.log(x), mg, _search_values(mg, H[head]), AR[head], F, MH, known, none, side, fails, open_,
                check, feasible)
        if capture is not None:
            fi = np.flatnonzero(feasible)
            if fi.size:
                capture(sub, x, memo, fi, idx.take(fi))
        j += 1
    flush(np.arange(idx.size))
    return lo_out, hi_out, mhi_out, none_out, j, v1_state
