"""Tests of physics.climatology: temperature quantiles, wind-rose points, usability,
wind coverage and reliability levels.

Masses here come from simple invented closed-form mass functions m(T, h) so every expected
value can be computed by hand or by an independent fine numerical integration; the
interpolation error against the real weight-limit solver is tested in
tests/pipeline/test_reliability.py.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate, stats

from fieldlimits.physics import climatology as clim
from fieldlimits.physics import limits
from fieldlimits.physics.constants import KT_MPS

Z = np.asarray(clim.DEFAULT_SCORE_NODES)


def linear_mass(temperature_k, headwind_mps):
    """Invented mass function: 60 t at 300 K calm, −800 kg/K, +900 kg per m/s headwind."""
    return 60_000.0 - 800.0 * (np.asarray(temperature_k) - 300.0) + 900.0 * np.asarray(headwind_mps)


def curved_mass(temperature_k, headwind_mps):
    """Invented smooth, curved mass function (decreasing in T, increasing in headwind)."""
    t = np.asarray(temperature_k) - 300.0
    h = np.asarray(headwind_mps)
    return 60_000.0 - 700.0 * t - 12.0 * t**2 + 1_100.0 * h - 25.0 * h**2


def point_masses(mass_fn, mean_k, sd_k, headwind_factored):
    """(N, J, G) masses of points on their direction at the temperature nodes."""
    t = clim.daily_max_temperature_k(Z, np.asarray(mean_k)[..., None], np.asarray(sd_k)[..., None])
    return mass_fn(t[..., None, :], np.asarray(headwind_factored)[..., None])


# --------------------------------------------------------------------------------------
# Temperature
# --------------------------------------------------------------------------------------
def test_normal_quantiles_match_scipy():
    # scipy.stats.norm is the reference implementation of the Gaussian quantile function.
    p = np.array([0.05, 0.5, 0.85, 0.95, 0.99])
    t = clim.daily_max_temperature_k(clim.normal_score(p), 303.15, 3.5)
    np.testing.assert_allclose(t, stats.norm.ppf(p, loc=303.15, scale=3.5), rtol=0, atol=1e-9)


def test_normal_score_known_values():
    # Standard-normal table (any statistics handbook): z(0.95) = 1.644854, z(0.85) = 1.036433.
    np.testing.assert_allclose(clim.normal_score([0.5, 0.85, 0.95]), [0.0, 1.036433, 1.644854],
                               atol=1e-6)


def test_percentiles_of_a_normal_reproduce_the_normal():
    mean, sd = 298.0, 4.0
    pv = stats.norm.ppf([0.5, 0.85, 0.95], loc=mean, scale=sd)
    z = np.linspace(-3, 3, 61)
    t = clim.daily_max_temperature_k(z, mean, sd, pv)
    np.testing.assert_allclose(t, mean + sd * z, atol=1e-9)


def test_percentile_interpolation_between_given_values():
    # Skewed month: median 300, p85 305, p95 312 (hot tail heavier than the SD of 3 says).
    pv = np.array([300.0, 305.0, 312.0])
    z85, z95 = stats.norm.ppf([0.85, 0.95])
    p90 = stats.norm.ppf(0.90)
    expected_p90 = 305.0 + (312.0 - 305.0) * (p90 - z85) / (z95 - z85)  # linear in z
    got = clim.daily_max_temperature_k(np.array([p90, z85, z95, 0.0, -1.0]), 299.0, 3.0, pv)
    np.testing.assert_allclose(got[:4], [expected_p90, 305.0, 312.0, 300.0], atol=1e-9)
    assert got[4] == pytest.approx(300.0 - 3.0)  # cold side: slope sd from the median
    # Beyond p95 the last segment's slope continues.
    z99 = stats.norm.ppf(0.99)
    slope = (312.0 - 305.0) / (z95 - z85)
    assert clim.daily_max_temperature_k(z99, 299.0, 3.0, pv) == pytest.approx(312.0 + slope * (z99 - z95))


def test_missing_percentiles_fall_back():
    # Only p95 given (median from the mean): the p85 anchor lies on the mean+sd line.
    pv = np.array([[np.nan, np.nan, 310.0], [np.nan, np.nan, np.nan]])
    z85 = stats.norm.ppf(0.85)
    t = clim.daily_max_temperature_k(np.array([z85, 0.0]), np.array([[300.0], [300.0]]),
                                     np.array([[3.0], [3.0]]), pv[:, None, :])
    np.testing.assert_allclose(t[0], [300.0 + 3.0 * z85, 300.0])
    np.testing.assert_allclose(t[1], [300.0 + 3.0 * z85, 300.0])  # nothing given: the normal


# --------------------------------------------------------------------------------------
# Wind rose
# --------------------------------------------------------------------------------------
def _rose16(speed_edges=(0.0, 3.0, 6.0, 10.0, 15.0), seed=0, calm=0.08, percent=False):
    rng = np.random.default_rng(seed)
    centres = np.arange(16) * 22.5
    n_cls = len(speed_edges) - 1
    c = np.repeat(centres, n_cls)
    lo = np.tile(speed_edges[:-1], 16)
    hi = np.tile(speed_edges[1:], 16)
    f = rng.random(c.size) * np.tile(np.linspace(1.0, 0.2, n_cls), 16)
    f = f / f.sum() * (1.0 - calm)
    scale = 100.0 if percent else 1.0
    return c, np.full(c.size, 22.5), lo, hi, f * scale, calm * scale


def test_wind_rose_points_weights_and_geometry():
    c, w, lo, hi, f, calm = _rose16()
    d, s, wt = clim.wind_rose_points(c, w, lo, hi, f, calm, directions_per_sector=3, speeds_per_class=2)
    assert d.shape == (1 + c.size * 6,)
    assert wt.sum() == pytest.approx(1.0)
    assert wt[0] == pytest.approx(calm) and s[0] == 0.0
    # Each cell's points keep its mean direction and mean speed (midpoint rule).
    cell_d = d[1:].reshape(c.size, 3, 2)
    cell_s = s[1:].reshape(c.size, 3, 2)
    np.testing.assert_allclose(cell_s.mean(axis=(1, 2)), 0.5 * (lo + hi))
    offset = (cell_d - c[:, None, None] + 180.0) % 360.0 - 180.0
    np.testing.assert_allclose(offset.mean(axis=(1, 2)), 0.0, atol=1e-9)
    assert np.all(np.abs(offset) < 22.5 / 2)


def test_wind_rose_in_percent_is_normalised():
    a = clim.wind_rose_points(*_rose16(percent=False))[2]
    b = clim.wind_rose_points(*_rose16(percent=True))[2]
    np.testing.assert_allclose(a, b)


def test_runway_components_reference_example():
    # REFERENCES §7 [computed]: wind from 180° at 20 kt on heading 140° → headwind 15.32 kt,
    # crosswind 12.86 kt; 14 CFR 25.105(d)(1): half the headwind for performance.
    h, cx, tx = clim.runway_usability(180.0, 20 * KT_MPS, 140.0, 10 * KT_MPS, 13 * KT_MPS)
    assert h / KT_MPS == pytest.approx(0.5 * 15.32, abs=0.01)
    assert not cx and not tx
    _, cx12, _ = clim.runway_usability(180.0, 20 * KT_MPS, 140.0, 10 * KT_MPS, 12 * KT_MPS)
    assert cx12
    # The reverse direction (heading 320°) has a 15.32 kt tailwind: above a 10 kt limit,
    # factored ×1.5 for performance.
    h2, _, tx2 = clim.runway_usability(180.0, 20 * KT_MPS, 320.0, 10 * KT_MPS, 13 * KT_MPS)
    assert tx2 and h2 / KT_MPS == pytest.approx(-1.5 * 15.32, abs=0.01)


def _cell_coverage_exact(c, w, lo, hi, heading, limit):
    """Share of a cell (uniform in direction and speed) with |V sin(θ − ψ)| ≤ limit."""
    def usable_speed_share(theta_deg):
        s = abs(np.sin(np.deg2rad(theta_deg - heading)))
        v_max = np.inf if s == 0 else limit / s
        return (np.clip(v_max, lo, hi) - lo) / (hi - lo)
    # Fine adaptive quadrature over the sector (scipy.integrate.quad), independent of the
    # midpoint points of the model.
    val, _ = integrate.quad(usable_speed_share, c - w / 2, c + w / 2, limit=200)
    return val / w


def test_single_runway_coverage_matches_classical_wind_coverage():
    # Classical runway wind coverage (FAA AC 150/5300-13, wind analysis appendix; ICAO
    # Annex 14 Vol. I §3.1.1 and Attachment A §1): the share of time the crosswind on the
    # runway (both ends usable, tailwind ignored) is within the allowable component, wind
    # uniform within each cell. Computed independently by quadrature.
    c, w, lo, hi, f, calm = _rose16(seed=3)
    heading = 70.0
    limit = 13 * KT_MPS  # 13 kt allowable crosswind (Annex 14 §3.1.3 b, from memory)
    exact = calm + sum(fi * _cell_coverage_exact(ci, wi, li, hii, heading, limit)
                       for ci, wi, li, hii, fi in zip(c, w, lo, hi, f))
    for nd, ns, tol in ((5, 2, 0.004), (31, 8, 0.0004)):
        d, s, wt = clim.wind_rose_points(c, w, lo, hi, f, calm, directions_per_sector=nd,
                                         speeds_per_class=ns)
        _, cx1, _ = clim.runway_usability(d, s, heading, 1e9, limit)
        _, cx2, _ = clim.runway_usability(d, s, heading + 180.0, 1e9, limit)
        model = clim.wind_coverage(wt, ~cx1 | ~cx2)
        # Midpoint-rule error: of order one sub-cell per cell crossed by the limit lines.
        assert model == pytest.approx(exact, abs=tol)
    assert 0.80 < exact < 1.0


def test_coverage_design_rule_95_percent():
    # A rose built so that exactly 5 % of the time the wind blows across the runway at
    # 12–16 m/s (above a 10 m/s allowable crosswind everywhere in those cells), the rest
    # along it or light: usability factor exactly 95 % (Annex 14 §3.1.1 design minimum).
    c = np.array([0.0, 180.0, 90.0, 270.0])
    w = np.full(4, 30.0)
    lo = np.array([0.0, 0.0, 12.0, 12.0])
    hi = np.array([15.0, 15.0, 16.0, 16.0])
    f = np.array([0.45, 0.45, 0.025, 0.025])
    d, s, wt = clim.wind_rose_points(c, w, lo, hi, f, 0.05)
    _, cx1, _ = clim.runway_usability(d, s, 0.0, 1e9, 10.0)
    _, cx2, _ = clim.runway_usability(d, s, 180.0, 1e9, 10.0)
    # 12 m/s × sin(75°) = 11.6 > 10 at the sector edge: every point of those cells is out.
    assert clim.wind_coverage(wt, ~cx1 | ~cx2) == pytest.approx(0.95, abs=1e-12)


# --------------------------------------------------------------------------------------
# Headwind interpolation
# --------------------------------------------------------------------------------------
def test_headwind_nodes_include_calm_and_range():
    n = clim.headwind_nodes(np.array([-7.5, 0.0]), np.array([10.0, 4.0]))
    np.testing.assert_allclose(n[0], [-7.5, -3.75, 0.0, 2.5, 5.0, 7.5, 10.0])
    np.testing.assert_allclose(n[1], [0.0, 0.0, 0.0, 1.0, 2.0, 3.0, 4.0])


def test_interpolation_exact_for_bilinear_and_nan_rule():
    nodes = clim.headwind_nodes(-6.0, 8.0)
    t = 300.0 + 3.0 * Z
    grid = linear_mass(t[:, None], nodes[None, :])  # (G, H)
    h = np.array([-6.0, -2.2, 0.0, 3.3, 8.0, 12.0])
    got = clim.interpolate_headwind(grid, nodes, h)  # (J, G)
    expected = linear_mass(t[None, :], np.clip(h, -6.0, 8.0)[:, None])
    np.testing.assert_allclose(got, expected, rtol=1e-12)
    # A no-takeoff node (NaN) makes every interpolant that touches it NaN (not possible).
    grid_nan = grid.copy()
    grid_nan[-1, 1] = np.nan  # hottest node, headwind node −3
    got = clim.interpolate_headwind(grid_nan, nodes, h)
    assert np.isnan(got[1, -1]) and np.isnan(got[0, -1] * 0 + got[1, -1])
    assert np.isfinite(got[2, -1]) and np.isfinite(got[1, -2])


# --------------------------------------------------------------------------------------
# Reliability levels
# --------------------------------------------------------------------------------------
OEW, MTOW = 40_000.0, 70_000.0


def _levels(point_mass, weight, levels=clim.DEFAULT_LEVELS, **kw):
    n = point_mass.shape[0]
    return clim.reliability_masses(point_mass, Z, weight, np.full(n, OEW), np.full(n, MTOW),
                                   levels=levels, **kw)


def test_single_wind_point_zero_spread_is_the_direct_value_on_the_best_direction():
    # All wind from 250° at 8 m/s; directions 250° (into wind) and 070° (downwind).
    heading = np.array([250.0, 70.0])
    h, cx, tx = clim.runway_usability(250.0, 8.0, heading[:, None], 10.0, 15.0)  # (D, J=1)
    t = np.full(Z.size, 301.0)  # zero spread: every node at the mean
    raw = linear_mass(t[None, None, :], h[:, :, None])[None]  # (1, D, 1, G)
    d, m, lost = clim.flown_direction(raw, cx[None], tx[None])
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
    c, w, lo, hi, f, calm = _rose16(seed=5, calm=0.6)
    d, s, wt = clim.wind_rose_points(c, w, lo, hi, f, calm)
    h, cx, tx = clim.runway_usability(d, s, 0.0, 5.0, 12.0)
    m = point_masses(linear_mass, [300.0], [0.0], h[None])
    m = np.where((cx | tx)[None, :, None], -np.inf, m)
    r = _levels(m, wt[None], levels=(0.5,))
    # More than half the days are calm: the median day is the calm design day.
    assert r.mass_kg[0, 0] == pytest.approx(linear_mass(300.0, 0.0), abs=1.0)


def test_levels_fall_as_p_rises_and_match_a_fine_discretisation():
    c, w, lo, hi, f, calm = _rose16(seed=11)
    d, s, wt = clim.wind_rose_points(c, w, lo, hi, f, calm)
    heading = np.array([40.0, 220.0, 130.0])
    h, cx, tx = clim.runway_usability(d[None], s[None], heading[:, None], 5.0, 10.0)  # (D, J)
    mean, sd = 301.0, 3.5
    t = clim.daily_max_temperature_k(Z, mean, sd)
    # Direction-dependent masses (different runway lengths): scale per direction.
    scale = np.array([1.0, 0.97, 0.9])[:, None, None]
    raw = (scale * curved_mass(t[None, None, :], h[:, :, None]))[None]
    dirs, m, lost = clim.flown_direction(raw, cx[None], tx[None])
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


def test_crosswind_limit_removes_exactly_the_share_above_the_limit():
    # Runway 000/180; cells from 090° and 270° at 12–16 m/s are wholly above a 10 m/s
    # crosswind limit (12 sin 75° = 11.6); they carry 7 % of days.
    c = np.array([0.0, 180.0, 90.0, 270.0])
    w = np.full(4, 30.0)
    lo = np.array([0.0, 0.0, 12.0, 12.0])
    hi = np.array([4.0, 4.0, 16.0, 16.0])
    f = np.array([0.40, 0.43, 0.035, 0.035])
    d, s, wt = clim.wind_rose_points(c, w, lo, hi, f, 0.10)
    heading = np.array([0.0, 180.0])
    h, cx, tx = clim.runway_usability(d[None], s[None], heading[:, None], 10.0, 10.0)
    raw = point_masses(linear_mass, [[300.0, 300.0]], [[0.0, 0.0]], h[None])  # (1, D, J, G)
    dirs, m, lost = clim.flown_direction(raw, cx[None], tx[None])
    r = _levels(m, wt[None], levels=(0.90, 0.95), lost_reason=lost)
    assert r.possible_share[0] == pytest.approx(0.93, abs=1e-12)
    assert np.isfinite(r.mass_kg[0, 0])
    assert np.isnan(r.mass_kg[0, 1]) and r.reason[0, 1] == limits.code("crosswind_limit")
    # Exactly the points of the 090°/270° cells are lost, each to the crosswind limit.
    across = (s >= 12.0)
    np.testing.assert_array_equal(lost[0] == limits.code("crosswind_limit"), across)
    # Raising the limit to 17 m/s brings those days back.
    h, cx, tx = clim.runway_usability(d[None], s[None], heading[:, None], 10.0, 17.0)
    _, m2, lost2 = clim.flown_direction(raw, cx[None], tx[None])
    assert _levels(m2, wt[None], lost_reason=lost2).possible_share[0] == pytest.approx(1.0)


def test_tailwind_only_direction_is_lost_with_tailwind_reason():
    # One direction (heading 000°), all wind from 180° at 8–10 m/s: tailwind above 5 m/s.
    d, s, wt = clim.wind_rose_points(np.array([180.0]), np.array([10.0]), np.array([8.0]),
                                     np.array([10.0]), np.array([1.0]), 0.0)
    h, cx, tx = clim.runway_usability(d[None], s[None], np.array([[0.0]]), 5.0, 15.0)
    raw = point_masses(linear_mass, [[300.0]], [[2.0]], h[None])
    _, m, lost = clim.flown_direction(raw, cx[None], tx[None])
    r = _levels(m, wt[None], levels=(0.5,), lost_reason=lost)
    assert np.isnan(r.mass_kg[0, 0]) and r.reason[0, 0] == limits.code("tailwind_limit")
    assert r.possible_share[0] == 0.0


def test_symmetric_rose_gives_the_same_result_for_opposite_directions():
    c, w, lo, hi, f, calm = _rose16(seed=2)
    # Make it symmetric under a 180° rotation: average each cell with its opposite.
    f = f.reshape(16, -1)
    f = 0.5 * (f + np.roll(f, 8, axis=0))
    f = f.ravel()
    d, s, wt = clim.wind_rose_points(c, w, lo, hi, f, calm)
    out = []
    for heading in (65.0, 245.0):
        h, cx, tx = clim.runway_usability(d[None], s[None], np.array([[heading]]), 5.0, 10.0)
        raw = point_masses(curved_mass, [[299.0]], [[3.0]], h[None])
        _, m, lost = clim.flown_direction(raw, cx[None], tx[None])
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
    c, w, lo, hi, f, calm = _rose16(seed=8)
    d, s, wt = clim.wind_rose_points(c, w, lo, hi, f, calm)
    h, cx, tx = clim.runway_usability(d, s, 300.0, 5.0, 12.0)
    m = point_masses(curved_mass, [302.0], [4.0], h[None])
    m = np.where((cx | tx)[None, :, None], -np.inf, m)
    r = _levels(m, wt[None], levels=(0.4, 0.6, 0.8))
    s_at = clim.share_of_days(r.mass_kg, m, Z, wt[None])
    np.testing.assert_allclose(s_at[0], [0.4, 0.6, 0.8], atol=2e-4)


def test_binding_day_reproduces_the_level_mass():
    c, w, lo, hi, f, calm = _rose16(seed=9)
    d, s, wt = clim.wind_rose_points(c, w, lo, hi, f, calm)
    h, cx, tx = clim.runway_usability(d, s, 120.0, 5.0, 12.0)
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
    c, w, lo, hi, f, calm = _rose16(seed=4)
    d, s, wt = clim.wind_rose_points(c, w, lo, hi, f, calm)
    h, cx, tx = clim.runway_usability(d, s, 10.0, 5.0, 12.0)
    ms = [point_masses(curved_mass, [t], [sd], h[None]) for t, sd in ((296.0, 2.0), (305.0, 5.0))]
    ms = [np.where((cx | tx)[None, :, None], -np.inf, m) for m in ms]
    batch = _levels(np.concatenate(ms), np.stack([wt, wt]))
    single = _levels(ms[1], wt[None])
    np.testing.assert_allclose(batch.mass_kg[1], single.mass_kg[0], atol=1.0)


# --------------------------------------------------------------------------------------
# The shared solving grid
# --------------------------------------------------------------------------------------
def test_temperature_nodes_span_the_range_with_a_node_on_the_flat_rating_corner():
    nodes = clim.temperature_nodes(280.0, 310.0, 6, corner_k=303.15)
    # Equal spacing 6 K, the node nearest 303.15 K (304 K) moved onto it.
    np.testing.assert_allclose(nodes, [280.0, 286.0, 292.0, 298.0, 303.15, 310.0])
    # A corner outside the range moves nothing.
    np.testing.assert_allclose(clim.temperature_nodes(280.0, 310.0, 6, corner_k=320.0),
                               np.linspace(280.0, 310.0, 6))
    # A piecewise-linear mass with its kink at the corner is reproduced exactly by linear
    # interpolation between these nodes (de Boor 2001, ch. II: breakpoints at the kinks).
    kinked = lambda t: 70_000.0 - 100.0 * (t - 280.0) - 900.0 * np.maximum(t - 303.15, 0.0)  # noqa: E731
    t = np.linspace(280.0, 310.0, 301)
    np.testing.assert_allclose(np.interp(t, nodes, kinked(nodes)), kinked(t), rtol=1e-12)


def test_node_window_covers_each_months_range():
    nodes = np.linspace(270.0, 320.0, 11)  # 5 K apart
    lo = np.array([271.0, 290.0, 300.0, 318.0])
    hi = np.array([283.0, 301.0, 309.0, 319.0])
    start, needed = clim.node_window(nodes, lo, hi, 5)
    np.testing.assert_array_equal(needed, [4, 4, 3, 2])  # e.g. 290..305 K: nodes 290, 295, 300, 305
    win = nodes[start[:, None] + np.arange(5)]
    assert np.all(win[:, 0] <= lo) and np.all(win[:, -1] >= hi)


def test_pressure_interpolation_is_linear_between_the_layers():
    m = clim.interpolate_pressure(60_000.0, 60_600.0, 99_000.0, 100_000.0,
                                  np.array([99_000.0, 99_250.0, 100_000.0, 101_000.0]))
    # Linear in pressure, held at the end layers outside them.
    np.testing.assert_allclose(m, [60_000.0, 60_150.0, 60_600.0, 60_600.0])
    # One layer (no pressure spread): its value; a no-takeoff upper layer is NaN only
    # where it is used.
    assert clim.interpolate_pressure(60_000.0, np.nan, 99_000.0, 99_000.0, 99_000.0) == 60_000.0
    assert np.isnan(clim.interpolate_pressure(60_000.0, np.nan, 99_000.0, 100_000.0, 99_500.0))


def test_no_takeoff_node_gets_the_trend_below_the_floor():
    t = np.array([290.0, 295.0, 300.0, 305.0, 310.0])
    mass = 50_000.0 - 1_000.0 * (t - 290.0)  # 40 000 kg at 300 K, 35 000 at 305 K
    floor = 37_000.0  # OEW: no takeoff from 303 K
    grid = np.where(mass >= floor, mass, np.nan)
    filled = clim.fill_no_takeoff_nodes(t, grid, floor)
    # The first no-takeoff node takes the linear trend (35 000 kg, below the floor), so the
    # interpolant crosses the floor exactly at 303 K; the next node stays NaN.
    assert filled[3] == pytest.approx(35_000.0)
    assert np.isnan(filled[4])
    assert np.interp(303.0, t[:4], filled[:4]) == pytest.approx(floor)
    # Mirrored (headwind rows: no takeoff at the strongest tailwinds first).
    back = clim.fill_no_takeoff_nodes(-t[::-1], grid[::-1], floor, reverse=True)
    np.testing.assert_allclose(back, filled[::-1])


# --------------------------------------------------------------------------------------
# Refinement with direct solves
# --------------------------------------------------------------------------------------
def _curved_rose_masses(mean=301.0, sd=3.5, seed=11):
    c, w, lo, hi, f, calm = _rose16(seed=seed)
    d, s, wt = clim.wind_rose_points(c, w, lo, hi, f, calm)
    h, cx, tx = clim.runway_usability(d, s, 40.0, 5.0, 10.0)
    m = point_masses(curved_mass, [mean], [sd], h[None])
    return np.where((cx | tx)[None, :, None], -np.inf, m), wt[None], h


def test_level_crossing_density_is_the_slope_of_the_share_of_days():
    m, wt, _ = _curved_rose_masses()
    mass = np.array([57_000.0])
    _, slope, dens = clim.level_crossings(m, Z, wt, mass)
    # −dS/dM by a central difference of share_of_days (±20 kg: inside one segment of the
    # piecewise-linear interpolant for almost every point; 1 % covers the rest).
    ds = (clim.share_of_days(mass - 20.0, m, Z, wt) - clim.share_of_days(mass + 20.0, m, Z, wt)) / 40.0
    assert dens.sum() == pytest.approx(ds[0], rel=0.01)
    assert np.all(slope[dens > 0] < 0)


def test_refinement_samples_spread_over_the_density_and_a_dominant_point_is_solved_once():
    m, wt, h = _curved_rose_masses()
    mass = np.array([57_000.0])
    smp = clim.refinement_samples(m, Z, wt, mass, h[None], 4)
    _, _, dens = clim.level_crossings(m, Z, wt, mass)
    assert smp.stratum_density_per_kg.sum() == pytest.approx(dens.sum(), rel=1e-12)
    filled = smp.point[0] >= 0
    assert filled.sum() == 4 and np.unique(smp.point[0]).size == 4
    # Ordered by headwind: the samples come out in increasing headwind.
    assert np.all(np.diff(h[smp.point[0]]) >= 0)
    # Almost all days calm: the calm point holds most of the density and is solved once.
    w2 = np.where(np.arange(wt.shape[1]) == 0, 0.9, 0.1 * wt / wt[:, 1:].sum())
    one = clim.refinement_samples(m, Z, w2, mass, h[None], 4)
    assert np.sum(one.point[0] == 0) == 1
    assert one.stratum_density_per_kg.sum() == pytest.approx(one.density_per_kg[0], rel=1e-12)


def test_refined_level_recovers_a_uniformly_shifted_surface():
    # The "true" masses are the interpolated ones plus 300 kg on every day: the level moves
    # by exactly 300 kg, and one Newton step from sampled days finds it.
    m, wt, h = _curved_rose_masses()
    oew, mtow = np.array([OEW]), np.array([MTOW])
    surf = clim.reliability_masses(m, Z, wt, oew, mtow, levels=(0.85,))
    true = clim.reliability_masses(m + 300.0, Z, wt, oew, mtow, levels=(0.85,))
    assert true.mass_kg[0, 0] - surf.mass_kg[0, 0] == pytest.approx(300.0, abs=2.0)
    smp = clim.refinement_samples(m, Z, wt, surf.mass_kg[:, 0], h[None], 4)
    error = np.where(smp.point >= 0, 300.0, np.nan)
    m_c, change = clim.refined_level_masses(surf.mass_kg[:, 0], np.zeros(1), smp.density_per_kg,
                                            smp.stratum_density_per_kg, error, oew, mtow)
    assert m_c[0] == pytest.approx(true.mass_kg[0, 0], abs=2.0)
    assert change[0] == pytest.approx(300.0 * smp.density_per_kg[0], rel=1e-9)


def test_share_equivalent_error_is_the_error_when_small_and_saturates_when_large():
    z, s = 0.3, -2_000.0
    assert clim.share_equivalent_error(5.0, z, s) == pytest.approx(5.0, rel=1e-3)
    # A 10 000 kg error on a slope of 2 000 kg per unit score moves the crossing by 5:
    # the share moved is Phi(5.3) − Phi(0.3), not phi(0.3) × 5.
    big = clim.share_equivalent_error(10_000.0, z, s)
    expected = (stats.norm.cdf(5.3) - stats.norm.cdf(0.3)) * 2_000.0 / stats.norm.pdf(0.3)
    assert big == pytest.approx(expected, rel=1e-9) and big < 10_000.0


def test_binding_and_secant_steps_reach_a_linear_mass_exactly():
    # m(z) = 60 000 − 2 500 z: the Newton step with the right slope and the secant step
    # through two points both land on the score of the target mass.
    mass = lambda z: 60_000.0 - 2_500.0 * z  # noqa: E731
    assert clim.binding_score(0.2, -2_500.0, mass(0.2), 58_000.0) == pytest.approx(0.8)
    assert clim.secant_score(0.0, mass(0.0), 0.5, mass(0.5), 58_000.0, -1.0) == pytest.approx(0.8)
    # A secant through a rising pair is not used: the fallback slope is.
    assert clim.secant_score(0.0, 0.0, 0.5, 10.0, -5.0, -10.0) == pytest.approx(2.0)


def test_grid_error_indicator_zero_for_bilinear_and_the_interpolation_error_at_a_kink():
    t = np.linspace(290.0, 310.0, 6)
    h = np.linspace(-6.0, 6.0, 7)
    bilinear = 60_000.0 - 500.0 * (t[:, None] - 300.0) + 800.0 * h[None, :] \
        + 3.0 * (t[:, None] - 300.0) * h[None, :]
    assert np.allclose(clim.grid_error_indicator(bilinear), 0.0, atol=1e-6)
    # A slope change of 1 000 kg per m/s at h = 1 m/s, mid-way between the nodes 0 and
    # 2 m/s: linear interpolation errs there by 1 000 × 1 × 1/2 = 500 kg; the second
    # difference at the nodes next to it is 1 000 kg, the indicator half of it.
    kink = 60_000.0 + 1_000.0 * np.maximum(h - 1.0, 0.0)[None, :] + 0.0 * t[:, None]
    ind = clim.grid_error_indicator(kink)
    interpolated = 0.5 * (kink[:, 3] + kink[:, 4])  # at h = 1 m/s
    np.testing.assert_allclose(np.abs(interpolated - 60_000.0), 500.0)
    np.testing.assert_allclose(ind[:, 3], 500.0)
    assert np.all(ind[:, 0] == 0.0) and np.all(ind[:, -1] == 0.0)
    # No-takeoff corners: unknown, flagged as infinite.
    kink[-1, -1] = np.nan
    assert np.isinf(clim.grid_error_indicator(kink)[-1, -1])
