"""The mass search (physics.masssearch): brackets around roots known in closed form, the
ITP method's bound on the evaluations, and the compiled step against its numpy formulation.

The margins here are power laws, margin_i(m) = (c_i/m)^p_i − 1, met exactly up to m = c_i, so
the limit, min_i c_i (no limit where that is below OEW), is known without the search.
"""

import math

import numpy as np
import pytest

from fieldlimits.physics import masssearch as ms


class _Cases:
    """The little of physics.weightlimit.Cases the search uses: a subset and a cache."""

    def __init__(self, index):
        self.index = np.asarray(index)
        self._cache = {}

    def take(self, k):
        return _Cases(self.index.take(k))


def _power_margins(c, p, cliff=None):
    """Margins (c_i/m)^p_i − 1; impossible (−inf, as a distance the aircraft cannot reach)
    above ``cliff`` (per case) where given."""
    def margins_fn(cases, mass):
        i = cases.index
        calls.append(i.size)
        with np.errstate(divide="ignore", invalid="ignore"):
            m = (c[:, i] / mass) ** p[:, i] - 1.0
        if cliff is not None:
            m[:, mass > cliff[i]] = -np.inf
        return m, None

    calls = []
    return margins_fn, calls


def _problem(n, n_req, seed):
    rng = np.random.default_rng(seed)
    oew = rng.uniform(10e3, 40e3, n)
    mtow = oew * rng.uniform(1.3, 2.2, n)
    # roots spread over and beyond [OEW, MTOW]: some below OEW (no limit), some above MTOW
    c = oew * rng.uniform(0.9, 2.4, (n_req, n))
    p = rng.uniform(0.3, 9.0, (n_req, n))
    p[0] = rng.choice([1e-6, 0.05, 2.0, 8.0], n)  # a flat margin (as a climb gradient) among them
    return oew, mtow, c, p


def _numpy_search(margins_fn, lo, hi, m_hi, tol_kg):
    """The search's step as numpy passes over every case (the formulation the compiled
    kernels replaced), without dropping closed cases: each case follows its own sequence."""

    def value(m):
        with np.errstate(divide="ignore", invalid="ignore"):
            return -np.log1p(np.fmax(m, -1.0))

    def root(ul, up, uq, gl, gp, gq, j):
        f1 = (ul - up) / (gl - gp)
        est = ul - gl * f1
        if j >= 2:
            est = est + gl * gp * ((f1 - (up - uq) / (gp - gq)) / (gl - gq))
        return est

    n = lo.size
    eps, grid = 0.5 * tol_kg, tol_kg / 64.0
    A, B = lo.astype(float).copy(), hi.astype(float).copy()
    uA, uB = np.log(A), np.log(B)
    H = [value(m_hi), np.full(m_hi.shape, np.nan), np.full(m_hi.shape, np.nan)]
    ar0, GB = ms.least_met(H[0])
    AR = [ar0, np.full(n, -1), np.full(n, -1)]
    with np.errstate(invalid="ignore"):
        GA = np.minimum(GB + ms.DISTANCE_MASS_EXPONENT * (uA - uB), -1e-3)
    width0 = np.maximum(B - A, tol_kg)
    n_max = np.ceil(np.log2(width0 / tol_kg)) + ms.ITP_N0
    r_base, k1, lo0 = eps * 2.0 ** n_max, ms.ITP_KAPPA1 / width0, A.copy()
    ul, gl = uB.copy(), GB.copy()
    up = uq = gp = gq = np.full(n, np.nan)
    known, none = np.zeros(n, bool), np.zeros(n, bool)
    side, fails = np.zeros(n, int), np.zeros(n, int)
    feasible_at = []  # the cases found feasible at each trial
    j = 0
    while j < int(n_max.max()) + 3:
        w = B - A
        open_ = w > tol_kg
        if not (open_ | ~(known | none)).any():
            break
        xh = 0.5 * (A + B)
        r = np.maximum(r_base * 2.0 ** -j - 0.5 * w, 0.0)
        delta = np.maximum(k1 * (w * w), 0.5 * eps)
        below = np.zeros(n, bool)
        with np.errstate(all="ignore"):
            rf = (GB * uA - GA * uB) / (GB - GA)
            uf = rf
            if j >= 1:
                est = root(ul, up, uq, gl, gp, gq, j)
                uf = np.where((est > uA) & (est < uB), est, rf)
                kink = AR[0] != AR[1]
                if j >= 2:
                    kink |= AR[1] != AR[2]
                e = root(ul, up, uq, *H, j)
                lowest = np.where((e > uA) & (e < uB), e, np.inf).min(axis=0)
                uf = np.where(kink, np.where(lowest < np.inf, lowest, rf), uf)
                e = root(ul, up, None, H[0], H[1], None, 1)
                below = ~known & (np.where(e < uB, e, np.inf).min(axis=0) <= uA)
            xf = np.exp(uf)
        xf = np.where(np.isfinite(xf), xf, xh)
        d = xh - xf
        sigma = np.sign(d)
        xt = np.where(delta <= np.abs(d), xf + sigma * delta, xh)
        near_b, near_a = (B - xf) < 0.9 * tol_kg, (xf - A) < 0.9 * tol_kg
        xt = np.where(near_b & ~near_a, 0.5 * (xf + B - tol_kg), xt)
        xt = np.where(near_a & ~near_b, 0.5 * (xf + A + tol_kg), xt)
        x = np.where(np.abs(xt - xh) <= r, xt, xh - sigma * r)
        x = np.clip(np.round((x - lo0) / grid) * grid + lo0, A, B)
        check = (~open_ | (j >= 1) & (below | (fails >= ms.OEW_CHECK_FAILS))) & ~known
        x = np.where(check, A, x)
        mg, _ = margins_fn(_Cases(np.arange(n)), x)
        gi = value(mg)
        ar, g = ms.least_met(gi)
        ok = g <= 0.0
        feas, infeas, failed = (open_ | check) & ok, open_ & ~ok & ~check, check & ~ok
        if feas.any():
            feasible_at.append(np.flatnonzero(feas))
        ux = np.log(x)
        GA = np.where(infeas & (side == -1), 0.5 * GA, GA)
        GB = np.where(feas & (side == 1) & ~check, 0.5 * GB, GB)
        A, uA, GA = np.where(feas, x, A), np.where(feas, ux, uA), np.where(feas, g, GA)
        B, uB = np.where(failed, A, B), np.where(failed, uA, uB)
        B, uB, GB = np.where(infeas, x, B), np.where(infeas, ux, uB), np.where(infeas, g, GB)
        known |= feas
        none |= failed
        fails = (fails + infeas) * ~known
        side = np.where(check, 0, np.where(feas, 1, np.where(infeas, -1, side)))
        uq, up, ul = up, ul, ux
        gq, gp, gl = gp, gl, g
        H = [gi, H[0], H[1]]
        AR = [ar, AR[0], AR[1]]
        j += 1
    return A, B, none, feasible_at


@pytest.mark.parametrize("n_req", [1, 3])
def test_brackets_hold_the_closed_form_limit(n_req):
    # The limit of power-law margins is min_i c_i (met with equality there); the bracket must
    # hold it: feasible low end, failing high end, narrower than the tolerance.
    oew, mtow, c, p = _problem(20_000, n_req, seed=n_req)
    fn, _ = _power_margins(c, p)
    m_hi, _ = fn(_Cases(np.arange(oew.size)), mtow)
    searched = m_hi.min(axis=0) < 0.0  # met at MTOW: no search (structural)
    k = np.flatnonzero(searched)
    lo, hi, mh, none, iterations, v1 = ms.bracket_search(_Cases(k), fn, oew[k], mtow[k], m_hi[:, k], 1.0)
    root = c[:, k].min(axis=0)
    assert v1 is None
    np.testing.assert_array_equal(none, root < oew[k])  # no limit where the root is below OEW
    ok = ~none
    assert np.all(lo[ok] <= root[ok]) and np.all(root[ok] < hi[ok])
    assert np.all(hi[ok] - lo[ok] <= 1.0)
    np.testing.assert_array_equal(lo[none], oew[k][none])
    # the margins handed back are those at the high end
    np.testing.assert_array_equal(mh[:, ok], fn(_Cases(k[ok]), hi[ok])[0])
    # ITP's bound: never more than n0 evaluations beyond bisection's ceil(log2(width/tol))
    # (Oliveira & Takahashi 2020, Theorem 2.1), plus OEW itself where it is checked
    bisection = np.ceil(np.log2(np.maximum(mtow[k] - oew[k], 1.0) / 1.0))
    assert iterations <= bisection.max() + ms.ITP_N0 + 1


def test_superlinear_on_smooth_margins():
    # A single smooth margin: the interpolation lands near the root at once, so the mean
    # number of evaluations per case is a small fraction of bisection's (about 15 here).
    oew, mtow, c, p = _problem(20_000, 1, seed=5)
    c[0] = np.minimum(c[0], mtow * 0.99)
    c[0] = np.maximum(c[0], oew * 1.01)
    p[0] = 2.0
    fn, calls = _power_margins(c, p)
    m_hi, _ = fn(_Cases(np.arange(oew.size)), mtow)
    calls.clear()
    ms.bracket_search(_Cases(np.arange(oew.size)), fn, oew, mtow, m_hi, 1.0)
    per_case = sum(calls) / oew.size
    bisection = np.log2((mtow - oew).mean())
    assert per_case < 5.0 < bisection


@pytest.mark.parametrize("n_req", [1, 3])
def test_compiled_step_equals_its_numpy_formulation(n_req):
    # The kernels replaced numpy passes over every case: the same trials, so the same
    # brackets to the bit and the same number of cases evaluated at each trial (the trial
    # masses lie on a grid of tol/64 from OEW, which absorbs a last-bit difference between
    # numpy's exp and log and the C library's).
    oew, mtow, c, p = _problem(5_000, n_req, seed=10 + n_req)
    # a third of the cases impossible above a mass between the root and MTOW: bisection
    # steps and regula falsi with the Illinois halving, besides the interpolation
    rng = np.random.default_rng(3)
    root = c.min(axis=0)
    cliff = np.where(rng.random(oew.size) < 1 / 3, root + rng.uniform(0.0, 1.0, oew.size) * (mtow - root), np.inf)
    fn, calls = _power_margins(c, p, cliff)
    m_hi, _ = fn(_Cases(np.arange(oew.size)), mtow)
    calls.clear()
    opened = []
    lo, hi, _, none, _, _ = ms.bracket_search(_Cases(np.arange(oew.size)), fn, oew, mtow, m_hi, 1.0,
                                              capture=lambda cs, mass, memo, local, index: opened.append(index))
    evaluated = list(calls)
    calls.clear()
    lo_ref, hi_ref, none_ref, opened_ref = _numpy_search(fn, oew, mtow, m_hi, 1.0)
    np.testing.assert_array_equal(none, none_ref)
    np.testing.assert_array_equal(lo, lo_ref)
    np.testing.assert_array_equal(hi, hi_ref)
    # the cases found feasible at each trial (the search drops closed cases; the reference
    # evaluates every case each time)
    assert len(opened) == len(opened_ref)
    for got, ref in zip(opened, opened_ref):
        np.testing.assert_array_equal(got, ref)
    assert evaluated[0] == oew.size and sum(evaluated) < sum(calls)


def test_a_case_alone_equals_its_element_in_a_batch():
    # Each case follows its own sequence: dropping closed cases does not change the others.
    oew, mtow, c, p = _problem(3_000, 3, seed=21)
    fn, _ = _power_margins(c, p)
    m_hi, _ = fn(_Cases(np.arange(oew.size)), mtow)
    lo, hi, _, none, _, _ = ms.bracket_search(_Cases(np.arange(oew.size)), fn, oew, mtow, m_hi, 1.0)
    for i in (0, 7, 1234, 2999):
        one = ms.bracket_search(_Cases([i]), fn, oew[[i]], mtow[[i]], m_hi[:, [i]], 1.0)
        assert (one[0][0], one[1][0], one[3][0]) == (lo[i], hi[i], none[i])


def test_search_value_is_minus_log_one_plus_margin():
    # g = −ln(1 + margin); impossible (≤ −1) and NaN margins give +inf (a bisection step).
    m = np.array([[0.5, -0.25, -1.0, -3.0, np.nan, 0.0]])
    g = ms._search_values(m, np.empty_like(m))
    np.testing.assert_allclose(g[0, :2], [-math.log(1.5), -math.log(0.75)], rtol=1e-15)
    assert np.all(np.isposinf(g[0, 2:5])) and g[0, 5] == 0.0
    least, value = ms.least_met(ms._search_values(np.array([[0.2, -0.1], [0.1, 0.3], [0.1, -0.1]]), np.empty((3, 2))))
    np.testing.assert_array_equal(least, [1, 0])  # the least margin; the first of equal ones
    np.testing.assert_allclose(value, [-math.log(1.1), -math.log(0.9)], rtol=1e-15)
