"""Tests of physics.reliabilitylevels: flown direction, share of days, reliability levels,
binding days and the refinement with direct solves.

Masses here come from simple invented closed-form mass functions m(T, h) so every expected
value can be computed by hand or by an independent fine numerical integration; the
interpolation error against the real weight-limit solver is tested in
tests/pipeline/test_reliability.py.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from fieldlimits.physics import climatology, limits, reliabilitylevels
from tests.physics._climate_fixtures import Z, curved_mass, linear_mass, point_masses, rose16


# --------------------------------------------------------------------------------------
# Reliability levels
# --------------------------------------------------------------------------------------
OEW, MTOW = 40_000.0, 70_000.0


def _levels(point_mass, weight, levels=reliabilitylevels.DEFAULT_LEVELS, **kw):
    n = point_mass.shape[0]
    return reliabilitylevels.reliability_masses(point_mass, Z, weight, np.full(n, OEW), np.full(n, MTOW),
                                   levels=levels, **kw)


def test_flown_direction_equals_a_plain_loop_over_days():
    # The definition written out day by day (a plain loop, no arrays): each wind point and
    # node flies the usable direction with the highest mass (first on ties); a point usable
    # on no direction is lost to the limit that excludes its best candidate (highest mass
    # summed over the nodes, NaN as 0; crosswind where that direction exceeds both).
    rng = np.random.default_rng(23)
    n, n_dir, n_pts, n_nodes = 40, 4, 15, 6
    raw = np.round(rng.uniform(40_000.0, 70_000.0, (n, n_dir, n_pts, n_nodes)), -3)  # ties
    raw[rng.random(raw.shape) < 0.15] = np.nan
    raw[0, :, 0, :] = np.nan  # no takeoff on any direction
    cross = rng.random((n, n_dir, n_pts)) < 0.35
    tail = rng.random((n, n_dir, n_pts)) < 0.25
    valid = rng.random((n, n_dir)) < 0.85
    direction, mass, lost = reliabilitylevels.flown_direction(raw, cross, tail, valid)
    cw, tw = limits.code("crosswind_limit"), limits.code("tailwind_limit")
    for i in range(n):
        for j in range(n_pts):
            usable = [d for d in range(n_dir) if valid[i, d] and not cross[i, d, j] and not tail[i, d, j]]
            if not usable:
                merit = [np.nansum(raw[i, d, j]) if valid[i, d] else -np.inf for d in range(n_dir)]
                best = int(np.argmax(merit))
                assert lost[i, j] == (cw if cross[i, best, j] else tw)
                assert np.all(direction[i, j] == best) and np.all(mass[i, j] == -np.inf)
                continue
            assert lost[i, j] == -1
            for g in range(n_nodes):
                cand = [(raw[i, d, j, g], -d) for d in usable if not np.isnan(raw[i, d, j, g])]
                if cand:
                    top, neg_d = max(cand)
                    assert (direction[i, j, g], mass[i, j, g]) == (-neg_d, top)
                else:
                    assert direction[i, j, g] == usable[0] and np.isnan(mass[i, j, g])
    assert np.any(lost >= 0) and np.any(np.isnan(mass))  # both cases met


def test_single_wind_point_zero_spread_is_the_direct_value_on_the_best_direction():
    # All wind from 250° at 8 m/s; directions 250° (into wind) and 070° (downwind).
    heading = np.array([250.0, 70.0])
    h, cx, tx = climatology.runway_usability(250.0, 8.0, heading[:, None], 10.0, 15.0)  # (D, J=1)
    t = np.full(Z.size, 301.0)  # zero spread: every node at the mean
    raw = linear_mass(t[None, None, :], h[:, :, None])[None]  # (1, D, 1, G)
    d, m, lost = reliabilitylevels.flown_direction(raw, cx[None], tx[None])
    assert np.all(d[0, 0] == 0)  # into wind, on every day
    r = _levels(m, np.ones((1, 1)))
    direct = linear_mass(301.0, 0.5 * 8.0)  # 14 CFR 25.105(d)(1): half the headwind
    np.testing.assert_allclose(r.mass_kg, direct, atol=1.0)


def test_calm_only_equals_design_day_and_normal_quantiles():
    mean, sd = 303.0, 3.0
    m = point_masses(linear_mass, [mean], [sd], [[0.0]])  # (1, 1, G)
    r = _levels(m, np.ones((1, 1)), levels=(0.5, 0.85, 0.95))
    t_p = mean + sd * stats.norm.ppf([0.5, 0.85, 0.95])  # the p quantile of the day's T
    # Linear mass in T: the interpolation is exact; bisection tolerance 1 kg.
    np.testing.assert_allclose(r.mass_kg[0], linear_mass(t_p, 0.0), atol=1.0)
    assert r.mass_kg[0, 0] == pytest.approx(linear_mass(mean, 0.0), abs=1.0)  # design day


def test_zero_spread_median_equals_design_day_at_the_mean():
    c, w, lo, hi, f, calm = rose16(seed=5, calm=0.6)
    d, s, wt = climatology.wind_rose_points(c, w, lo, hi, f, calm)
    h, cx, tx = climatology.runway_usability(d, s, 0.0, 5.0, 12.0)
    m = point_masses(linear_mass, [300.0], [0.0], h[None])
    m = np.where((cx | tx)[None, :, None], -np.inf, m)
    r = _levels(m, wt[None], levels=(0.5,))
    # More than half the days are calm: the median day is the calm design day.
    assert r.mass_kg[0, 0] == pytest.approx(linear_mass(300.0, 0.0), abs=1.0)


def test_levels_fall_as_p_rises_and_match_a_fine_discretisation():
    c, w, lo, hi, f, calm = rose16(seed=11)
    d, s, wt = climatology.wind_rose_points(c, w, lo, hi, f, calm)
    heading = np.array([40.0, 220.0, 130.0])
    h, cx, tx = climatology.runway_usability(d[None], s[None], heading[:, None], 5.0, 10.0)  # (D, J)
    mean, sd = 301.0, 3.5
    t = climatology.daily_max_temperature_k(Z, mean, sd)
    # Direction-dependent masses (different runway lengths): scale per direction.
    scale = np.array([1.0, 0.97, 0.9])[:, None, None]
    raw = (scale * curved_mass(t[None, None, :], h[:, :, None]))[None]
    dirs, m, lost = reliabilitylevels.flown_direction(raw, cx[None], tx[None])
    levels = (0.3, 0.5, 0.7, 0.85, 0.95)
    r = _levels(m, wt[None], levels=levels, lost_reason=lost)
    got = r.mass_kg[0]
    assert np.all(np.diff(got) <= 1e-9)
    # Independent check: 20 001 equal-probability temperature strata × the wind points,
    # exact mass function, each day on its best usable direction, weighted lower quantile.
    zz = stats.norm.ppf((np.arange(20001) + 0.5) / 20001)
    tt = mean + sd * zz
    usable = ~(cx | tx)  # (D, J)
    exact = scale * curved_mass(tt[None, None, :], h[:, :, None])  # (D, J, T)
    mass = np.max(np.where(usable[:, :, None], exact, -np.inf), axis=0)
    assert np.array_equal(np.isfinite(mass[:, 0]), lost[0] < 0)
    mass = np.where((lost[0] < 0)[:, None], np.minimum(mass, MTOW), 0.0)
    ww = np.repeat(wt[:, None] / zz.size, zz.size, axis=1)
    order = np.argsort(-mass.ravel())
    cum = np.cumsum(ww.ravel()[order])
    for p, g in zip(levels, got):
        ref = mass.ravel()[order][np.searchsorted(cum, p - 1e-12)]
        # Piecewise-linear interpolation of a curved mass over ~4 K node spacing: the
        # curvature term 12 kg/K² × (ΔT/2)² ≈ 50 kg bounds the difference.
        assert g == pytest.approx(ref, abs=60.0)


def test_level_on_a_share_of_days_exactly_p_is_the_top_of_that_stretch():
    # Zero temperature spread: 50 % of days at 60 t, 30 % at 50 t, 20 % with no takeoff. For
    # p = 0.5 the share of days is exactly p for every mass in (50 t, 60 t]: by the definition
    # of the lower (1 − p) quantile the level is 60 t (the search stops within its 1 kg
    # tolerance below it; it used to creep up from its first estimate 1 kg a step).
    node = np.array([60_000.0, 50_000.0, np.nan])[None, :, None]
    m = np.repeat(node, Z.size, axis=2)
    r = _levels(m, np.array([[0.5, 0.3, 0.2]]), levels=(0.5, 0.8, 0.85))
    assert 60_000.0 - 1.0 <= r.mass_kg[0, 0] <= 60_000.0 + 0.05
    assert 50_000.0 - 1.0 <= r.mass_kg[0, 1] <= 50_000.0 + 0.05
    assert np.isnan(r.mass_kg[0, 2]) and r.reason[0, 2] == limits.code("no_takeoff")


def test_crosswind_limit_removes_exactly_the_share_above_the_limit():
    # Runway 000/180; cells from 090° and 270° at 12–16 m/s are wholly above a 10 m/s
    # crosswind limit (12 sin 75° = 11.6); they carry 7 % of days.
    c = np.array([0.0, 180.0, 90.0, 270.0])
    w = np.full(4, 30.0)
    lo = np.array([0.0, 0.0, 12.0, 12.0])
    hi = np.array([4.0, 4.0, 16.0, 16.0])
    f = np.array([0.40, 0.43, 0.035, 0.035])
    d, s, wt = climatology.wind_rose_points(c, w, lo, hi, f, 0.10)
    heading = np.array([0.0, 180.0])
    h, cx, tx = climatology.runway_usability(d[None], s[None], heading[:, None], 10.0, 10.0)
    raw = point_masses(linear_mass, [[300.0, 300.0]], [[0.0, 0.0]], h[None])  # (1, D, J, G)
    dirs, m, lost = reliabilitylevels.flown_direction(raw, cx[None], tx[None])
    r = _levels(m, wt[None], levels=(0.90, 0.95), lost_reason=lost)
    assert r.possible_share[0] == pytest.approx(0.93, abs=1e-12)
    assert np.isfinite(r.mass_kg[0, 0])
    assert np.isnan(r.mass_kg[0, 1]) and r.reason[0, 1] == limits.code("crosswind_limit")
    # Exactly the points of the 090°/270° cells are lost, each to the crosswind limit.
    across = (s >= 12.0)
    np.testing.assert_array_equal(lost[0] == limits.code("crosswind_limit"), across)
    # Raising the limit to 17 m/s brings those days back.
    h, cx, tx = climatology.runway_usability(d[None], s[None], heading[:, None], 10.0, 17.0)
    _, m2, lost2 = reliabilitylevels.flown_direction(raw, cx[None], tx[None])
    assert _levels(m2, wt[None], lost_reason=lost2).possible_share[0] == pytest.approx(1.0)


def test_tailwind_only_direction_is_lost_with_tailwind_reason():
    # One direction (heading 000°), all wind from 180° at 8–10 m/s: tailwind above 5 m/s.
    d, s, wt = climatology.wind_rose_points(np.array([180.0]), np.array([10.0]), np.array([8.0]),
                                     np.array([10.0]), np.array([1.0]), 0.0)
    h, cx, tx = climatology.runway_usability(d[None], s[None], np.array([[0.0]]), 5.0, 15.0)
    raw = point_masses(linear_mass, [[300.0]], [[2.0]], h[None])
    _, m, lost = reliabilitylevels.flown_direction(raw, cx[None], tx[None])
    r = _levels(m, wt[None], levels=(0.5,), lost_reason=lost)
    assert np.isnan(r.mass_kg[0, 0]) and r.reason[0, 0] == limits.code("tailwind_limit")
    assert r.possible_share[0] == 0.0


def test_symmetric_rose_gives_the_same_result_for_opposite_directions():
    c, w, lo, hi, f, calm = rose16(seed=2)
    # Make it symmetric under a 180° rotation: average each cell with its opposite.
    f = f.reshape(16, -1)
    f = 0.5 * (f + np.roll(f, 8, axis=0))
    f = f.ravel()
    d, s, wt = climatology.wind_rose_points(c, w, lo, hi, f, calm)
    out = []
    for heading in (65.0, 245.0):
        h, cx, tx = climatology.runway_usability(d[None], s[None], np.array([[heading]]), 5.0, 10.0)
        raw = point_masses(curved_mass, [[299.0]], [[3.0]], h[None])
        _, m, lost = reliabilitylevels.flown_direction(raw, cx[None], tx[None])
        r = _levels(m, wt[None], lost_reason=lost)
        out.append((r.mass_kg[0], r.share_days[0], r.possible_share[0]))
    np.testing.assert_allclose(out[0][0], out[1][0], atol=1e-6)
    assert out[0][1] == pytest.approx(out[1][1]) and out[0][2] == pytest.approx(out[1][2])


def test_no_takeoff_nodes_count_as_not_possible():
    # Calm only; mass possible only up to the node z = 1.0 (NaN at the two hottest nodes).
    m = point_masses(linear_mass, [300.0], [3.0], [[0.0]])
    m[..., Z > 1.0] = np.nan
    r = _levels(m, np.ones((1, 1)), levels=(0.5, 0.9))
    # Days hotter than the last possible node are not possible: Phi(1.0) = 0.8413.
    assert r.possible_share[0] == pytest.approx(stats.norm.cdf(1.0), abs=1e-6)
    assert r.mass_kg[0, 0] == pytest.approx(linear_mass(300.0, 0.0), abs=1.0)
    assert np.isnan(r.mass_kg[0, 1]) and r.reason[0, 1] == limits.code("no_takeoff")


def test_structural_cap_and_share_of_days_at_mtow():
    # Mass 70 t (MTOW) reached at T ≤ 287.5 K: share of days = Phi((287.5 − 290)/5).
    m = point_masses(linear_mass, [290.0], [5.0], [[0.0]])
    r = _levels(m, np.ones((1, 1)), levels=(0.2, 0.5))
    t_mtow = 300.0 - (MTOW - 60_000.0) / 800.0
    # Tolerance: masses within 0.05 kg count as achieved (tie rule), and single precision.
    assert r.share_days[0] == pytest.approx(stats.norm.cdf((t_mtow - 290.0) / 5.0), abs=2e-5)
    assert r.mass_kg[0, 0] == MTOW  # 0.2 < 0.31: at least 20 % of days reach MTOW
    assert r.mass_kg[0, 1] == pytest.approx(linear_mass(290.0, 0.0), abs=1.0)


def test_share_of_days_is_the_inverse_of_the_levels():
    c, w, lo, hi, f, calm = rose16(seed=8)
    d, s, wt = climatology.wind_rose_points(c, w, lo, hi, f, calm)
    h, cx, tx = climatology.runway_usability(d, s, 300.0, 5.0, 12.0)
    m = point_masses(curved_mass, [302.0], [4.0], h[None])
    m = np.where((cx | tx)[None, :, None], -np.inf, m)
    r = _levels(m, wt[None], levels=(0.4, 0.6, 0.8))
    s_at = reliabilitylevels.share_of_days(r.mass_kg, m, Z, wt[None])
    np.testing.assert_allclose(s_at[0], [0.4, 0.6, 0.8], atol=2e-4)


def test_binding_day_reproduces_the_level_mass():
    c, w, lo, hi, f, calm = rose16(seed=9)
    d, s, wt = climatology.wind_rose_points(c, w, lo, hi, f, calm)
    h, cx, tx = climatology.runway_usability(d, s, 120.0, 5.0, 12.0)
    mean, sd = 300.0, 3.0
    m = point_masses(linear_mass, [mean], [sd], h[None])
    m = np.where((cx | tx)[None, :, None], -np.inf, m)
    r = _levels(m, wt[None], levels=(0.3, 0.5, 0.8))
    assert np.all(np.isfinite(r.mass_kg))
    j = r.point[0]
    t_b = mean + sd * r.score[0]
    # On the binding day (its wind point, its temperature) the mass is the level mass.
    np.testing.assert_allclose(linear_mass(t_b, h[j]), r.mass_kg[0], atol=2.0)


def test_scalar_group_equals_batch_element():
    c, w, lo, hi, f, calm = rose16(seed=4)
    d, s, wt = climatology.wind_rose_points(c, w, lo, hi, f, calm)
    h, cx, tx = climatology.runway_usability(d, s, 10.0, 5.0, 12.0)
    ms = [point_masses(curved_mass, [t], [sd], h[None]) for t, sd in ((296.0, 2.0), (305.0, 5.0))]
    ms = [np.where((cx | tx)[None, :, None], -np.inf, m) for m in ms]
    batch = _levels(np.concatenate(ms), np.stack([wt, wt]))
    single = _levels(ms[1], wt[None])
    np.testing.assert_allclose(batch.mass_kg[1], single.mass_kg[0], atol=1.0)


def _brute_force_quantile(node_mass, scores, weight, p, oew, mtow, n_days=200_001):
    """Lower (1 − p) quantile of the day-to-day mass from a dense sample of days, and the
    quantiles at p ± 0.5/n_days (the sample's own uncertainty: with equal-probability
    temperature strata represented by their medians, a point's share of days achieving a
    mass is within half a stratum, w_j × 0.5/n_days, of the exact one).

    Each wind point j gets n_days equal-probability temperature scores; a day's mass is its
    point's node masses interpolated linearly in the score (extended linearly beyond the end
    nodes), capped at MTOW, and 0 (no takeoff) where not possible or below OEW. The level is
    the largest mass achieved on at least p of the days, weighted by the points' shares.
    """
    zz = stats.norm.ppf((np.arange(n_days) + 0.5) / n_days)
    k = np.clip(np.searchsorted(scores, zz, side="right") - 1, 0, scores.size - 2)
    s = (zz - scores[k]) / (scores[k + 1] - scores[k])
    with np.errstate(invalid="ignore"):
        day = node_mass[:, k] + s * (node_mass[:, k + 1] - node_mass[:, k])  # (J, n_days)
    day = np.where(np.isfinite(day) & (day >= oew), np.minimum(day, mtow), 0.0).ravel()
    share = np.repeat(weight / n_days, n_days)
    order = np.argsort(-day, kind="stable")
    cum = np.cumsum(share[order])
    q = lambda x: day[order][min(np.searchsorted(cum, x - 1e-12), day.size - 1)]  # noqa: E731
    return [(q(x + 0.5 / n_days), q(x), q(x - 0.5 / n_days)) for x in p]


@pytest.mark.parametrize("tol_kg", [1.0, 0.1])
def test_level_search_agrees_with_a_brute_force_quantile_of_the_days(tol_kg):
    # Outside check: the definition of the lower (1 − p) quantile of the day-to-day mass
    # (Wilks 2011, §3.1), from 200 001 sampled days per wind point, against the kernel's
    # search on the same piecewise-linear surface. The search stops at a certified lower
    # end of a bracket narrower than tol_kg, and masses within 0.05 kg count as achieved,
    # so the level lies in [M_p − tol, M_p + 0.05] (M_p within the sample's band).
    rng = np.random.default_rng(19)
    n_pts = 24
    head = np.concatenate([[0.0], rng.uniform(-5.0, 15.0, n_pts - 1)])  # factored headwind
    weight = np.concatenate([[0.3], rng.random(n_pts - 1)])
    weight[5] = 0.0  # a point without days
    weight /= weight.sum()
    groups = []
    t = climatology.daily_max_temperature_k(Z, 301.0, 3.5)
    base = curved_mass(t[None, :], head[:, None])  # (J, G)
    lost = base.copy()
    lost[[3, 7]] = -np.inf  # points usable on no direction
    groups.append((lost, Z))
    groups.append((np.minimum(base, 58_500.0), Z))  # a plateau: a climb cap on cool days
    hot = curved_mass(climatology.daily_max_temperature_k(Z, 306.0, 2.0)[None, :], head[:, None])
    hot[:, -2:] = np.nan  # no takeoff on the hottest days
    groups.append((hot, Z))
    z_shift = Z + np.array([0.0, 0.0, 0.2, 0.1, -0.1, 0.0])  # a node moved (e.g. onto a corner)
    groups.append((curved_mass(climatology.daily_max_temperature_k(z_shift, 299.0, 4.0)[None, :],
                               head[:, None]), z_shift))
    levels = (0.3, 0.5, 0.85, 0.95, 0.99)
    oew, mtow = 40_000.0, 66_000.0
    masses = np.stack([g[0] for g in groups])
    scores = np.stack([g[1] for g in groups])
    res = reliabilitylevels.reliability_masses(masses, scores, np.repeat(weight[None], len(groups), axis=0),
                                               np.full(len(groups), oew), np.full(len(groups), mtow),
                                               levels=levels, tol_kg=tol_kg)
    searched = 0
    for i, (m, z) in enumerate(groups):
        for l, (q_hi, q, q_lo) in enumerate(_brute_force_quantile(m, z, weight, levels, oew, mtow)):
            got = res.mass_kg[i, l]
            if q_lo < oew:  # not possible on p of the days
                assert np.isnan(got), (i, levels[l])
                continue
            assert q_lo - q_hi < 1.0  # the sample resolves the level (0.3 kg but at 0.99)
            assert q_hi - tol_kg - 1e-6 <= got <= q_lo + 0.05 + 1e-6, (i, levels[l], got, q)
            searched += q < mtow
    assert searched >= 12  # most levels come from the search, not the caps
    assert np.isnan(res.mass_kg[2, -1])  # 1 % of days too hot for any takeoff


# --------------------------------------------------------------------------------------
# Refinement with direct solves
# --------------------------------------------------------------------------------------
def _curved_rose_masses(mean=301.0, sd=3.5, seed=11):
    c, w, lo, hi, f, calm = rose16(seed=seed)
    d, s, wt = climatology.wind_rose_points(c, w, lo, hi, f, calm)
    h, cx, tx = climatology.runway_usability(d, s, 40.0, 5.0, 10.0)
    m = point_masses(curved_mass, [mean], [sd], h[None])
    return np.where((cx | tx)[None, :, None], -np.inf, m), wt[None], h


def test_level_crossing_density_is_the_slope_of_the_share_of_days():
    m, wt, _ = _curved_rose_masses()
    mass = np.array([57_000.0])
    _, slope, dens = reliabilitylevels.level_crossings(m, Z, wt, mass)
    # −dS/dM by a central difference of share_of_days (±20 kg: inside one segment of the
    # piecewise-linear interpolant for almost every point; 1 % covers the rest).
    ds = (reliabilitylevels.share_of_days(mass - 20.0, m, Z, wt)
          - reliabilitylevels.share_of_days(mass + 20.0, m, Z, wt)) / 40.0
    assert dens.sum() == pytest.approx(ds[0], rel=0.01)
    assert np.all(slope[dens > 0] < 0)


def test_refinement_samples_spread_over_the_density_and_a_dominant_point_is_solved_once():
    m, wt, h = _curved_rose_masses()
    mass = np.array([57_000.0])
    smp = reliabilitylevels.refinement_samples(m, Z, wt, mass, h[None], 4)
    _, _, dens = reliabilitylevels.level_crossings(m, Z, wt, mass)
    assert smp.stratum_density_per_kg.sum() == pytest.approx(dens.sum(), rel=1e-12)
    filled = smp.point[0] >= 0
    assert filled.sum() == 4 and np.unique(smp.point[0]).size == 4
    # Ordered by headwind: the samples come out in increasing headwind.
    assert np.all(np.diff(h[smp.point[0]]) >= 0)
    # Almost all days calm: the calm point holds most of the density and is solved once.
    w2 = np.where(np.arange(wt.shape[1]) == 0, 0.9, 0.1 * wt / wt[:, 1:].sum())
    one = reliabilitylevels.refinement_samples(m, Z, w2, mass, h[None], 4)
    assert np.sum(one.point[0] == 0) == 1
    assert one.stratum_density_per_kg.sum() == pytest.approx(one.density_per_kg[0], rel=1e-12)


def test_refinement_samples_equal_a_plain_loop_of_the_systematic_sample():
    # The systematic sample written out (Cochran 1977, ch. 8): points in contour order (the
    # key at the node nearest each crossing, stable), cumulative density C; sample k is the
    # first point with C ≥ (k + ½)/K × f and stands for f/K, repeats merged into the first;
    # the risk is the density-weighted mean indicator of the crossings' segments.
    m, wt, h = _curved_rose_masses()
    rng = np.random.default_rng(5)
    n_rows = 3
    masses = np.repeat(m, n_rows, axis=0)
    weight = np.repeat(wt, n_rows, axis=0)
    level = np.array([57_000.0, 54_000.0, 60_500.0])
    key = np.round(h[None, :, None] + rng.normal(0.0, 0.5, (n_rows, h.size, Z.size)), 1)  # ties
    risk = rng.uniform(0.0, 80.0, (n_rows, h.size, Z.size - 1))
    count = 8
    smp = reliabilitylevels.refinement_samples(masses, Z, weight, level, key, count, risk)
    zj, slope, dens = reliabilitylevels.level_crossings(masses, Z, weight, level)
    for i in range(n_rows):
        zc = np.where(np.isfinite(zj[i]), zj[i], 0.0)
        k_at = [key[i, j, int(np.argmin(np.abs(Z - zc[j])))] for j in range(h.size)]
        order = sorted(range(h.size), key=lambda j: k_at[j])  # Python's sort is stable
        cum, total = [], 0.0
        for j in order:
            total += dens[i, j]
            cum.append(total)
        pos = [min(next((a for a, c in enumerate(cum) if c >= (k + 0.5) / count * total), h.size), h.size - 1)
               for k in range(count)]
        share = [total / count] * count
        for k in range(count - 1, 0, -1):
            if pos[k] == pos[k - 1]:
                share[k - 1] += share[k]
                share[k] = 0.0
        point = [order[pos[k]] if share[k] > 0 else -1 for k in range(count)]
        np.testing.assert_array_equal(smp.point[i], point)
        np.testing.assert_allclose(smp.stratum_density_per_kg[i], share, rtol=1e-12)
        np.testing.assert_allclose(smp.density_per_kg[i], total, rtol=1e-12)
        filled = np.array(point) >= 0
        np.testing.assert_array_equal(smp.score[i, filled], zj[i, np.array(point)[filled]])
        np.testing.assert_array_equal(smp.slope_kg[i, filled], slope[i, np.array(point)[filled]])
        seg = [min(int(np.sum(Z[1:-1] <= zc[j])), Z.size - 2) for j in range(h.size)]
        mean_risk = sum(dens[i, j] * risk[i, j, seg[j]] for j in range(h.size) if dens[i, j] > 0) / total
        assert smp.risk_kg[i] == pytest.approx(mean_risk, rel=1e-12)
        assert filled.sum() >= 4 and np.all(np.isnan(smp.score[i, ~filled]))


def test_refined_level_recovers_a_uniformly_shifted_surface():
    # The "true" masses are the interpolated ones plus 300 kg on every day: the level moves
    # by exactly 300 kg, and one Newton step from sampled days finds it.
    m, wt, h = _curved_rose_masses()
    oew, mtow = np.array([OEW]), np.array([MTOW])
    surf = reliabilitylevels.reliability_masses(m, Z, wt, oew, mtow, levels=(0.85,))
    true = reliabilitylevels.reliability_masses(m + 300.0, Z, wt, oew, mtow, levels=(0.85,))
    assert true.mass_kg[0, 0] - surf.mass_kg[0, 0] == pytest.approx(300.0, abs=2.0)
    smp = reliabilitylevels.refinement_samples(m, Z, wt, surf.mass_kg[:, 0], h[None], 4)
    error = np.where(smp.point >= 0, 300.0, np.nan)
    m_c, change = reliabilitylevels.refined_level_masses(surf.mass_kg[:, 0], np.zeros(1), smp.density_per_kg,
                                            smp.stratum_density_per_kg, error, oew, mtow)
    assert m_c[0] == pytest.approx(true.mass_kg[0, 0], abs=2.0)
    assert change[0] == pytest.approx(300.0 * smp.density_per_kg[0], rel=1e-9)


def test_share_equivalent_error_is_the_error_when_small_and_saturates_when_large():
    z, s = 0.3, -2_000.0
    assert reliabilitylevels.share_equivalent_error(5.0, z, s) == pytest.approx(5.0, rel=1e-3)
    # A 10 000 kg error on a slope of 2 000 kg per unit score moves the crossing by 5:
    # the share moved is Phi(5.3) − Phi(0.3), not phi(0.3) × 5.
    big = reliabilitylevels.share_equivalent_error(10_000.0, z, s)
    expected = (stats.norm.cdf(5.3) - stats.norm.cdf(0.3)) * 2_000.0 / stats.norm.pdf(0.3)
    assert big == pytest.approx(expected, rel=1e-9) and big < 10_000.0


def test_binding_and_secant_steps_reach_a_linear_mass_exactly():
    # m(z) = 60 000 − 2 500 z: the Newton step with the right slope and the secant step
    # through two points both land on the score of the target mass.
    mass = lambda z: 60_000.0 - 2_500.0 * z  # noqa: E731
    assert reliabilitylevels.binding_score(0.2, -2_500.0, mass(0.2), 58_000.0) == pytest.approx(0.8)
    assert reliabilitylevels.secant_score(0.0, mass(0.0), 0.5, mass(0.5), 58_000.0, -1.0) == pytest.approx(0.8)
    # A secant through a rising pair is not used: the fallback slope is.
    assert reliabilitylevels.secant_score(0.0, 0.0, 0.5, 10.0, -5.0, -10.0) == pytest.approx(2.0)


def test_prepared_masses_give_the_same_levels_crossings_and_samples():
    # Preparing the masses once (PreparedMasses) is bookkeeping only: every result equals
    # the one from the raw masses to the bit, also for a subset taken from the prepared set.
    m, wt, h = _curved_rose_masses()
    m2, _, _ = _curved_rose_masses(mean=306.0, sd=2.0)
    raw = np.concatenate([m, m2, np.where(np.arange(m.shape[1])[None, :, None] % 5 == 0, np.nan, m2)])
    wts = np.repeat(wt, 3, axis=0)
    z = np.repeat(Z[None], 3, axis=0) + np.array([[0.0], [0.1], [-0.2]])  # per-group scores
    prep = reliabilitylevels.prepare_masses(raw, z)
    a = reliabilitylevels.reliability_masses(raw, z, wts, np.full(3, OEW), np.full(3, MTOW))
    b = reliabilitylevels.reliability_masses(prep, z, wts, np.full(3, OEW), np.full(3, MTOW))
    for name in ("mass_kg", "reason", "point", "score", "share_days", "possible_share", "estimate_kg"):
        np.testing.assert_array_equal(getattr(a, name), getattr(b, name), err_msg=name)
    mass = np.array([60_000.0, 55_000.0, 52_000.0])
    np.testing.assert_array_equal(reliabilitylevels.share_of_days(mass, raw, z, wts),
                                  reliabilitylevels.share_of_days(mass, prep, z, wts))
    rows = np.array([2, 0])
    key = np.repeat(h[None], 2, axis=0)
    s_raw = reliabilitylevels.refinement_samples(raw[rows], z[rows], wts[rows], mass[rows], key, 8)
    s_prep = reliabilitylevels.refinement_samples(prep.take(rows), z[rows], wts[rows], mass[rows], key, 8)
    for name in ("point", "score", "slope_kg", "stratum_density_per_kg", "density_per_kg"):
        np.testing.assert_array_equal(getattr(s_raw, name), getattr(s_prep, name), err_msg=name)
