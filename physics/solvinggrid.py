"""The solving grid of the reliability levels: temperature and factored-headwind nodes,
interpolation on the grid, and its interpolation-error indicator.

The weight limit is not solved for every day of a month: the caller solves it on a grid of
temperature × factored headwind (× two station-pressure layers) shared by the twelve months
of a runway direction (:func:`temperature_nodes`, :func:`headwind_nodes`,
:func:`interpolate_pressure`, :func:`fill_no_takeoff_nodes`), takes each month's window of
temperature nodes (:func:`node_window`) at their standard-normal scores, and interpolates
each wind point's mass on it (:func:`interpolate_headwind`); the levels are then found on
that surface (:mod:`physics.reliabilitylevels`), treating the temperature distribution as
continuous, not binned. :func:`interpolate_day` gives single days (a wind point at a
temperature score) straight from the grid. :func:`grid_error_indicator` says which cells
may hold an interpolation error worth correcting with direct solves, and
:func:`indicator_at_points` which cell each wind point lies in.

The interpolations and the indicator are compiled kernels (:mod:`physics.compiled`) that
read each grid where it lies: a caller passes the whole grid array and the row of each
point (``rows``) instead of gathering a copy of the grids per point.

Conventions: ``G`` temperature nodes, ``H`` headwind nodes, ``J`` wind points; masses that
are not possible are NaN.

References
----------
.. [1] 14 CFR Part 25, §25.105(d)(1) (the factored headwind component the performance uses).
.. [2] W. H. Press et al., *Numerical Recipes*, 3rd ed., CUP, 2007, §3.0–3.1 and §3.6
   (interpolation in one and two dimensions, bracketing a value in a table).
.. [3] C. de Boor, *A Practical Guide to Splines*, rev. ed., Springer, 2001, ch. II
   (broken-line interpolation, breakpoints at slope changes) [from memory for the chapter].
"""

from __future__ import annotations

import numpy as np

from fieldlimits.physics.compiled import kernel

#: Standard-normal scores of the default temperature grid nodes. [–]
DEFAULT_SCORE_NODES = (-2.5, -1.25, 0.0, 1.0, 1.75, 2.5)


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


def interpolate_headwind(grid_mass_kg, nodes_mps, headwind_mps, rows=None):
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
    rows : array_like of int, optional
        Grid rows to interpolate on: with ``rows``, ``grid_mass_kg`` is ``(N, G, H)`` and
        ``nodes_mps`` ``(N, H)``, and point ``[..., j]`` of ``headwind_mps`` is interpolated
        on grid ``grid_mass_kg[rows[...]]`` (the grid is read where it lies, not gathered);
        ``rows`` and the leading shape of ``headwind_mps`` broadcast. Each in [0, N). [–]

    Returns
    -------
    numpy.ndarray
        Masses at the points on each temperature node, shape ``(..., J, G)`` (the leading
        shape broadcast from the inputs, or from ``rows`` and ``headwind_mps``); NaN when
        either neighbouring node is NaN (the no-takeoff rule). [kg]

    Notes
    -----
    m(h) = m_k + s (m_{k+1} − m_k), s = (h − h_k)/(h_{k+1} − h_k), k the cell of h (the
    number of interior nodes at or below h); a zero-width cell gives s = 0. Together with
    the linear rule in temperature (:func:`physics.reliabilitylevels.reliability_masses`)
    this is bilinear interpolation. Computed by a compiled kernel (:mod:`physics.compiled`)
    that writes each point's masses straight from the two grid columns around it.

    References
    ----------
    .. [2] W. H. Press et al., *Numerical Recipes*, 3rd ed., CUP, 2007, §3.6
       (interpolation in two dimensions, bilinear).
    """
    grid = np.asarray(grid_mass_kg, dtype=float)
    nodes = np.asarray(nodes_mps, dtype=float)
    h = np.asarray(headwind_mps, dtype=float)
    n_g, n_h = grid.shape[-2:]
    n_j = h.shape[-1]
    if rows is None:
        lead = np.broadcast_shapes(grid.shape[:-2], nodes.shape[:-1], h.shape[:-1])
        n_rows = int(np.prod(lead, dtype=np.int64))
        # Copies only where a leading axis is really broadcast.
        grid = np.broadcast_to(grid, lead + (n_g, n_h)).reshape(n_rows, n_g, n_h)
        nodes = np.broadcast_to(nodes, lead + (n_h,)).reshape(n_rows, n_h)
        row_of = np.arange(n_rows, dtype=np.int64)
    else:
        if grid.ndim != 3 or nodes.shape != (grid.shape[0], n_h):
            raise ValueError(f"interpolate_headwind with rows: grid_mass_kg must be (N, G, H) and "
                             f"nodes_mps (N, H); got {grid.shape} and {nodes.shape}")
        row_of = np.asarray(rows)
        if row_of.dtype.kind not in "iu":
            raise TypeError(f"interpolate_headwind: rows must be integers, got dtype {row_of.dtype}")
        lead = np.broadcast_shapes(row_of.shape, h.shape[:-1])
        row_of = np.broadcast_to(row_of, lead).reshape(-1).astype(np.int64, copy=False)
        if row_of.size and (row_of.min() < 0 or row_of.max() >= grid.shape[0]):
            raise IndexError(f"interpolate_headwind: rows must lie in [0, {grid.shape[0]}), got "
                             f"{row_of.min()} … {row_of.max()}")
    h = np.broadcast_to(h, lead + (n_j,)).reshape(row_of.size, n_j)
    out = np.empty((row_of.size, n_j, n_g))
    _interpolate_headwind_kernel(grid, nodes, h, row_of, out)
    return out.reshape(lead + (n_j, n_g))


@kernel
def _headwind_cell(nodes, r, x):
    """Cell k, its upper node k1 and the share s of factored headwind x on the headwind
    nodes of grid r (:func:`interpolate_headwind`: x clamped as numpy's clip, NaN kept)."""
    n_h = nodes.shape[1]
    lo = nodes[r, 0]
    hi = nodes[r, n_h - 1]
    if not (np.isnan(x) or x > lo):  # max(x, lo), NaN kept
        x = lo
    if not (np.isnan(x) or x < hi):  # min(x, hi), NaN kept
        x = hi
    k = 0
    for c in range(1, n_h - 1):  # the cell: interior nodes at or below x
        if nodes[r, c] <= x:
            k += 1
    k1 = min(k + 1, n_h - 1)
    width = nodes[r, k1] - nodes[r, k]
    s = (x - nodes[r, k]) / width if width > 0.0 else 0.0
    return k, k1, s


@kernel
def _interpolate_headwind_kernel(grid, nodes, headwind, row_of, out):
    """out[i, j, g] = grid[row_of[i], g, ·] interpolated at headwind[i, j] on nodes[row_of[i]]
    (:func:`interpolate_headwind`)."""
    for i in range(row_of.size):
        r = row_of[i]
        for j in range(headwind.shape[1]):
            k, k1, s = _headwind_cell(nodes, r, headwind[i, j])
            for g in range(grid.shape[1]):
                m0 = grid[r, g, k]
                # m0 + s (m1 − m0): NaN from either neighbour propagates (the no-takeoff rule).
                out[i, j, g] = m0 + s * (grid[r, g, k1] - m0)


def interpolate_day(grid_mass_kg, nodes_mps, node_scores, headwind_mps, score, rows):
    """Mass of days on the solving grid: bilinear in factored headwind and temperature score.

    Parameters
    ----------
    grid_mass_kg : array_like
        Masses solved on the grid, ``(N, G, H)``; NaN where no takeoff. [kg]
    nodes_mps : array_like
        Headwind nodes of each grid, non-decreasing, ``(N, H)``. [m/s]
    node_scores : array_like
        Standard-normal scores of the temperature nodes, increasing, ``(..., G)``. [–]
    headwind_mps : array_like
        Factored headwind of each day, ``(...)``. [m/s]
    score : array_like
        Standard-normal score of each day's temperature, ``(...)``. [–]
    rows : array_like of int
        Grid of each day, ``(...)``, each in [0, N); the leading shapes broadcast. [–]

    Returns
    -------
    numpy.ndarray
        Mass of each day, ``(...)``; NaN when a temperature node next to its score is not
        possible there. [kg]

    Notes
    -----
    m(h, z) = m_g(h) + s (m_{g+1}(h) − m_g(h)), s = (z − z_g)/(z_{g+1} − z_g), with m_g(h)
    the headwind interpolation of :func:`interpolate_headwind` on temperature node g, g the
    segment of z and the linear extension beyond the end nodes of
    :func:`physics.reliabilitylevels.mass_at_score` (NaN when m_g or m_{g+1} is not
    finite). Only the two temperature nodes around z are interpolated in headwind, so this
    is ``mass_at_score(interpolate_headwind(...), scores, z)`` to the bit at 2/G of the
    work, with no (…, G) intermediate.

    References
    ----------
    .. [2] Press et al. (2007), §3.6 (interpolation in two dimensions, bilinear).
    """
    grid = np.asarray(grid_mass_kg, dtype=float)
    nodes = np.asarray(nodes_mps, dtype=float)
    zn = np.asarray(node_scores, dtype=float)
    h = np.asarray(headwind_mps, dtype=float)
    z = np.asarray(score, dtype=float)
    row_of = np.asarray(rows)
    n_g = grid.shape[1] if grid.ndim == 3 else 0
    if grid.ndim != 3 or nodes.shape != (grid.shape[0], grid.shape[2]) or zn.shape[-1:] != (n_g,):
        raise ValueError(f"interpolate_day: grid_mass_kg must be (N, G, H), nodes_mps (N, H) and "
                         f"node_scores (..., G); got {grid.shape}, {nodes.shape} and {zn.shape}")
    if row_of.dtype.kind not in "iu":
        raise TypeError(f"interpolate_day: rows must be integers, got dtype {row_of.dtype}")
    lead = np.broadcast_shapes(row_of.shape, h.shape, z.shape, zn.shape[:-1])
    row_of = np.broadcast_to(row_of, lead).reshape(-1).astype(np.int64, copy=False)
    if row_of.size and (row_of.min() < 0 or row_of.max() >= grid.shape[0]):
        raise IndexError(f"interpolate_day: rows must lie in [0, {grid.shape[0]}), got "
                         f"{row_of.min()} … {row_of.max()}")
    out = np.empty(row_of.size)
    _interpolate_day_kernel(grid, nodes, np.broadcast_to(zn, lead + (n_g,)).reshape(-1, n_g),
                            np.broadcast_to(h, lead).reshape(-1), np.broadcast_to(z, lead).reshape(-1),
                            row_of, out)
    return out.reshape(lead)


@kernel
def _interpolate_day_kernel(grid, nodes, node_scores, headwind, score, row_of, out):
    """out[i] = mass of day i on grid row_of[i] (:func:`interpolate_day`)."""
    n_g = grid.shape[1]
    for i in range(row_of.size):
        r = row_of[i]
        k, k1, s = _headwind_cell(nodes, r, headwind[i])
        x = score[i]
        if n_g == 1:
            m0 = grid[r, 0, k]
            out[i] = (m0 + s * (grid[r, 0, k1] - m0)) + 0.0 * x
            continue
        g = 0
        for c in range(1, n_g - 1):  # the temperature segment: interior node scores at or below x
            if node_scores[i, c] <= x:
                g += 1
        m0 = grid[r, g, k]
        f0 = m0 + s * (grid[r, g, k1] - m0)
        m0 = grid[r, g + 1, k]
        f1 = m0 + s * (grid[r, g + 1, k1] - m0)
        z0 = node_scores[i, g]
        z1 = node_scores[i, g + 1]
        t = (x - z0) / ((z1 - z0) if z1 > z0 else np.inf)
        out[i] = f0 + t * (f1 - f0) if (np.isfinite(f0) and np.isfinite(f1)) else np.nan


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
    .. [3] de Boor (2001), ch. II (breakpoints at slope changes).
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
    .. [2] Press et al. (2007), §3.1 (bracketing a value in a table).
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
    .. [2] Press et al. (2007), §3.1 (linear interpolation).
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
    .. [2] Press et al. (2007), §3.0–3.1 (extrapolation from a table, its risks).
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
    .. [2] Press et al. (2007), §3.0–3.1 (error of polynomial interpolation); C. de Boor,
       *A Practical Guide to Splines*, rev. ed., Springer, 2001, ch. II (error of broken-line
       interpolation) [from memory for the chapters].
    """
    m = np.asarray(grid_mass_kg, dtype=float)
    n_g, n_h = m.shape[-2:]
    lead = m.shape[:-2]
    n_rows = int(np.prod(lead, dtype=np.int64))
    out = np.empty((n_rows, max(n_g - 1, 0), max(n_h - 1, 0)))
    _grid_error_kernel(m.reshape(n_rows, n_g, n_h), out)
    return out.reshape(lead + out.shape[1:])


@kernel
def _grid_error_kernel(grid, out):
    """out[r] = 0.5 × max of the corner nodes' |second difference| (either axis, inf where
    not finite) of grid[r] (:func:`grid_error_indicator`)."""
    n_g, n_h = grid.shape[1], grid.shape[2]
    node = np.empty((n_g, n_h))
    for r in range(grid.shape[0]):
        for g in range(n_g):
            for k in range(n_h):
                d = 0.0
                if n_g >= 3:  # along temperature; an end node takes its neighbour's
                    c = min(max(g, 1), n_g - 2)
                    d = abs(grid[r, c + 1, k] - 2.0 * grid[r, c, k] + grid[r, c - 1, k])
                    if not np.isfinite(d):
                        d = np.inf
                e = 0.0
                if n_h >= 3:  # along headwind
                    c = min(max(k, 1), n_h - 2)
                    e = abs(grid[r, g, c + 1] - 2.0 * grid[r, g, c] + grid[r, g, c - 1])
                    if not np.isfinite(e):
                        e = np.inf
                node[g, k] = max(d, e)
        for g in range(n_g - 1):
            for k in range(n_h - 1):
                out[r, g, k] = 0.5 * max(max(node[g, k], node[g + 1, k]),
                                         max(node[g, k + 1], node[g + 1, k + 1]))


def indicator_at_points(indicator_kg, nodes_mps, headwind_mps, rows):
    """Interpolation-error indicator of the headwind cell each wind point lies in.

    Parameters
    ----------
    indicator_kg : array_like
        Indicator per grid cell, ``(N, G − 1, H − 1)`` (:func:`grid_error_indicator`). [kg]
    nodes_mps : array_like
        Headwind nodes of each grid, non-decreasing, ``(N, H)``. [m/s]
    headwind_mps : array_like
        Factored headwind of each point, ``(...)``. [m/s]
    rows : array_like of int
        Grid of each point, broadcastable with ``headwind_mps``; each in [0, N). [–]

    Returns
    -------
    numpy.ndarray
        Indicator of each point's headwind cell at every temperature cell,
        ``(..., G − 1)``. [kg]

    Notes
    -----
    The cell of h is k = number of interior nodes h_1 … h_{H−2} at or below h (0 below the
    second node, H − 2 from the last interior node on: a point beyond an end node takes the
    end cell): the cell of the interpolation (:func:`interpolate_headwind`), there taken
    after clamping h to the end nodes (the two differ only beside a zero-width end cell).
    Computed by a compiled kernel that reads the indicator where it lies.

    References
    ----------
    .. [2] Press et al. (2007), §3.1 (bracketing a value in a table).
    """
    ind = np.asarray(indicator_kg, dtype=float)
    nodes = np.asarray(nodes_mps, dtype=float)
    h = np.asarray(headwind_mps, dtype=float)
    row_of = np.asarray(rows)
    if ind.ndim != 3 or nodes.shape != (ind.shape[0], ind.shape[2] + 1) or ind.shape[2] < 1:
        raise ValueError(f"indicator_at_points: indicator_kg must be (N, G - 1, H - 1) and nodes_mps "
                         f"(N, H) with H >= 2; got {ind.shape} and {nodes.shape}")
    if row_of.dtype.kind not in "iu":
        raise TypeError(f"indicator_at_points: rows must be integers, got dtype {row_of.dtype}")
    lead = np.broadcast_shapes(row_of.shape, h.shape)
    row_of = np.broadcast_to(row_of, lead).reshape(-1).astype(np.int64, copy=False)
    if row_of.size and (row_of.min() < 0 or row_of.max() >= ind.shape[0]):
        raise IndexError(f"indicator_at_points: rows must lie in [0, {ind.shape[0]}), got "
                         f"{row_of.min()} … {row_of.max()}")
    out = np.empty((row_of.size, ind.shape[1]))
    _indicator_at_points_kernel(ind, nodes, np.broadcast_to(h, lead).reshape(-1), row_of, out)
    return out.reshape(lead + (ind.shape[1],))


@kernel
def _indicator_at_points_kernel(indicator, nodes, headwind, row_of, out):
    """out[i, :] = indicator[row_of[i], :, cell of headwind[i]] (:func:`indicator_at_points`)."""
    n_h = nodes.shape[1]
    for i in range(row_of.size):
        r = row_of[i]
        k = 0
        for c in range(1, n_h - 1):
            if nodes[r, c] <= headwind[i]:
                k += 1
        for g in range(indicator.shape[1]):
            out[i, g] = indicator[r, g, k]
