"""Tests of physics.climatology: temperature quantiles, wind-rose points, usability and
wind coverage.

The reliability levels built on them are tested in tests/physics/test_reliabilitylevels.py,
the solving grid in tests/physics/test_solvinggrid.py.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate, stats

from fieldlimits.physics import climatology
from fieldlimits.physics.constants import KT_MPS
from tests.physics._climate_fixtures import rose16


# --------------------------------------------------------------------------------------
# Temperature
# --------------------------------------------------------------------------------------
def test_normal_quantiles_match_scipy():
    # scipy.stats.norm is the reference implementation of the Gaussian quantile function.
    p = np.array([0.05, 0.5, 0.85, 0.95, 0.99])
    t = climatology.daily_max_temperature_k(climatology.normal_score(p), 303.15, 3.5)
    np.testing.assert_allclose(t, stats.norm.ppf(p, loc=303.15, scale=3.5), rtol=0, atol=1e-9)


def test_normal_score_known_values():
    # Standard-normal table (any statistics handbook): z(0.95) = 1.644854, z(0.85) = 1.036433.
    np.testing.assert_allclose(climatology.normal_score([0.5, 0.85, 0.95]), [0.0, 1.036433, 1.644854],
                               atol=1e-6)


def test_percentiles_of_a_normal_reproduce_the_normal():
    mean, sd = 298.0, 4.0
    pv = stats.norm.ppf([0.5, 0.85, 0.95], loc=mean, scale=sd)
    z = np.linspace(-3, 3, 61)
    t = climatology.daily_max_temperature_k(z, mean, sd, pv)
    np.testing.assert_allclose(t, mean + sd * z, atol=1e-9)


def test_percentile_interpolation_between_given_values():
    # Skewed month: median 300, p85 305, p95 312 (hot tail heavier than the SD of 3 says).
    pv = np.array([300.0, 305.0, 312.0])
    z85, z95 = stats.norm.ppf([0.85, 0.95])
    p90 = stats.norm.ppf(0.90)
    expected_p90 = 305.0 + (312.0 - 305.0) * (p90 - z85) / (z95 - z85)  # linear in z
    got = climatology.daily_max_temperature_k(np.array([p90, z85, z95, 0.0, -1.0]), 299.0, 3.0, pv)
    np.testing.assert_allclose(got[:4], [expected_p90, 305.0, 312.0, 300.0], atol=1e-9)
    assert got[4] == pytest.approx(300.0 - 3.0)  # cold side: slope sd from the median
    # Beyond p95 the last segment's slope continues.
    z99 = stats.norm.ppf(0.99)
    slope = (312.0 - 305.0) / (z95 - z85)
    assert climatology.daily_max_temperature_k(z99, 299.0, 3.0, pv) == pytest.approx(312.0 + slope * (z99 - z95))


def test_missing_percentiles_fall_back():
    # Only p95 given (median from the mean): the p85 anchor lies on the mean+sd line.
    pv = np.array([[np.nan, np.nan, 310.0], [np.nan, np.nan, np.nan]])
    z85 = stats.norm.ppf(0.85)
    t = climatology.daily_max_temperature_k(np.array([z85, 0.0]), np.array([[300.0], [300.0]]),
                                     np.array([[3.0], [3.0]]), pv[:, None, :])
    np.testing.assert_allclose(t[0], [300.0 + 3.0 * z85, 300.0])
    np.testing.assert_allclose(t[1], [300.0 + 3.0 * z85, 300.0])  # nothing given: the normal


# --------------------------------------------------------------------------------------
# Wind rose
# --------------------------------------------------------------------------------------
def test_wind_rose_points_weights_and_geometry():
    c, w, lo, hi, f, calm = rose16()
    d, s, wt = climatology.wind_rose_points(c, w, lo, hi, f, calm, directions_per_sector=3, speeds_per_class=2)
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
    a = climatology.wind_rose_points(*rose16(percent=False))[2]
    b = climatology.wind_rose_points(*rose16(percent=True))[2]
    np.testing.assert_allclose(a, b)


def test_runway_components_reference_example():
    # REFERENCES §7 [computed]: wind from 180° at 20 kt on heading 140° → headwind 15.32 kt,
    # crosswind 12.86 kt; 14 CFR 25.105(d)(1): half the headwind for performance.
    h, cx, tx = climatology.runway_usability(180.0, 20 * KT_MPS, 140.0, 10 * KT_MPS, 13 * KT_MPS)
    assert h / KT_MPS == pytest.approx(0.5 * 15.32, abs=0.01)
    assert not cx and not tx
    _, cx12, _ = climatology.runway_usability(180.0, 20 * KT_MPS, 140.0, 10 * KT_MPS, 12 * KT_MPS)
    assert cx12
    # The reverse direction (heading 320°) has a 15.32 kt tailwind: above a 10 kt limit,
    # factored ×1.5 for performance.
    h2, _, tx2 = climatology.runway_usability(180.0, 20 * KT_MPS, 320.0, 10 * KT_MPS, 13 * KT_MPS)
    assert tx2 and h2 / KT_MPS == pytest.approx(-1.5 * 15.32, abs=0.01)



def test_runway_usability_shared_rows_per_type_limits():
    # The same hand figures (20 kt from 180° on heading 140°: 15.32 kt headwind, 12.86 kt
    # crosswind, resolution of a vector, common practice) with the components evaluated once
    # per runway direction and handed to three cases (``rows``), each with its own limits;
    # the reverse direction (320°) handed to a fourth. Identical to evaluating every row.
    rows = np.array([0, 0, 0, 1])
    h, cx, tx = climatology.runway_usability(
        np.array([[180.0], [180.0]]), np.array([[20.0], [20.0]]) * KT_MPS, np.array([[140.0], [320.0]]),
        np.array([[10.0], [10.0], [16.0], [16.0]]) * KT_MPS, np.array([[13.0], [12.0], [13.0], [13.0]]) * KT_MPS,
        rows=rows)
    assert h[:3, 0] / KT_MPS == pytest.approx([0.5 * 15.32] * 3, abs=0.01)
    assert h[3, 0] / KT_MPS == pytest.approx(-1.5 * 15.32, abs=0.01)
    assert cx[:, 0].tolist() == [False, True, False, False]
    assert tx[:, 0].tolist() == [False, False, False, False]  # 15.32 kt tailwind within 16 kt
    full = climatology.runway_usability(
        np.full((4, 1), 180.0), np.full((4, 1), 20.0 * KT_MPS), np.array([[140.0]] * 3 + [[320.0]]),
        np.array([[10.0], [10.0], [16.0], [16.0]]) * KT_MPS, np.array([[13.0], [12.0], [13.0], [13.0]]) * KT_MPS)
    for a, b in zip((h, cx, tx), full):
        np.testing.assert_array_equal(a, b)

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
    c, w, lo, hi, f, calm = rose16(seed=3)
    heading = 70.0
    limit = 13 * KT_MPS  # 13 kt allowable crosswind (Annex 14 §3.1.3 b, from memory)
    exact = calm + sum(fi * _cell_coverage_exact(ci, wi, li, hii, heading, limit)
                       for ci, wi, li, hii, fi in zip(c, w, lo, hi, f))
    for nd, ns, tol in ((5, 2, 0.004), (31, 8, 0.0004)):
        d, s, wt = climatology.wind_rose_points(c, w, lo, hi, f, calm, directions_per_sector=nd,
                                         speeds_per_class=ns)
        _, cx1, _ = climatology.runway_usability(d, s, heading, 1e9, limit)
        _, cx2, _ = climatology.runway_usability(d, s, heading + 180.0, 1e9, limit)
        model = climatology.wind_coverage(wt, ~cx1 | ~cx2)
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
    d, s, wt = climatology.wind_rose_points(c, w, lo, hi, f, 0.05)
    _, cx1, _ = climatology.runway_usability(d, s, 0.0, 1e9, 10.0)
    _, cx2, _ = climatology.runway_usability(d, s, 180.0, 1e9, 10.0)
    # 12 m/s × sin(75°) = 11.6 > 10 at the sector edge: every point of those cells is out.
    assert climatology.wind_coverage(wt, ~cx1 | ~cx2) == pytest.approx(0.95, abs=1e-12)
