"""Tests of physics.solvinggrid: headwind and temperature nodes, interpolation on the grid,
the node window, pressure layers, no-takeoff nodes and the interpolation-error indicator.

Masses come from simple invented closed-form mass functions m(T, h) so every expected value
can be computed by hand.
"""

from __future__ import annotations

import numpy as np
import pytest

from fieldlimits.physics import solvinggrid
from tests.physics._climate_fixtures import Z, linear_mass


# --------------------------------------------------------------------------------------
# Headwind interpolation
# --------------------------------------------------------------------------------------
def test_headwind_nodes_include_calm_and_range():
    n = solvinggrid.headwind_nodes(np.array([-7.5, 0.0]), np.array([10.0, 4.0]))
    np.testing.assert_allclose(n[0], [-7.5, -3.75, 0.0, 2.5, 5.0, 7.5, 10.0])
    np.testing.assert_allclose(n[1], [0.0, 0.0, 0.0, 1.0, 2.0, 3.0, 4.0])


def test_interpolation_exact_for_bilinear_and_nan_rule():
    nodes = solvinggrid.headwind_nodes(-6.0, 8.0)
    t = 300.0 + 3.0 * Z
    grid = linear_mass(t[:, None], nodes[None, :])  # (G, H)
    h = np.array([-6.0, -2.2, 0.0, 3.3, 8.0, 12.0])
    got = solvinggrid.interpolate_headwind(grid, nodes, h)  # (J, G)
    expected = linear_mass(t[None, :], np.clip(h, -6.0, 8.0)[:, None])
    np.testing.assert_allclose(got, expected, rtol=1e-12)
    # A no-takeoff node (NaN) makes every interpolant that touches it NaN (not possible).
    grid_nan = grid.copy()
    grid_nan[-1, 1] = np.nan  # hottest node, headwind node −3
    got = solvinggrid.interpolate_headwind(grid_nan, nodes, h)
    assert np.isnan(got[1, -1]) and np.isnan(got[0, -1] * 0 + got[1, -1])
    assert np.isfinite(got[2, -1]) and np.isfinite(got[1, -2])


def _interpolate_by_loop(grid, nodes, h):
    """Reference: the cell rule of the docstring, one point and one temperature node at a
    time in plain Python (the formula and its order of operations, no vectorisation)."""
    out = np.empty(h.shape + (grid.shape[0],))
    for j, x in enumerate(h):
        if not np.isnan(x):
            x = min(max(x, nodes[0]), nodes[-1])
        k = sum(1 for c in range(1, nodes.size - 1) if nodes[c] <= x)
        k1 = min(k + 1, nodes.size - 1)
        width = nodes[k1] - nodes[k]
        s = (x - nodes[k]) / width if width > 0.0 else 0.0
        for g in range(grid.shape[0]):
            out[j, g] = grid[g, k] + s * (grid[g, k1] - grid[g, k])
    return out


def test_interpolation_equals_the_cell_rule_point_by_point_to_the_bit():
    # Invented grids with no-takeoff nodes, repeated (zero-width) nodes at calm, points
    # beyond both ends and a point of unknown headwind (NaN).
    rng = np.random.default_rng(5)
    nodes = np.stack([solvinggrid.headwind_nodes(-6.0, 8.0, tail_nodes=3, head_nodes=4),
                      solvinggrid.headwind_nodes(0.0, 5.0, tail_nodes=3, head_nodes=4)])  # (2, H)
    grid = rng.normal(60_000.0, 3_000.0, (2, 4, nodes.shape[1]))
    grid[0, 2, 5] = grid[1, 0, 0] = np.nan
    h = np.array([[-9.0, -6.0, -1.7, 0.0, 0.4, 3.9, 8.0, 11.0, np.nan],
                  [-2.0, 0.0, 0.0, 0.1, 1.25, 2.5, 4.99, 5.0, 7.0]])
    got = solvinggrid.interpolate_headwind(grid, nodes, h)  # (2, J, G)
    for r in range(2):
        np.testing.assert_array_equal(got[r], _interpolate_by_loop(grid[r], nodes[r], h[r]))
    # The same points read through rows (grid and nodes not gathered): grid 1, 0, 1.
    rows = np.array([1, 0, 1])
    hr = np.stack([h[1], h[0], h[0]])
    got = solvinggrid.interpolate_headwind(grid, nodes, hr, rows=rows)
    for i, r in enumerate(rows):
        np.testing.assert_array_equal(got[i], _interpolate_by_loop(grid[r], nodes[r], hr[i]))
    # rows broadcast against the points' leading axes: (2, 1) rows, (2, 3, J) points.
    h3 = np.broadcast_to(h[:, None, :], (2, 3, h.shape[1]))
    got = solvinggrid.interpolate_headwind(grid, nodes, h3, rows=np.array([[1], [0]]))
    assert got.shape == (2, 3, h.shape[1], 4)
    np.testing.assert_array_equal(got[0, 2], _interpolate_by_loop(grid[1], nodes[1], h[0]))
    np.testing.assert_array_equal(got[1, 1], _interpolate_by_loop(grid[0], nodes[0], h[1]))


def test_interpolation_rows_out_of_range_is_refused():
    grid = np.zeros((2, 3, 5))
    nodes = np.tile(np.linspace(-2.0, 2.0, 5), (2, 1))
    with pytest.raises(IndexError, match=r"rows must lie in \[0, 2\)"):
        solvinggrid.interpolate_headwind(grid, nodes, np.zeros((1, 4)), rows=np.array([2]))
    with pytest.raises(IndexError, match="rows must lie"):
        solvinggrid.interpolate_headwind(grid, nodes, np.zeros((1, 4)), rows=np.array([-1]))
    with pytest.raises(ValueError, match=r"nodes_mps \(N, H\)"):
        solvinggrid.interpolate_headwind(grid, nodes[:1], np.zeros((1, 4)), rows=np.array([0]))


def test_day_mass_is_bilinear_in_headwind_and_score():
    # linear_mass is linear in temperature and headwind, and the node temperatures are
    # linear in the score (T = 300 K + 3 K z), so the bilinear interpolant is exact, also
    # beyond the end node scores (the linear extension) and clamped beyond the end
    # headwind nodes (closed form, by hand).
    nodes = solvinggrid.headwind_nodes(np.array([-6.0, 0.0]), np.array([8.0, 5.0]))  # (2, H)
    grid = linear_mass(300.0 + 3.0 * Z[None, :, None], nodes[:, None, :])  # (2, G, H)
    h = np.array([-7.0, -2.2, 0.0, 3.3, 8.0, 12.0])
    z = np.array([-3.0, -1.1, 0.0, 0.4, 2.5, 3.2])
    rows = np.array([0, 1, 0, 1, 0, 1])
    got = solvinggrid.interpolate_day(grid, nodes, Z, h, z, rows)
    expected = linear_mass(300.0 + 3.0 * z, np.clip(h, nodes[rows, 0], nodes[rows, -1]))
    np.testing.assert_allclose(got, expected, rtol=1e-12)


def test_day_mass_equals_the_headwind_interpolation_then_the_score_rule_to_the_bit():
    # Reference: every temperature node interpolated in headwind, then the mass at the
    # score by physics.reliabilitylevels.mass_at_score (the rule the level search uses).
    from fieldlimits.physics.reliabilitylevels import mass_at_score

    rng = np.random.default_rng(11)
    nodes = np.stack([solvinggrid.headwind_nodes(-5.0, 7.0), solvinggrid.headwind_nodes(0.0, 4.0)])
    grid = rng.normal(60_000.0, 3_000.0, (2, Z.size, nodes.shape[1]))
    grid[0, 4, 2] = grid[1, 1, 5] = np.nan  # no-takeoff nodes
    rows = rng.integers(0, 2, (40, 3))
    h = rng.uniform(-8.0, 9.0, rows.shape)
    z = rng.normal(0.0, 1.6, 40)
    scores = np.broadcast_to(Z, (40, Z.size)).copy()
    scores[:5, 2] = scores[:5, 1]  # a zero-width score segment
    got = solvinggrid.interpolate_day(grid, nodes, scores[:, None, :], h, z[:, None], rows)
    ref = mass_at_score(solvinggrid.interpolate_headwind(grid, nodes, h[..., None], rows=rows)[:, :, 0, :],
                        scores[:, None, :], z[:, None])
    assert np.isnan(ref).any() and np.isfinite(ref).any()
    np.testing.assert_array_equal(got, ref)
    # One temperature node: its headwind interpolation, whatever the score.
    one = solvinggrid.interpolate_day(grid[:, :1], nodes, [0.0], h, z[:, None], rows)
    np.testing.assert_array_equal(one, solvinggrid.interpolate_headwind(grid[:, :1], nodes, h[..., None],
                                                                         rows=rows)[..., 0, 0])


# --------------------------------------------------------------------------------------
# The shared solving grid
# --------------------------------------------------------------------------------------
def test_temperature_nodes_span_the_range_with_a_node_on_the_flat_rating_corner():
    nodes = solvinggrid.temperature_nodes(280.0, 310.0, 6, corner_k=303.15)
    # Equal spacing 6 K, the node nearest 303.15 K (304 K) moved onto it.
    np.testing.assert_allclose(nodes, [280.0, 286.0, 292.0, 298.0, 303.15, 310.0])
    # A corner outside the range moves nothing.
    np.testing.assert_allclose(solvinggrid.temperature_nodes(280.0, 310.0, 6, corner_k=320.0),
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
    start, needed = solvinggrid.node_window(nodes, lo, hi, 5)
    np.testing.assert_array_equal(needed, [4, 4, 3, 2])  # e.g. 290..305 K: nodes 290, 295, 300, 305
    win = nodes[start[:, None] + np.arange(5)]
    assert np.all(win[:, 0] <= lo) and np.all(win[:, -1] >= hi)


def test_pressure_interpolation_is_linear_between_the_layers():
    m = solvinggrid.interpolate_pressure(60_000.0, 60_600.0, 99_000.0, 100_000.0,
                                  np.array([99_000.0, 99_250.0, 100_000.0, 101_000.0]))
    # Linear in pressure, held at the end layers outside them.
    np.testing.assert_allclose(m, [60_000.0, 60_150.0, 60_600.0, 60_600.0])
    # One layer (no pressure spread): its value; a no-takeoff upper layer is NaN only
    # where it is used.
    assert solvinggrid.interpolate_pressure(60_000.0, np.nan, 99_000.0, 99_000.0, 99_000.0) == 60_000.0
    assert np.isnan(solvinggrid.interpolate_pressure(60_000.0, np.nan, 99_000.0, 100_000.0, 99_500.0))


def test_no_takeoff_node_gets_the_trend_below_the_floor():
    t = np.array([290.0, 295.0, 300.0, 305.0, 310.0])
    mass = 50_000.0 - 1_000.0 * (t - 290.0)  # 40 000 kg at 300 K, 35 000 at 305 K
    floor = 37_000.0  # OEW: no takeoff from 303 K
    grid = np.where(mass >= floor, mass, np.nan)
    filled = solvinggrid.fill_no_takeoff_nodes(t, grid, floor)
    # The first no-takeoff node takes the linear trend (35 000 kg, below the floor), so the
    # interpolant crosses the floor exactly at 303 K; the next node stays NaN.
    assert filled[3] == pytest.approx(35_000.0)
    assert np.isnan(filled[4])
    assert np.interp(303.0, t[:4], filled[:4]) == pytest.approx(floor)
    # Mirrored (headwind rows: no takeoff at the strongest tailwinds first).
    back = solvinggrid.fill_no_takeoff_nodes(-t[::-1], grid[::-1], floor, reverse=True)
    np.testing.assert_allclose(back, filled[::-1])


# --------------------------------------------------------------------------------------
# Interpolation-error indicator
# --------------------------------------------------------------------------------------
def test_grid_error_indicator_zero_for_bilinear_and_the_interpolation_error_at_a_kink():
    t = np.linspace(290.0, 310.0, 6)
    h = np.linspace(-6.0, 6.0, 7)
    bilinear = 60_000.0 - 500.0 * (t[:, None] - 300.0) + 800.0 * h[None, :] \
        + 3.0 * (t[:, None] - 300.0) * h[None, :]
    assert np.allclose(solvinggrid.grid_error_indicator(bilinear), 0.0, atol=1e-6)
    # A slope change of 1 000 kg per m/s at h = 1 m/s, mid-way between the nodes 0 and
    # 2 m/s: linear interpolation errs there by 1 000 × 1 × 1/2 = 500 kg; the second
    # difference at the nodes next to it is 1 000 kg, the indicator half of it.
    kink = 60_000.0 + 1_000.0 * np.maximum(h - 1.0, 0.0)[None, :] + 0.0 * t[:, None]
    ind = solvinggrid.grid_error_indicator(kink)
    interpolated = 0.5 * (kink[:, 3] + kink[:, 4])  # at h = 1 m/s
    np.testing.assert_allclose(np.abs(interpolated - 60_000.0), 500.0)
    np.testing.assert_allclose(ind[:, 3], 500.0)
    assert np.all(ind[:, 0] == 0.0) and np.all(ind[:, -1] == 0.0)
    # No-takeoff corners: unknown, flagged as infinite.
    kink[-1, -1] = np.nan
    assert np.isinf(solvinggrid.grid_error_indicator(kink)[-1, -1])


def test_grid_error_indicator_with_two_temperature_nodes_takes_the_headwind_differences():
    # Two temperature nodes: no second difference in temperature (0), so the indicator is
    # half the headwind one. Invented rows, second differences by hand: 60 000, 61 000,
    # 61 500, 61 600 kg -> interior |Δ²| = |61 500 − 122 000 + 60 000| = 500 and
    # |61 600 − 123 000 + 61 000| = 400; end nodes take their neighbour's (500, 400).
    row = np.array([60_000.0, 61_000.0, 61_500.0, 61_600.0])
    grid = np.stack([row, row - 2_000.0])  # (G=2, H=4), linear in temperature
    ind = solvinggrid.grid_error_indicator(grid)
    np.testing.assert_array_equal(ind, [[250.0, 250.0, 200.0]])
    # Leading axes are independent rows.
    both = solvinggrid.grid_error_indicator(np.stack([grid, 2.0 * grid]))
    np.testing.assert_array_equal(both, [[[250.0, 250.0, 200.0]], [[500.0, 500.0, 400.0]]])


def test_indicator_at_points_takes_each_points_headwind_cell():
    # Nodes −4 … 4 m/s every 2 m/s (cells 0–3); the indicator of grid r, temperature cell
    # g, headwind cell k is 100 r + 10 g + k so each pick can be read off.
    nodes = np.tile(np.linspace(-4.0, 4.0, 5), (2, 1))
    ind = (100.0 * np.arange(2)[:, None, None] + 10.0 * np.arange(3)[None, :, None]
           + np.arange(4)[None, None, :])  # (N=2, G−1=3, H−1=4)
    h = np.array([-7.0, -4.0, -2.0, -0.5, 0.0, 3.9, 4.0, 9.0, np.nan])
    # Cells: beyond the ends the end cells; on an interior node the cell above it.
    cells = np.array([0, 0, 1, 1, 2, 3, 3, 3, 0])
    got = solvinggrid.indicator_at_points(ind, nodes, h, np.ones(h.size, dtype=int))
    np.testing.assert_array_equal(got, 100.0 + 10.0 * np.arange(3)[None, :] + cells[:, None])
    got = solvinggrid.indicator_at_points(ind, nodes, h[None, :], np.array([[0], [1]]))
    assert got.shape == (2, h.size, 3)
    np.testing.assert_array_equal(got[0, :, 0], cells)
    with pytest.raises(IndexError, match="rows must lie"):
        solvinggrid.indicator_at_points(ind, nodes, h, 2)
