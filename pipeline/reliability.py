"""Reliability levels for a chunk: the takeoff mass achievable on at least p of the days of a
month, with the temperature spread and the wind rose, on the best usable runway direction.

This module only wires tables to :mod:`physics.climatology` (the month's weather),
:mod:`physics.solvinggrid` (the grid), :mod:`physics.reliabilitylevels` (the levels and
their refinement) and the weight-limit solver; it holds no formulas. It is the row producer ``reliability_rows`` (picked up by
:mod:`pipeline.producers`), on by default for the **dry** runway; the run parameter
``reliability_conditions`` (or ``ReliabilitySettings.conditions``) adds ``wet``. For the
chunk's cases (complete airfields, see :mod:`pipeline.cases`):

1. the month's wind rose becomes wind points (:func:`physics.climatology.wind_rose_points`)
   and each point's factored headwind and usability on every runway direction for each
   aircraft type (:func:`physics.climatology.runway_usability`);
2. the weight limit is solved on ONE grid per runway direction × type × condition that
   serves all twelve months, in two vectorised calls per chunk: months differ only in
   temperature and station pressure. Temperature nodes span every month's daily-maximum
   range from score −2.5 to +2.5 (``temperature_nodes``, one moved onto the thrust
   flat-rating corner, :func:`physics.solvinggrid.temperature_nodes`); factored-headwind
   nodes span every month's usable points with a node at calm
   (:func:`physics.solvinggrid.headwind_nodes`); where the months' station pressures differ
   (QNH), a second layer at the highest pressure on every other headwind node, the change
   interpolated in headwind and then linearly to each month's pressure
   (:func:`physics.solvinggrid.interpolate_pressure`). The first call solves every other
   headwind node (with calm and the ends) and the second layer; a headwind node in between
   is then solved only where the change of slope at its solved neighbours says a straight
   line between them could miss it by more than ``grid_skip_kg`` (a change of limiting
   regime nearby; half the change times the cell width bounds the error of a kink
   mid-cell), and then on the bracket its neighbours give (the mass rises with headwind);
   elsewhere it takes the straight line. The grid is solved with the
   structural cap raised to 1.25 MTOW so the surface stays smooth through MTOW (the cap is
   applied in the level search). A direction whose worst corner (hottest node, strongest
   tailwind, lowest pressure) is structural at MTOW is structural everywhere and gets one
   solve instead of a grid. A no-takeoff node next to a possible one gets a mass just below
   OEW on the trend (:func:`physics.solvinggrid.fill_no_takeoff_nodes`), so only the part
   of the cell beyond the boundary is lost;
3. each month takes the window of consecutive temperature nodes covering its range
   (:func:`physics.solvinggrid.node_window`); its wind points are interpolated on the grid,
   each day flown on its best usable direction (:func:`physics.reliabilitylevels.flown_direction`)
   and the level masses found (:func:`physics.reliabilitylevels.reliability_masses`), with the
   share of days on which MTOW is achievable (``share_days_full_mass``);
4. refinement: the interpolated surface is off by up to a few per cent next to regime
   changes of the limit between nodes, and a level mass is (to first order) moved by the
   density-weighted mean of the surface's errors at the days where it crosses the level.
   For each level found by the search whose grid cells at the crossing days may hold an
   error of the size of the accuracy bound (density-weighted error indicator of the cells,
   :func:`physics.solvinggrid.grid_error_indicator`, at least ``refine_risk`` × the bound;
   levels in smooth cells are left as they are), and for MTOW wherever the share of days
   is strictly between 0 and 1, ``refine_samples`` days spread evenly over that
   density along the level's contour (:func:`physics.reliabilitylevels.refinement_samples`) are
   solved directly,
   all in one call (each on its best direction, and on the others within
   ``refine_direction_margin`` if that is set), and the level moved by one Newton step
   (:func:`physics.reliabilitylevels.refined_level_masses`; errors taken in share-of-days terms,
   :func:`physics.reliabilitylevels.share_equivalent_error`); the share of days at MTOW gets the
   same correction, and a level at MTOW moves below it only if the errors outweigh the
   surface's margin;
5. each level's binding day (a sampled day moved to the corrected mass by a Newton step
   on its wind point, :func:`physics.reliabilitylevels.binding_score`) is solved directly (all in
   one call), with at most ``binding_iterations`` secant steps where that solve misses the
   corrected mass by more than ``binding_tol_kg``, so a row's mass, limiting factor,
   distances and speeds are those of one consistent solve. A level that was not refined has
   no sampled day to step from: its binding day gets the secant steps only where its solve
   misses the level by more than the accuracy bound, starting from the surface's slope
   there (a level on a plateau — e.g. the climb limit below the flat-rating corner, the
   same mass on every cooler day — has its binding day where the mass starts to fall,
   and a direct solve there missed the level by up to 2 % before).

Cost (2-core machine, one chunk of the 2 000-airfield synthetic network, 13 824 dry cases,
16 128 level rows): 5.3 grid solves per dry case (6.7 when every headwind node was solved),
1.9 refinement solves and 0.9 binding-day solves per level row; the grid solves are about
half of the step's CPU time, the flown directions and level searches most of the rest. The
interpolation on the grid (compiled kernels of :mod:`physics.solvinggrid` that read the
grid where it lies: ``rows=`` gives each point's case, no gathered copy of the grids) is
about 0.03 CPU s a chunk; a day's runway direction is chosen from each direction's mass at
the day's own headwind and score (:func:`physics.solvinggrid.interpolate_day`).

Accuracy. Against direct solves at random days of the demo network the interpolated
surface is within 0.2 % of the mass or 50 kg on about 98 % of days
(tests/pipeline/test_reliability.py); the rest lie next to regime changes of the limit
between nodes — chiefly the accelerate-stop limit, whose slope in tailwind changes
several-fold where V1 meets a bound (the minimum control speed on short wet runways) —
worst about 2.5 %. On the deliberately hard test set (a short wet runway, a hot airfield)
the surface's own level masses are within the bound for about 94 % of levels (worst about
0.5 %), the refined and reported ones for all (worst about 0.17 %). The refinement's
estimate rests on a few days per level: where the error is concentrated on a few wind
points (typically a runway direction the surface ranks wrongly) a level can still be off
by a few tenths of a per cent. Temperature and wind are taken as independent; days are
flown at the daily maximum temperature.

Rows go to ``results_airfield`` (basis ``reliability``, level in ``reliability``); with
``ReliabilitySettings.per_direction`` also one set per runway direction flown alone to
``results_direction``.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Callable

import numpy as np
import pandas as pd

from fieldlimits.physics import atmosphere, climatology, constants, limits, reliabilitylevels, solvinggrid
from fieldlimits.schemas.results import RESULT_COLUMNS

_KEY_STRIDE = 1000.0  # contour order key: direction index x this + factored headwind [m/s]
GROUP_KEYS = ("airfield_id", "month", "aircraft_type_id", "condition")
SHARE_COLUMN = "share_days_full_mass"
_SPEEDS = {"v1_kt": "v1_mps", "vr_kt": "vr_mps", "v2_kt": "v2_mps", "v_lof_kt": "v_lof_mps"}
_PLAIN = ("takeoff_distance_m", "takeoff_run_m", "accelerate_stop_m", "climb_gradient",
          "obstacle_clearance_m", "acceleration_height_m")
_SITE_FIELDS = ("tora_m", "toda_m", "asda_m", "slope", "mu_roll", "mu_brake", "pressure_pa",
                "temperature_k", "headwind_mps", "screen_height_m", "mu_roll_dry", "mu_brake_dry")


@dataclass(frozen=True)
class ReliabilitySettings:
    """Resolution of the reliability computation (defaults balance speed and accuracy).

    ``conditions``: runway conditions that get reliability rows (default dry only; the run
    parameter ``reliability_conditions`` overrides it). ``score_range``: standard-normal
    scores of the coldest and hottest day each month's grid must cover (beyond, the mass is
    extended linearly). ``temperature_nodes``: nodes shared by the twelve months of an
    airfield × type × condition. ``tail_nodes``/``head_nodes``: factored-headwind nodes below
    and above calm per runway direction. ``pressure_tol_pa``: months whose station pressures
    differ by more get a second pressure layer. ``bracket_low``/``bracket_high``: grid mass
    bracket as multiples of OEW/MTOW. ``grid_tol_kg``: solver bracket on the grid.
    ``grid_skip_kg``: a headwind node between two solved ones is interpolated where the
    straight line between them is estimated to miss it by at most this (negative: solve every
    node).
    ``refine_samples``: directly solved days per level (and per MTOW row) for the
    refinement; ``refine_risk``: only levels whose grid error indicator (density-weighted
    over their crossing days) reaches this share of the bound max(``refine_bound_share`` ×
    mass, ``refine_bound_kg``) are refined; ``refine_direction_margin``: other usable directions whose interpolated
    mass is within this share of the best one's are solved too on those days (0: only the
    best); ``refine_tol_kg``: their solver bracket. ``binding_tol_kg`` and
    ``binding_iterations``: secant steps of the binding day towards the refined mass.
    """

    conditions: tuple[str, ...] = ("dry",)
    score_range: tuple[float, float] = (-2.5, 2.5)
    temperature_nodes: int = 6
    tail_nodes: int = 6
    head_nodes: int = 8
    headwind_power: float = 1.0
    pressure_tol_pa: float = 20.0
    pressure_headwind_step: int = 2
    directions_per_sector: int = 3
    speeds_per_class: int = 1
    bracket_low: float = 1.0
    bracket_high: float = 1.25
    grid_tol_kg: float = 5.0
    grid_skip_kg: float = 10.0
    refine_samples: int = 8
    refine_risk: float = 2.0
    refine_bound_share: float = 0.002
    refine_bound_kg: float = 50.0
    refine_direction_margin: float = 0.0
    binding_tol_kg: float = 10.0
    binding_iterations: int = 2
    refine_tol_kg: float = 2.0
    per_direction: bool = False
    block_elements: int = 2_000_000


def _concat(parts):
    """One dataclass of arrays from blocks of groups (concatenated on the first axis)."""
    return type(parts[0])(**{f.name: np.concatenate([getattr(p, f.name) for p in parts])
                             for f in dataclasses.fields(parts[0])})


def _refinement_samples(point_mass, scores, weight, res, mtow, order_key, settings, risk=None):
    """Days to solve directly for a block of groups, as compact rows (group, column,
    samples): the columns are the levels found by the search (below MTOW), and MTOW itself
    (for the share of days and the levels at MTOW) where that share is strictly between 0
    and 1. Returns None when no row needs samples."""
    n_lev = res.mass_kg.shape[1]
    searched = np.isfinite(res.mass_kg) & (res.mass_kg < mtow[:, None])
    open_share = (res.share_days > 0.0) & (res.share_days < 1.0)
    columns = np.concatenate([np.where(searched, res.estimate_kg, mtow[:, None]), mtow[:, None]], axis=1)
    wanted = np.concatenate([searched, open_share[:, None]], axis=1)
    parts = []
    for c in range(n_lev + 1):  # a fixed, small number of columns (levels and MTOW)
        rows = np.nonzero(wanted[:, c])[0]
        if rows.size == 0:
            continue
        z = scores if np.ndim(scores) == 1 else scores[rows]
        pm_rows = (point_mass.take(rows) if isinstance(point_mass, reliabilitylevels.PreparedMasses)
                   else point_mass[rows])
        smp = reliabilitylevels.refinement_samples(
            pm_rows, z, weight[rows], columns[rows, c], order_key[rows],
            settings.refine_samples, None if risk is None else risk[rows])
        # Rows whose surface is smooth where the level crosses it are left as they are.
        bound = np.maximum(settings.refine_bound_share * columns[rows, c], settings.refine_bound_kg)
        keep = smp.risk_kg >= settings.refine_risk * bound if risk is not None and c < n_lev \
            else np.ones(rows.size, dtype=bool)
        if not np.all(keep):
            rows = rows[keep]
            smp = type(smp)(**{f.name: getattr(smp, f.name)[keep] for f in dataclasses.fields(smp)})
        if rows.size == 0:
            continue
        parts.append((rows, np.full(rows.size, c), smp))
    if not parts:
        return None
    return (np.concatenate([p[0] for p in parts]), np.concatenate([p[1] for p in parts]),
            _concat([p[2] for p in parts]))


def _join_samples(parts, groups):
    """Compact sample rows of blocks of groups joined (group indices made global:
    ``groups`` holds, per block, the global index of each of its groups)."""
    kept = [(np.asarray(grp)[rows], col, smp) for part, grp in zip(parts, groups) if part is not None
            for rows, col, smp in [part]]
    if not kept:
        return None
    return (np.concatenate([k[0] for k in kept]), np.concatenate([k[1] for k in kept]),
            _concat([k[2] for k in kept]))


def _refine(res, sampled, solve_days, levels, oew, mtow):
    """Levels, share of days and binding days corrected with direct solves of the sampled
    days (one vectorised solve call).

    ``sampled`` is (group, column, RefinementSamples) with columns 0 … L − 1 the levels and L
    MTOW; ``solve_days(group, point, score)`` returns the direct masses of those days (each
    on its best usable direction) and the cases they were flown on. ``oew``, ``mtow``: (N,). Returns the corrected levels and,
    per moved level, the sampled day its binding day was stepped from (score, direct mass,
    interpolated slope, case; NaN and -1 elsewhere), the start of the binding-day secant.
    """
    start = {k: np.full(res.mass_kg.shape, np.nan) for k in ("score", "mass_kg", "slope_kg")}
    start["case"] = np.full(res.mass_kg.shape, -1, dtype=np.int64)
    if sampled is None:
        return res, start
    grp, col, smp = sampled
    n_lev = levels.size
    r_i, k_i = np.nonzero(smp.point >= 0)
    j_i = smp.point[r_i, k_i]
    g_i = grp[r_i]
    direct = np.full(smp.point.shape, np.nan)
    case = np.full(smp.point.shape, -1, dtype=np.int64)
    direct[r_i, k_i], case[r_i, k_i] = solve_days(g_i, j_i, smp.score[r_i, k_i])
    is_top = col == n_lev
    base = np.where(is_top, mtow[grp], res.estimate_kg[grp, np.minimum(col, n_lev - 1)])
    error = reliabilitylevels.share_equivalent_error(direct - base[:, None], smp.score, smp.slope_kg)
    mass = res.mass_kg.copy()
    point = res.point.copy()
    score = res.score.copy()
    share = res.share_days.copy()

    def bind(rows, target):
        """Binding day of corrected masses ``target`` (R, …) from the samples of ``rows``:
        the sampled day needing the smallest temperature step (Newton) to reach the
        target, moved by that step. Returns point, new score, found, and the sample's
        score, direct mass and slope."""
        extra = (None,) * (target.ndim - 1)
        sl = lambda a: np.broadcast_to(a[rows][(slice(None),) + extra],  # noqa: E731
                                       target.shape + (a.shape[-1],))
        z_new = reliabilitylevels.binding_score(sl(smp.score), sl(smp.slope_kg), sl(direct),
                                          target[..., None])
        step = np.where(sl(smp.stratum_density_per_kg) > 0, np.abs(z_new - sl(smp.score)), np.inf)
        best = np.argmin(step, axis=-1)[..., None]
        at = lambda a: np.take_along_axis(a, best, axis=-1)[..., 0]  # noqa: E731
        return (at(sl(smp.point)), at(z_new), np.isfinite(step.min(axis=-1)),
                (at(sl(smp.score)), at(sl(direct)), at(sl(smp.slope_kg)), at(sl(case))))

    def keep_start(g, c, moved, sample):
        for name, v in zip(("score", "mass_kg", "slope_kg", "case"), sample):
            start[name][g, c] = np.where(moved, v, start[name][g, c])

    # Levels found by the search: one Newton step from the surface's level.
    lv = np.nonzero(~is_top)[0]
    if lv.size:
        g, c = grp[lv], col[lv]
        m_new, _ = reliabilitylevels.refined_level_masses(
            base[lv], np.zeros(lv.size), smp.density_per_kg[lv], smp.stratum_density_per_kg[lv],
            error[lv], oew[g], mtow[g])
        pt, zb, ok, sample = bind(lv, m_new)
        mass[g, c] = m_new
        point[g, c] = np.where(ok, pt, point[g, c])
        score[g, c] = np.where(ok, zb, score[g, c])
        keep_start(g, c, ok, sample)
    # MTOW rows: the share of days, and the levels at MTOW (moved only when the errors
    # outweigh the surface's excess share over the level).
    tp = np.nonzero(is_top)[0]
    if tp.size:
        g = grp[tp]
        shape = (tp.size, n_lev)
        m_top, change = reliabilitylevels.refined_level_masses(
            np.broadcast_to(mtow[g][:, None], shape), share[g][:, None] - levels[None, :],
            np.broadcast_to(smp.density_per_kg[tp][:, None], shape),
            np.broadcast_to(smp.stratum_density_per_kg[tp][:, None, :], shape + (direct.shape[1],)),
            np.broadcast_to(error[tp][:, None, :], shape + (direct.shape[1],)),
            oew[g][:, None], mtow[g][:, None])
        at_top = np.isfinite(res.mass_kg[g]) & (res.mass_kg[g] >= mtow[g][:, None])
        pt, zb, ok, sample = bind(tp, m_top)
        moved = at_top & (m_top < mtow[g][:, None]) & ok
        mass[g] = np.where(moved, m_top, mass[g])
        point[g] = np.where(moved, pt, point[g])
        score[g] = np.where(moved, zb, score[g])
        gg = np.repeat(g[:, None], n_lev, axis=1)
        cc = np.broadcast_to(np.arange(n_lev), shape)
        keep_start(gg, cc, moved, sample)
        share[g] = np.clip(share[g] + change[:, 0], 0.0, 1.0)
    return dataclasses.replace(res, mass_kg=mass, share_days=share, point=point, score=score), start


def reliability_rows(context):
    """Row producer (see :mod:`pipeline.producers`): reliability rows of one chunk.

    The run's levels are ``context.params["reliability_levels"]`` (none: no rows). Rows
    are made for the runway conditions in ``context.params["reliability_conditions"]``
    when the run has that parameter, else for ``ReliabilitySettings.conditions`` (dry).
    """
    from fieldlimits.pipeline import cases as case_io
    from fieldlimits.pipeline.chunks import aircraft_arrays
    from fieldlimits.pipeline.producers import ProducerRows

    levels = tuple(float(p) for p in (context.params.get("reliability_levels") or ()))
    if not levels:
        return None
    settings = ReliabilitySettings()
    wanted = context.params.get("reliability_conditions")
    if wanted is not None:
        settings = dataclasses.replace(settings, conditions=tuple(wanted))
    aircraft_table = pd.read_parquet(context.work_dir / case_io.AIRCRAFT_FILE)
    direction, airfield = reliability_frames(
        context.cases, aircraft_table, context.table("runways"),
        context.table("climate_monthly"), context.table("wind_rose"), levels=levels,
        run_id=context.run_id,
        temperature_offset_k=float(context.params.get("temperature_offset_k", 0.0) or 0.0),
        settings=settings, aircraft_arrays=aircraft_arrays, obstacles=context.table("obstacles"))
    if airfield is None:
        return None
    return ProducerRows(direction=direction, airfield=airfield)


#: Former name of :func:`reliability_rows`.
chunk_reliability_rows = reliability_rows


def _default_solver():
    from fieldlimits.physics.weightlimit import solve_takeoff_weight

    return solve_takeoff_weight


def _default_aircraft_arrays(aircraft_table, index):
    from fieldlimits.physics.weightlimit import Aircraft

    return Aircraft(**{f.name: aircraft_table[f.name].to_numpy(float)[index]
                       for f in dataclasses.fields(Aircraft)})


def _site(cases: pd.DataFrame, index: np.ndarray, site_cls=None, **override):
    if site_cls is None:
        from fieldlimits.physics.weightlimit import Site as site_cls
    names = {f.name for f in dataclasses.fields(site_cls)}
    values = {n: cases[n].to_numpy(float)[index] for n in _SITE_FIELDS if n in names}
    values.update({k: np.asarray(v, dtype=float) for k, v in override.items()})
    return site_cls(**values)


def _replace(obj, **changes):
    if dataclasses.is_dataclass(obj):
        return dataclasses.replace(obj, **changes)
    new = type(obj).__new__(type(obj))
    new.__dict__.update({**obj.__dict__, **changes})
    return new


def _rose_arrays(wind_rose: pd.DataFrame, keys: pd.DataFrame):
    """Padded (K, C) cell arrays and (K,) calm share of the rose of each (airfield, month)."""
    wr = wind_rose.copy()
    calm_row = wr["direction_deg"].isna()
    key_index = pd.MultiIndex.from_frame(keys[["airfield_id", "month"]])
    calm = (wr[calm_row].groupby(["airfield_id", "month"])["frequency"].sum()
            .reindex(key_index, fill_value=0.0).to_numpy(float))
    cells = wr[~calm_row].copy()
    pos = pd.Series(np.arange(len(keys)), index=key_index)
    k = pos.reindex(pd.MultiIndex.from_frame(cells[["airfield_id", "month"]])).to_numpy()
    if np.any(pd.isna(k)):
        raise KeyError("wind_rose has an airfield-month that the chunk does not have")
    k = k.astype(np.int64)
    c = cells.groupby(["airfield_id", "month"], sort=False).cumcount().to_numpy()
    n_c = int(c.max()) + 1 if len(c) else 1
    out = {}
    for name in ("direction_deg", "sector_width_deg", "speed_low_mps", "speed_high_mps", "frequency"):
        arr = np.zeros((len(keys), n_c))
        arr[k, c] = cells[name].to_numpy(float)
        out[name] = arr
    missing = calm + out["frequency"].sum(axis=1) <= 0
    if np.any(missing):
        bad = keys.iloc[np.nonzero(missing)[0][0]]
        raise ValueError(f"wind_rose: no rows for airfield {bad['airfield_id']!r}, month "
                         f"{int(bad['month'])}; give its wind rose (or a calm row of 1)")
    out["sector_width_deg"] = np.where(out["frequency"] > 0, out["sector_width_deg"], 1.0)
    return out, calm


def _temperatures(climate: pd.DataFrame, keys: pd.DataFrame, offset_k: float):
    """Mean, SD and given percentiles (or None) of the daily maximum per (airfield, month)."""
    idx = pd.MultiIndex.from_frame(keys[["airfield_id", "month"]])
    cl = climate.set_index(["airfield_id", "month"]).reindex(idx)
    mean = cl["mean_daily_max_k"].to_numpy(float) + offset_k
    sd = cl["sd_daily_max_k"].to_numpy(float)
    pcols = ("p50_daily_max_k", "p85_daily_max_k", "p95_daily_max_k")
    pv = np.stack([cl[c].to_numpy(float) + offset_k if c in cl.columns
                   else np.full(len(cl), np.nan) for c in pcols], axis=-1)
    return mean, sd, (pv if np.isfinite(pv).any() else None)


def _node_scores(scores, mean, sd, pv, corner_k):
    """Per-case temperature-node scores (n, G): the fixed scores, with the interior node
    nearest the thrust flat-rating corner moved onto it when the corner lies inside the
    node range (the mass has a kink there; a node on it keeps the interpolation accurate).
    """
    base = np.asarray(scores, dtype=float)
    n = mean.shape[0]
    z = np.broadcast_to(base, (n, base.size)).copy()
    if base.size < 3:
        return z
    with np.errstate(invalid="ignore", divide="ignore"):
        zc = climatology.daily_max_temperature_score(corner_k, mean, sd, pv)
    inside = np.isfinite(zc) & (zc > base[1] - 0.5 * (base[1] - base[0])) & \
        (zc < base[-2] + 0.5 * (base[-1] - base[-2]))
    interior = base[1:-1]
    k = 1 + np.argmin(np.abs(zc[:, None] - interior[None, :]), axis=1)
    lo_ok = np.take_along_axis(z, k[:, None] - 1, axis=1)[:, 0] < zc
    hi_ok = np.take_along_axis(z, k[:, None] + 1, axis=1)[:, 0] > zc
    move = inside & lo_ok & hi_ok
    z[np.nonzero(move)[0], k[move]] = zc[move]
    return z


def _weight_limit_fields(result, n):
    out = {"tow_limit_kg": np.broadcast_to(np.asarray(result.tow_limit_kg, float), (n,)),
           "limiting_factor": np.broadcast_to(np.asarray(result.limiting_factor), (n,))}
    for name in _PLAIN + tuple(_SPEEDS.values()) + ("governing_obstacle",):
        v = getattr(result, name, None)
        out[name] = np.full(n, np.nan) if v is None else np.broadcast_to(np.asarray(v, float), (n,))
    return out


def _family_ids(cases: pd.DataFrame, keys) -> tuple[np.ndarray, int]:
    ids = cases.groupby(list(keys), sort=False).ngroup().to_numpy()
    return ids, int(ids.max()) + 1 if len(ids) else 0


def _first_of(ids, n_ids):
    """Index of the first row of each id (ids 0 … n_ids − 1, each present)."""
    first = np.zeros(n_ids, dtype=np.int64)
    first[ids[::-1]] = np.arange(ids.size)[::-1]
    return first


def _reduce(ids, n_ids, values, how):
    out = np.full(n_ids, np.inf if how is np.minimum else -np.inf)
    how.at(out, ids, values)
    return out


def reliability_frames(cases: pd.DataFrame, aircraft_table: pd.DataFrame, runways: pd.DataFrame,
                       climate: pd.DataFrame, wind_rose: pd.DataFrame, *, levels, run_id: int,
                       temperature_offset_k: float = 0.0,
                       settings: ReliabilitySettings = ReliabilitySettings(),
                       solve: Callable | None = None, aircraft_arrays: Callable | None = None,
                       site_cls=None, details: dict | None = None, obstacles: pd.DataFrame | None = None):
    """Reliability rows for the cases of complete airfields.

    Parameters
    ----------
    cases : DataFrame
        Design-day cases (columns of :func:`pipeline.cases.block_cases`); cases whose
        condition is not in ``settings.conditions`` are left out.
    aircraft_table : DataFrame
        The aircraft_types table in SI (row ``aircraft_index`` of each case).
    runways, climate, wind_rose : DataFrame
        Input tables in SI (at least the chunk's airfields).
    levels : sequence of float
        Reliability levels (share of days).
    run_id : int
        Run number written into the rows.
    temperature_offset_k : float
        Climate scenario offset added to every temperature (as for the design day).
    settings : ReliabilitySettings
        Grid and wind-point resolution, conditions.
    details : dict, optional
        Filled with the intermediate arrays (grid, point masses, levels, solve count) for
        tests and benchmarks.
    solve, aircraft_arrays, site_cls
        The weight-limit solver, the ``Aircraft`` builder and the ``Site`` class (defaults:
        ``physics.weightlimit``); tests pass stand-ins.
    obstacles : DataFrame, optional
        The ``obstacles`` table (at least the chunk's airfields): every solve of a case (grid
        nodes, refinement, binding days) gets the obstacles of its runway direction
        (:func:`pipeline.cases.obstacle_arrays`), as the design day does.

    Returns
    -------
    (DataFrame | None, DataFrame | None)
        Per-direction rows (only with ``settings.per_direction``) and airfield rows (None
        when no case has a condition in ``settings.conditions``).
    """
    solve = solve or _default_solver()
    aircraft_arrays = aircraft_arrays or _default_aircraft_arrays
    levels = np.asarray(levels, dtype=float)
    cases = cases[cases["condition"].isin(settings.conditions)].reset_index(drop=True)
    n = len(cases)
    if n == 0:
        return None, None
    from fieldlimits.pipeline.cases import governing_obstacle_ids, obstacle_arrays

    case_obstacles, obstacle_ids = obstacle_arrays(cases, obstacles)

    def solve_at(case_index, ac, site, **kw):
        """``solve`` of cases ``case_index`` (rows of ``cases``) with their obstacles."""
        if case_obstacles is not None:
            kw["obstacles"] = case_obstacles.take_cases(np.asarray(case_index))
        return solve(ac, site, **kw)

    heading = (cases[["airfield_id", "runway_id"]]
               .merge(runways[["airfield_id", "runway_id", "heading_true_deg"]],
                      on=["airfield_id", "runway_id"], how="left")["heading_true_deg"]
               .to_numpy(float))
    ac_index = cases["aircraft_index"].to_numpy()
    tail_limit = aircraft_table["tailwind_limit_mps"].to_numpy(float)[ac_index]
    cross_limit = aircraft_table["crosswind_limit_mps"].to_numpy(float)[ac_index]
    oew = aircraft_table["oew_kg"].to_numpy(float)[ac_index]
    mtow = aircraft_table["mtow_kg"].to_numpy(float)[ac_index]
    flat_k = aircraft_table["flat_rate_oat_k"].to_numpy(float)[ac_index]

    # Airfield-months of the chunk, and each case's.
    am = cases[["airfield_id", "month"]].drop_duplicates().reset_index(drop=True)
    am_pos = pd.Series(np.arange(len(am)),
                       index=pd.MultiIndex.from_frame(am)).reindex(
        pd.MultiIndex.from_frame(cases[["airfield_id", "month"]])).to_numpy()
    rose_rows = wind_rose.merge(am, on=["airfield_id", "month"], how="inner")
    rose, calm = _rose_arrays(rose_rows, am)
    p_dir, p_speed, p_weight = climatology.wind_rose_points(
        rose["direction_deg"], rose["sector_width_deg"], rose["speed_low_mps"],
        rose["speed_high_mps"], rose["frequency"], calm,
        directions_per_sector=settings.directions_per_sector,
        speeds_per_class=settings.speeds_per_class)
    t_mean, t_sd, t_pv = _temperatures(climate, am, temperature_offset_k)
    c_mean, c_sd = t_mean[am_pos], t_sd[am_pos]
    c_pv = None if t_pv is None else t_pv[am_pos]

    # Wind points on every case's runway direction.
    # (the components once per runway direction and month, shared by the aircraft types)
    rm, n_rm = _family_ids(cases, ("airfield_id", "runway_id", "month"))
    rm_first = _first_of(rm, n_rm)
    h_f, cross_ex, tail_ex = climatology.runway_usability(
        p_dir[am_pos[rm_first]], p_speed[am_pos[rm_first]], heading[rm_first, None],
        tail_limit[:, None], cross_limit[:, None], rows=rm)
    weight_case = p_weight[am_pos]
    usable = ~cross_ex & ~tail_ex & (weight_case > 0)

    # Families (airfield × type × condition: the same temperatures and pressures for every
    # runway direction) share temperature nodes over all their months; tracks (a family's
    # runway direction) share headwind nodes. One grid per track serves all its months.
    fam, n_fam = _family_ids(cases, ("airfield_id", "aircraft_type_id", "condition"))
    trk, n_trk = _family_ids(cases, ("airfield_id", "runway_id", "aircraft_type_id", "condition"))
    z_lo, z_hi = settings.score_range
    t_lo_case = climatology.daily_max_temperature_k(z_lo, c_mean, c_sd, c_pv)
    t_hi_case = climatology.daily_max_temperature_k(z_hi, c_mean, c_sd, c_pv)
    fam_first = _first_of(fam, n_fam)
    t_nodes_fam = solvinggrid.temperature_nodes(
        _reduce(fam, n_fam, t_lo_case, np.minimum), _reduce(fam, n_fam, t_hi_case, np.maximum),
        settings.temperature_nodes, flat_k[fam_first])  # (F, G)
    n_g = t_nodes_fam.shape[1]
    h_lo = _reduce(trk, n_trk, np.min(np.where(usable, h_f, 0.0), axis=1), np.minimum)
    h_hi = _reduce(trk, n_trk, np.max(np.where(usable, h_f, 0.0), axis=1), np.maximum)
    h_nodes_trk = solvinggrid.headwind_nodes(h_lo, h_hi, tail_nodes=settings.tail_nodes,
                                             head_nodes=settings.head_nodes,
                                             power=settings.headwind_power)  # (R, H)
    n_h = h_nodes_trk.shape[1]
    pressure = cases["pressure_pa"].to_numpy(float)
    p_lo = _reduce(trk, n_trk, pressure, np.minimum)
    p_hi = _reduce(trk, n_trk, pressure, np.maximum)
    spread = p_hi - p_lo > settings.pressure_tol_pa
    p_hi = np.where(spread, p_hi, p_lo)
    trk_first = _first_of(trk, n_trk)
    trk_fam = fam[trk_first]

    # Tracks that are structural at MTOW at their worst corner (hottest node, strongest
    # tailwind, lowest pressure) are structural everywhere (the mass falls with temperature
    # and tailwind and rises with pressure): one cheap solve instead of a grid.
    ac_corner = aircraft_arrays(aircraft_table, ac_index[trk_first])
    corner = solve_at(trk_first, ac_corner, _site(cases, trk_first, site_cls,
                                                  temperature_k=t_nodes_fam[trk_fam, -1],
                                                  headwind_mps=h_nodes_trk[:, 0], pressure_pa=p_lo))
    structural = np.asarray(corner.limiting_factor) == limits.code("structural")
    n_solves = int(n_trk)

    # The grid, in two solves. First (R, G, Hc) at the lower pressure on every other
    # headwind node (with calm and the ends), and (R', G, Hp) at the higher pressure for the
    # tracks whose months differ in pressure (Hp headwind nodes: every
    # ``pressure_headwind_step``-th, the ends and calm; the pressure effect is smooth in
    # headwind). Then the headwind nodes in between, each only where the slopes of the
    # solved neighbours say a straight line between them could miss it by more than
    # ``grid_skip_kg`` (a regime change nearby), on the bracket its neighbours give (the
    # mass rises with headwind). Mass bracket widened so the cap and the floor come after
    # interpolation.
    step = max(1, int(settings.pressure_headwind_step))
    sub_h = np.unique(np.concatenate([np.arange(0, n_h, step), [min(settings.tail_nodes, n_h - 1), n_h - 1]]))
    coarse_h = np.unique(np.concatenate([np.arange(0, n_h, 2), [min(settings.tail_nodes, n_h - 1), n_h - 1]]))
    fine_h = np.setdiff1d(np.arange(n_h), coarse_h)
    lo_trk = np.nonzero(~structural)[0]
    hi_trk = np.nonzero(~structural & spread)[0]
    cap = mtow[trk_first] * settings.bracket_high  # (R,)
    floor_trk = oew[trk_first] * settings.bracket_low
    grid_lo = np.broadcast_to(cap[:, None, None], (n_trk, n_g, n_h)).copy()
    grid_hi = grid_lo.copy()

    def solve_nodes(track, g_idx, h_idx, pressure_pa, low_kg=None, high_kg=None):
        """Grid-node masses of ``track`` at temperature node ``g_idx`` and headwind node
        ``h_idx`` (flat arrays), on the bracket [low, high] (default the widened one)."""
        rep = trk_first[track]
        ac = aircraft_arrays(aircraft_table, ac_index[rep])
        ac = _replace(ac, oew_kg=floor_trk[track] if low_kg is None else low_kg,
                      mtow_kg=cap[track] if high_kg is None else high_kg)
        site = _site(cases, rep, site_cls, temperature_k=t_nodes_fam[trk_fam[track], g_idx],
                     headwind_mps=h_nodes_trk[track, h_idx], pressure_pa=pressure_pa)
        return np.asarray(solve_at(rep, ac, site, tol_kg=settings.grid_tol_kg, figures=False).tow_limit_kg,
                          dtype=float)

    def node_index(tracks, heads):
        """Flat (track, temperature node, headwind node) indices of tracks × G × heads."""
        tt, gg, hh = np.meshgrid(tracks, np.arange(n_g), heads, indexing="ij")
        return tt.ravel(), gg.ravel(), hh.ravel()

    lo_idx = node_index(lo_trk, coarse_h)
    hi_idx = node_index(hi_trk, sub_h)
    if lo_idx[0].size + hi_idx[0].size:
        idx = tuple(np.concatenate([a, b]) for a, b in zip(lo_idx, hi_idx))
        solved = solve_nodes(*idx, np.concatenate([p_lo[lo_idx[0]], p_hi[hi_idx[0]]]))
        n_solves += int(solved.size)
        n_lo = lo_idx[0].size
        grid_lo[lo_idx] = solved[:n_lo]
        # Between two solved headwind nodes: a straight line where the slope changes at
        # either end (kink mid-cell: half the change times the width) stay within
        # grid_skip_kg, or where both ends are capped (the mass rises with headwind).
        if fine_h.size and lo_trk.size:
            c = grid_lo[lo_trk][:, :, coarse_h]  # (r, G, Hc)
            x = h_nodes_trk[lo_trk][:, None, coarse_h]
            width = np.diff(x, axis=-1)
            with np.errstate(invalid="ignore"):
                slope = np.where(width > 0, np.diff(c, axis=-1) / np.where(width > 0, width, 1.0), 0.0)
                change = np.abs(np.diff(slope, axis=-1))  # at the interior solved nodes
            change = np.where(np.isfinite(change), change, np.inf)
            change = np.concatenate([change[..., :1], change, change[..., -1:]], axis=-1)
            risk = 0.5 * np.maximum(change[..., :-1], change[..., 1:]) * width  # per cell
            top = cap[lo_trk][:, None, None]
            capped = (c[..., :-1] >= top - 0.5) & (c[..., 1:] >= top - 0.5)
            cell = np.searchsorted(coarse_h, fine_h) - 1  # the cell of each node in between
            left, right = c[..., cell], c[..., cell + 1]
            xl, xr = x[..., cell], x[..., cell + 1]
            xf = h_nodes_trk[lo_trk][:, None, fine_h]
            s = np.where(xr > xl, (xf - xl) / np.where(xr > xl, xr - xl, 1.0), 0.0)
            line = np.where(capped[..., cell], top, left + s * (right - left))
            fine = np.where((risk[..., cell] <= settings.grid_skip_kg) | capped[..., cell], line, np.nan)
            fine[~np.isfinite(left) & ~np.isfinite(right)] = np.nan
            ti, gi, fi = np.nonzero(np.isnan(fine) & ~(~np.isfinite(left) & ~np.isfinite(right)))
            if ti.size:
                # On the neighbours' bracket (± two grid tolerances); where the solve lands
                # on an end of it, again on the widened bracket.
                margin = 2.0 * settings.grid_tol_kg
                lo_b = np.where(np.isfinite(left[ti, gi, fi]), left[ti, gi, fi] - margin, -np.inf)
                lo_b = np.maximum(lo_b, floor_trk[lo_trk[ti]])
                hi_b = np.minimum(np.where(np.isfinite(right[ti, gi, fi]), right[ti, gi, fi] + margin, np.inf),
                                  cap[lo_trk[ti]])
                hi_b = np.maximum(hi_b, lo_b + margin)
                trk_f, h_f_idx = lo_trk[ti], fine_h[fi]
                m = solve_nodes(trk_f, gi, h_f_idx, p_lo[trk_f], lo_b, hi_b)
                n_solves += int(m.size)
                again = np.nonzero((np.isnan(m) & (lo_b > floor_trk[trk_f]))
                                   | ((m >= hi_b - 1e-6) & (hi_b < cap[trk_f])))[0]
                if again.size:
                    m[again] = solve_nodes(trk_f[again], gi[again], h_f_idx[again], p_lo[trk_f[again]])
                    n_solves += int(again.size)
                fine[ti, gi, fi] = m
            block = grid_lo[lo_trk]
            block[:, :, fine_h] = fine
            grid_lo[lo_trk] = block
        grid_hi[lo_trk] = grid_lo[lo_trk]
        if hi_trk.size:
            sub = solved[n_lo:].reshape(hi_trk.size, n_g, sub_h.size)
            delta = sub - grid_lo[hi_trk][:, :, sub_h]
            # A no-takeoff node on either layer: no pressure change (the lower, conservative
            # layer's value, or no takeoff where that is not possible).
            delta = np.where(np.isfinite(delta), delta, 0.0)
            # The pressure change interpolated in headwind onto every headwind node.
            delta_full = solvinggrid.interpolate_headwind(
                delta, h_nodes_trk[hi_trk][:, sub_h], h_nodes_trk[hi_trk]).transpose(0, 2, 1)
            grid_hi[hi_trk] = grid_lo[hi_trk] + delta_full

    # No-takeoff nodes next to possible ones: a mass just below OEW on the trend, so the
    # possible part of such a cell is not lost (first along temperature, then headwind).
    floor = (oew[trk_first] * settings.bracket_low)[:, None]
    for g in (grid_lo, grid_hi):
        g[:] = solvinggrid.fill_no_takeoff_nodes(
            np.swapaxes(np.broadcast_to(t_nodes_fam[trk_fam][:, :, None], g.shape), 1, 2),
            np.swapaxes(g, 1, 2), floor).swapaxes(1, 2)
        g[:] = solvinggrid.fill_no_takeoff_nodes(
            np.broadcast_to(h_nodes_trk[:, None, :], g.shape), g, floor, reverse=True)

    # Each month: a window of K consecutive temperature nodes covering its score range,
    # the grid interpolated to its station pressure, then to its wind points.
    t_case_nodes = t_nodes_fam[fam]  # (n, G)
    _, needed = solvinggrid.node_window(t_case_nodes, t_lo_case, t_hi_case, n_g)
    k_win = int(min(n_g, max(2, needed.max())))
    start, _ = solvinggrid.node_window(t_case_nodes, t_lo_case, t_hi_case, k_win)
    win = start[:, None] + np.arange(k_win)  # (n, K)
    t_nodes = np.take_along_axis(t_case_nodes, win, axis=1)
    case_grid = solvinggrid.interpolate_pressure(
        grid_lo[trk[:, None], win], grid_hi[trk[:, None], win],
        p_lo[trk][:, None, None], p_hi[trk][:, None, None], pressure[:, None, None])  # (n, K, H)
    flat = ~(c_sd > 0)  # zero spread: every day at the mean
    with np.errstate(invalid="ignore", divide="ignore"):
        scores = climatology.daily_max_temperature_score(
            t_nodes, c_mean[:, None], c_sd[:, None], None if c_pv is None else c_pv[:, None, :])
    if np.any(flat):
        at_mean = solvinggrid.interpolate_headwind(
            np.swapaxes(case_grid[flat], 1, 2), t_nodes[flat], c_mean[flat, None])  # (m, 1, H)
        case_grid[flat] = np.repeat(at_mean, k_win, axis=1)
        scores[flat] = np.arange(k_win) - 0.5 * (k_win - 1)
        t_nodes[flat] = c_mean[flat, None]
    h_nodes = h_nodes_trk[trk]  # (n, H)
    counts = {"grid": n_solves, "refine": 0, "binding": 0}

    def temperature(case_index, score):
        """Daily maximum temperature of a day of the case's month at a score."""
        am_idx = am_pos[case_index]
        pv = None if t_pv is None else t_pv[am_idx]
        return climatology.daily_max_temperature_k(score, t_mean[am_idx], t_sd[am_idx], pv)

    def solve_days(case_index, point_index, score):
        """Direct solves of days (case, wind point, temperature score) on the grid's mass
        bracket (so a mass above MTOW is not cut at MTOW); below the floor: the floor."""
        counts["refine"] += int(case_index.size)
        if case_index.size == 0:
            return np.zeros(0)
        ac = aircraft_arrays(aircraft_table, ac_index[case_index])
        ac = _replace(ac, oew_kg=np.asarray(ac.oew_kg) * settings.bracket_low,
                      mtow_kg=np.asarray(ac.mtow_kg) * settings.bracket_high)
        site = _site(cases, case_index, site_cls, temperature_k=temperature(case_index, score),
                     headwind_mps=h_f[case_index, point_index])
        m = np.asarray(solve_at(case_index, ac, site, tol_kg=settings.refine_tol_kg, figures=False).tow_limit_kg,
                       dtype=float)
        return np.where(np.isfinite(m), m, oew[case_index] * settings.bracket_low)

    def solve_fields(case_index, point_index, score):
        """Direct solves (the run's aircraft, 1 kg bracket) of days: all result fields."""
        counts["binding"] += int(case_index.size)
        ac = aircraft_arrays(aircraft_table, ac_index[case_index])
        site = _site(cases, case_index, site_cls, temperature_k=temperature(case_index, score),
                     headwind_mps=h_f[case_index, point_index])
        return _weight_limit_fields(solve_at(case_index, ac, site), int(case_index.size))

    def binding_rows(res, start, day_case, fallback_case):
        """Direct solve of each level's binding day; rows for groups.

        ``day_case(g, j, z)``: case (runway direction) a day is flown on; ``fallback_case``
        (N,): the case named on rows that are not possible. A binding day stepped from a
        sampled day (``start``) whose solve misses the level mass by more than
        ``settings.binding_tol_kg`` is moved by secant steps on its wind point (at most
        ``settings.binding_iterations``), the closest solve kept.
        """
        n_grp, n_lev = res.mass_kg.shape
        ok = np.isfinite(res.mass_kg)
        g_o = np.nonzero(ok)[0]
        j_o = res.point[ok]
        z_o = res.score[ok].copy()
        target = res.mass_kg[ok]
        c_o = start["case"][ok].copy()
        own = np.nonzero(c_o < 0)[0]
        c_o[own] = day_case(g_o[own], j_o[own], z_o[own])
        sol = {k: np.array(v) for k, v in solve_fields(c_o, j_o, z_o).items()}
        floor_o = oew[c_o]
        z_cur, m_cur = z_o.copy(), np.where(np.isfinite(sol["tow_limit_kg"]), sol["tow_limit_kg"], floor_o)
        z_prev, m_prev, slope = (start["score"][ok], start["mass_kg"][ok], start["slope_kg"][ok])
        # A binding day not stepped from a sampled day whose solve misses the level by more
        # than the accuracy bound sits where the surface is not accurate (typically a level
        # on a plateau, e.g. the climb limit below the flat-rating corner, whose binding day
        # lies where the mass starts to fall): its secant starts from the surface's slope.
        if res.score_slope_kg is not None:
            bound = np.maximum(settings.refine_bound_share * target, settings.refine_bound_kg)
            far = ~np.isfinite(slope) & (np.abs(m_cur - target) > bound)
            slope = np.where(far, res.score_slope_kg[ok], slope)
        for _ in range(settings.binding_iterations):  # a fixed, small number of secant steps
            idx = np.nonzero((np.abs(m_cur - target) > settings.binding_tol_kg) & np.isfinite(slope))[0]
            if idx.size == 0:
                break
            z_new = reliabilitylevels.secant_score(z_prev[idx], m_prev[idx], z_cur[idx], m_cur[idx],
                                             target[idx], slope[idx])
            c_new = c_o[idx]  # the secant stays on the binding day's runway direction
            s_new = solve_fields(c_new, j_o[idx], z_new)
            m_new = np.where(np.isfinite(s_new["tow_limit_kg"]), s_new["tow_limit_kg"], oew[c_new])
            m_old = np.where(np.isfinite(sol["tow_limit_kg"][idx]), sol["tow_limit_kg"][idx],
                             floor_o[idx])
            better = np.abs(m_new - target[idx]) < np.abs(m_old - target[idx])
            keep = idx[better]
            for k, v in s_new.items():
                sol[k][keep] = v[better]
            z_o[keep], c_o[keep], floor_o[keep] = z_new[better], c_new[better], oew[c_new][better]
            z_prev[idx], m_prev[idx] = z_cur[idx], m_cur[idx]
            z_cur[idx], m_cur[idx] = z_new, m_new
        t_b = temperature(c_o, z_o)
        hb = h_f[c_o, j_o]
        case_of = np.repeat(np.asarray(fallback_case)[:, None], n_lev, axis=1)
        case_of[ok] = c_o
        cols = {k: np.full((n_grp, n_lev), np.nan) for k in sol if k != "limiting_factor"}
        factor = np.where(ok, -1, res.reason).astype(np.int64)
        for k, v in sol.items():
            if k == "limiting_factor":
                factor[ok] = v
            else:
                cols[k][ok] = v
        temp = np.full((n_grp, n_lev), np.nan)
        temp[ok] = t_b
        head = np.full((n_grp, n_lev), np.nan)
        head[ok] = hb
        # Keep the levels non-increasing in mass: a level whose binding-day solve came out
        # above the level below it takes that level's solution (same binding day).
        order = np.argsort(levels)
        for a, b in zip(order[:-1], order[1:]):
            worse = ok[:, a] & ok[:, b] & (cols["tow_limit_kg"][:, b] > cols["tow_limit_kg"][:, a])
            for arr in list(cols.values()) + [factor, temp, head]:
                arr[worse, b] = arr[worse, a]
            case_of[worse, b] = case_of[worse, a]
        flat_case = case_of.ravel()
        p_alt = cases["pressure_altitude_m"].to_numpy(float)[flat_case]
        pressure = cases["pressure_pa"].to_numpy(float)[flat_case]
        t_flat = temp.ravel()
        with np.errstate(invalid="ignore"):
            d_alt = atmosphere.density_altitude_m(atmosphere.density_kg_m3(pressure, t_flat))
        ok_flat = ok.ravel()
        frame = pd.DataFrame({
            "run_id": np.full(n_grp * n_lev, run_id, dtype=np.int64),
            "airfield_id": cases["airfield_id"].to_numpy(object)[flat_case],
            "runway_id": np.where(ok_flat, cases["runway_id"].to_numpy(object)[flat_case], None),
            "aircraft_type_id": cases["aircraft_type_id"].to_numpy(object)[flat_case],
            "month": cases["month"].to_numpy(np.int8)[flat_case],
            "condition": cases["condition"].to_numpy(object)[flat_case],
            "basis": "reliability",
            "reliability": np.tile(levels, n_grp),
            "oat_c": t_flat - constants.ZERO_CELSIUS_K,
            "pressure_altitude_m": p_alt,
            "density_altitude_m": np.where(ok_flat, d_alt, np.nan),
            "headwind_mps": head.ravel(),
            "tow_limit_kg": cols["tow_limit_kg"].ravel(),
            "limiting_factor": np.asarray(limits.name(factor.ravel()), dtype=object),
        })
        for k in _PLAIN:
            frame[k] = cols[k].ravel()
        for k, src in _SPEEDS.items():
            frame[k] = cols[src].ravel() / constants.KT_MPS
        frame[SHARE_COLUMN] = np.repeat(res.share_days, n_lev)
        frame["governing_obstacle_id"] = governing_obstacle_ids(
            None if obstacle_ids is None else obstacle_ids[flat_case], cols["governing_obstacle"].ravel())
        ordered = [c for c in RESULT_COLUMNS if c in frame.columns]
        return frame[ordered + [c for c in frame.columns if c not in ordered]]

    # Airfield level: groups of directions, in blocks of groups (bounded memory).
    grp = cases.groupby(list(GROUP_KEYS), sort=False)
    g_id = grp.ngroup().to_numpy()
    d_id = grp.cumcount().to_numpy()
    n_grp, n_dir = int(g_id.max()) + 1, int(d_id.max()) + 1
    n_pts = h_f.shape[1]
    case_at = np.full((n_grp, n_dir), -1, dtype=np.int64)
    case_at[g_id, d_id] = np.arange(n)
    valid = case_at >= 0
    safe = np.where(valid, case_at, 0)
    first = safe[:, 0]
    cell_risk = solvinggrid.grid_error_indicator(case_grid)  # (n, K - 1, H - 1)
    # Blocks of groups with the same number of runway directions (a group's directions are
    # its first columns of case_at), so no padding direction is interpolated or compared.
    dir_count = valid.sum(axis=1)
    blocks = []
    for d_count in np.unique(dir_count):  # a handful of direction counts
        members = np.nonzero(dir_count == d_count)[0]
        size = max(1, int(settings.block_elements // max(1, d_count * n_pts * k_win)))
        blocks += [(members[b0:b0 + size], int(d_count)) for b0 in range(0, members.size, size)]
    parts, sample_parts = [], []
    for gb, d_count in blocks:  # blocks of groups: memory, not a loop over cases
        sb = safe[gb, :d_count]
        pm = solvinggrid.interpolate_headwind(case_grid, h_nodes, h_f[sb], rows=sb)  # (B, D, J, K)
        fb = sb[:, 0]
        flown_b, m_grp, lost = reliabilitylevels.flown_direction(pm, cross_ex[sb], tail_ex[sb])
        prepared = reliabilitylevels.prepare_masses(m_grp, scores[fb])
        res_b = reliabilitylevels.reliability_masses(
            prepared, scores[fb], weight_case[fb], oew[fb], mtow[fb], levels=levels, lost_reason=lost)
        # Contour order of the days for the refinement: flown direction (on the middle
        # temperature node), then headwind.
        d_mid = flown_b[:, :, k_win // 2]
        c_mid = np.take_along_axis(sb, d_mid, axis=1)  # (B, J)
        h_mid = h_f[c_mid, np.arange(n_pts)]
        key = d_mid * _KEY_STRIDE + h_mid
        # Error indicator of each point's grid cell on that direction, per temperature cell.
        risk = solvinggrid.indicator_at_points(cell_risk, h_nodes, h_mid, c_mid)  # (B, J, K - 1)
        sample_parts.append(_refinement_samples(prepared, scores[fb], weight_case[fb], res_b,
                                                mtow[fb], key, settings, risk))
        parts.append(res_b)
    order = np.concatenate([gb for gb, _ in blocks])
    res = _concat(parts)
    res = type(res)(**{f.name: getattr(res, f.name)[np.argsort(order)] for f in dataclasses.fields(res)})
    samples = _join_samples(sample_parts, [gb for gb, _ in blocks])

    def day_directions(g, j, z, margin=0.0):
        """Best usable direction index of days (group g, wind point j, score z), and the
        usable directions within ``margin`` of it (R, D)."""
        c = safe[g]  # (R, D)
        jc = j[:, None]
        m_d = solvinggrid.interpolate_day(case_grid, h_nodes, scores[c[:, 0]][:, None, :], h_f[c, jc],
                                          z[:, None], rows=c)  # (R, D), at each day's own score
        use = valid[g] & ~cross_ex[c, jc] & ~tail_ex[c, jc]
        # The masses are at the day's score already: one temperature node, at that score.
        return reliabilitylevels.direction_at_score(np.where(valid[g], m_d, np.nan)[..., None], use,
                                                    z[:, None], z, margin)

    def solve_group_days(g, j, z):
        """Direct masses of days on the best of their candidate directions (the surface's
        best and those within ``settings.refine_direction_margin`` of it), and the case."""
        best, within = day_directions(g, j, z, settings.refine_direction_margin)
        r, d = np.nonzero(within)
        m = solve_days(safe[g[r], d], j[r], z[r])
        top = np.full(g.size, -np.inf)
        np.maximum.at(top, r, m)
        pick = np.full(g.size, -1, dtype=np.int64)
        hit = m >= top[r]
        pick[r[hit][::-1]] = d[hit][::-1]  # the first candidate reaching the maximum
        pick = np.where(pick >= 0, pick, best)
        return np.where(np.isfinite(top), top, oew[safe[g, pick]] * settings.bracket_low), safe[g, pick]

    surface = res
    res, start = _refine(res, samples, solve_group_days, levels, oew[first], mtow[first])
    airfield = binding_rows(res, start, lambda g, j, z: safe[g, day_directions(g, j, z)[0]], first)
    if details is not None:
        details.update(grid_low=grid_lo, grid_high=grid_hi, case_grid=case_grid, cases=cases,
                       h_nodes=h_nodes, t_nodes=t_nodes, solves=counts,
                       scores=scores, temperature=temperature, crosswind_exceeded=cross_ex,
                       tailwind_exceeded=tail_ex,
                       point_headwind=h_f, point_weight=weight_case, levels=res,
                       group_case=case_at, surface_levels=surface)

    direction = None
    if settings.per_direction:
        point_mass = solvinggrid.interpolate_headwind(case_grid, h_nodes, h_f)  # (n, J, K)
        _, m_one, lost_one = reliabilitylevels.flown_direction(point_mass[:, None], cross_ex[:, None],
                                                         tail_ex[:, None])
        res1 = reliabilitylevels.reliability_masses(m_one, scores, weight_case, oew, mtow,
                                              levels=levels, lost_reason=lost_one)
        samples1 = _join_samples([_refinement_samples(m_one, scores, weight_case, res1, mtow,
                                                      h_f, settings)], [np.arange(n)])
        res1, start1 = _refine(res1, samples1, lambda g, j, z: (solve_days(g, j, z), g), levels,
                               oew, mtow)
        direction = binding_rows(res1, start1, lambda g, j, z: g, np.arange(n))
        # A direction alone names its own runway even when no day is possible.
        direction["runway_id"] = np.repeat(cases["runway_id"].to_numpy(object), levels.size)
    return direction, airfield
