"""Reliability levels for a chunk: the takeoff mass achievable on at least p of the days of a
month, with the temperature spread and the wind rose, on the best usable runway direction.

This module only wires tables to :mod:`physics.climatology` and the weight-limit solver; it
holds no formulas. For the chunk's cases (complete airfields, see :mod:`pipeline.cases`):

1. the month's wind rose becomes wind points (:func:`physics.climatology.wind_rose_points`)
   and each point's factored headwind and usability on every runway direction for each
   aircraft type (:func:`physics.climatology.runway_usability`);
2. the weight limit is solved on a small grid per direction × month × type × condition:
   temperatures at fixed standard-normal scores of the month's daily-maximum distribution
   × factored headwinds spanning the usable points (``physics.weightlimit``). The grid is
   solved with the structural cap raised to 1.5 MTOW so the mass surface stays smooth
   through MTOW; the cap is applied after interpolation
   (:func:`physics.climatology.reliability_masses`). The floor stays at OEW: a grid node
   with no takeoff at OEW (NaN) makes every interpolated value that uses it not possible
   (conservative near the boundary). Lowering the floor is not offered as a default: below
   OEW the speed schedule is set by the minimum control speeds and the requirements need
   not be monotone in mass. The headwind nodes of each temperature row are then refined
   (``settings.refinements`` rounds, one node each) where the mass curve bends most
   (:func:`physics.climatology.headwind_refinement`): limit regimes change with headwind
   (V1 held at the minimum control speed, say) and leave kinks between nodes;
3. the points are interpolated on the grid, flown on their best usable direction
   (:func:`physics.climatology.flown_direction`) and the level masses found
   (:func:`physics.climatology.reliability_masses`);
4. each level's binding day (its runway direction, temperature and wind point) is solved
   directly once more, so a row's mass, limiting factor, distances and speeds are those of
   one consistent solve.

Status: accuracy against direct solves is within 0.2 % / 50 kg for about 99 % of days
on the demo network; the residual sits at kinks of the limit (accelerate-stop regime
changes, V1 held at the minimum control speed on short wet runways), where level masses can
be off by up to about 3 %. Cost: about 60 weight-limit solves per design-day case plus the
level search; hence the producer is not switched on by default (see
:func:`chunk_reliability_rows`).

Rows go to ``results_airfield`` (basis ``reliability``, level in ``reliability``); with
``ReliabilitySettings.per_direction`` also one set per runway direction flown alone to
``results_direction``. The share of days on which MTOW is achievable is in
``share_days_full_mass`` (when the result schema carries that column).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Callable

import numpy as np
import pandas as pd

from physics import atmosphere, climatology, constants, limits
from schemas.results import RESULT_COLUMNS

GROUP_KEYS = ("airfield_id", "month", "aircraft_type_id", "condition")
SHARE_COLUMN = "share_days_full_mass"
_SPEEDS = {"v1_kt": "v1_mps", "vr_kt": "vr_mps", "v2_kt": "v2_mps", "v_lof_kt": "v_lof_mps"}
_PLAIN = ("takeoff_distance_m", "takeoff_run_m", "accelerate_stop_m", "climb_gradient")
_SITE_FIELDS = ("tora_m", "toda_m", "asda_m", "slope", "mu_roll", "mu_brake", "pressure_pa",
                "temperature_k", "headwind_mps", "screen_height_m")


@dataclass(frozen=True)
class ReliabilitySettings:
    """Resolution of the reliability computation (defaults balance speed and accuracy)."""

    score_nodes: tuple[float, ...] = climatology.DEFAULT_SCORE_NODES
    tail_nodes: int = 2
    head_nodes: int = 3
    directions_per_sector: int = 3
    speeds_per_class: int = 1
    bracket_low: float = 1.0
    bracket_high: float = 1.5
    refinements: int = 4
    per_direction: bool = False


def chunk_reliability_rows(context):
    """Row producer (see :mod:`pipeline.producers`): reliability rows of one chunk.

    Not yet active: :mod:`pipeline.producers` picks up a function named
    ``reliability_rows`` in this module. Activate with
    ``reliability_rows = chunk_reliability_rows`` below once the run time is acceptable
    (about 4–5 ms per design-day case on the 2-core machine, see the module notes).
    """
    from pipeline import cases as case_io
    from pipeline.chunks import aircraft_arrays
    from pipeline.producers import ProducerRows

    levels = tuple(float(p) for p in (context.params.get("reliability_levels") or ()))
    if not levels:
        return None
    aircraft_table = pd.read_parquet(context.work_dir / case_io.AIRCRAFT_FILE)
    direction, airfield = reliability_frames(
        context.cases, aircraft_table, context.table("runways"),
        context.table("climate_monthly"), context.table("wind_rose"), levels=levels,
        run_id=context.run_id,
        temperature_offset_k=float(context.params.get("temperature_offset_k", 0.0) or 0.0),
        aircraft_arrays=aircraft_arrays)
    return ProducerRows(direction=direction, airfield=airfield)


def _default_solver():
    from physics.weightlimit import solve_takeoff_weight

    return solve_takeoff_weight


def _default_aircraft_arrays(aircraft_table, index):
    from physics.weightlimit import Aircraft

    return Aircraft(**{f.name: aircraft_table[f.name].to_numpy(float)[index]
                       for f in dataclasses.fields(Aircraft)})


def _site(cases: pd.DataFrame, index: np.ndarray, site_cls=None, **override):
    if site_cls is None:
        from physics.weightlimit import Site as site_cls
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
    for name in _PLAIN + tuple(_SPEEDS.values()):
        v = getattr(result, name, None)
        out[name] = np.full(n, np.nan) if v is None else np.broadcast_to(np.asarray(v, float), (n,))
    return out


def reliability_frames(cases: pd.DataFrame, aircraft_table: pd.DataFrame, runways: pd.DataFrame,
                       climate: pd.DataFrame, wind_rose: pd.DataFrame, *, levels, run_id: int,
                       temperature_offset_k: float = 0.0,
                       settings: ReliabilitySettings = ReliabilitySettings(),
                       solve: Callable | None = None, aircraft_arrays: Callable | None = None,
                       site_cls=None, details: dict | None = None):
    """Reliability rows for the cases of complete airfields.

    Parameters
    ----------
    cases : DataFrame
        Design-day cases (columns of :func:`pipeline.cases.block_cases`).
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
        Grid and wind-point resolution.
    details : dict, optional
        Filled with the intermediate arrays (grid, point masses, levels) for tests.
    solve, aircraft_arrays, site_cls
        The weight-limit solver, the ``Aircraft`` builder and the ``Site`` class (defaults:
        ``physics.weightlimit``); tests pass stand-ins.

    Returns
    -------
    (DataFrame | None, DataFrame)
        Per-direction rows (only with ``settings.per_direction``) and airfield rows.
    """
    solve = solve or _default_solver()
    aircraft_arrays = aircraft_arrays or _default_aircraft_arrays
    levels = np.asarray(levels, dtype=float)
    cases = cases.reset_index(drop=True)
    n = len(cases)
    heading = (cases[["airfield_id", "runway_id"]]
               .merge(runways[["airfield_id", "runway_id", "heading_true_deg"]],
                      on=["airfield_id", "runway_id"], how="left")["heading_true_deg"]
               .to_numpy(float))
    ac_index = cases["aircraft_index"].to_numpy()
    tail_limit = aircraft_table["tailwind_limit_mps"].to_numpy(float)[ac_index]
    cross_limit = aircraft_table["crosswind_limit_mps"].to_numpy(float)[ac_index]
    oew = aircraft_table["oew_kg"].to_numpy(float)[ac_index]
    mtow = aircraft_table["mtow_kg"].to_numpy(float)[ac_index]

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

    # Wind points on every case's runway direction.
    h_f, cross_ex, tail_ex = climatology.runway_usability(
        p_dir[am_pos], p_speed[am_pos], heading[:, None], tail_limit[:, None], cross_limit[:, None])
    weight_case = p_weight[am_pos]
    usable = ~cross_ex & ~tail_ex & (weight_case > 0)
    h_min = np.min(np.where(usable, h_f, 0.0), axis=1)
    h_max = np.max(np.where(usable, h_f, 0.0), axis=1)
    h_nodes = climatology.headwind_nodes(h_min, h_max, tail_nodes=settings.tail_nodes,
                                         head_nodes=settings.head_nodes)  # (n, H)
    flat_k = aircraft_table["flat_rate_oat_k"].to_numpy(float)[ac_index]
    case_pv = None if t_pv is None else t_pv[am_pos]
    scores = _node_scores(settings.score_nodes, t_mean[am_pos], t_sd[am_pos], case_pv, flat_k)
    t_nodes = climatology.daily_max_temperature_k(
        scores, t_mean[am_pos][:, None], t_sd[am_pos][:, None],
        None if case_pv is None else case_pv[:, None, :])  # (n, G)
    n_g, n_h = scores.shape[1], h_nodes.shape[1]

    # Grid solve, mass bracket widened so cap and floor come after interpolation.
    rep = np.repeat(np.arange(n), n_g * n_h)
    ac_grid = aircraft_arrays(aircraft_table, ac_index[rep])
    ac_grid = _replace(ac_grid, oew_kg=np.asarray(ac_grid.oew_kg) * settings.bracket_low,
                       mtow_kg=np.asarray(ac_grid.mtow_kg) * settings.bracket_high)
    site_grid = _site(cases, rep, site_cls,
                      temperature_k=np.broadcast_to(t_nodes[:, :, None], (n, n_g, n_h)).ravel(),
                      headwind_mps=np.broadcast_to(h_nodes[:, None, :], (n, n_g, n_h)).ravel())
    grid = np.asarray(solve(ac_grid, site_grid).tow_limit_kg, dtype=float).reshape(n, n_g, n_h)
    # Headwind nodes per temperature row, refined where the mass curve has a kink.
    h_rows = np.broadcast_to(h_nodes[:, None, :], (n, n_g, n_h)).copy()
    rep_rows = np.repeat(np.arange(n), n_g)
    ac_rows = aircraft_arrays(aircraft_table, ac_index[rep_rows])
    ac_rows = _replace(ac_rows, mtow_kg=np.asarray(ac_rows.mtow_kg) * settings.bracket_high)
    for _ in range(settings.refinements):  # a fixed, small number of refinement rounds
        x, cell = climatology.headwind_refinement(h_rows, grid)
        m_new = solve(ac_rows, _site(cases, rep_rows, site_cls, temperature_k=t_nodes.ravel(),
                                     headwind_mps=x.ravel())).tow_limit_kg
        h_rows, grid = climatology.insert_headwind_node(
            h_rows, grid, x, np.asarray(m_new, dtype=float).reshape(n, n_g), cell)
    point_mass = climatology.interpolate_headwind(
        grid[:, :, None, :], h_rows, h_f[:, None, :])[..., 0].transpose(0, 2, 1)  # (n, J, G)

    def binding_rows(case_of, res, point_h):
        """Direct solve of each level's binding day; rows for groups (case_of: (N, L))."""
        n_grp, n_lev = res.mass_kg.shape
        ok = np.isfinite(res.mass_kg)
        c_idx = case_of[ok]
        am_idx = am_pos[c_idx]
        sc = res.score[ok]
        if t_pv is None:
            t_b = climatology.daily_max_temperature_k(sc, t_mean[am_idx], t_sd[am_idx])
        else:
            t_b = climatology.daily_max_temperature_k(sc, t_mean[am_idx], t_sd[am_idx], t_pv[am_idx])
        hb = point_h[ok]
        ac = aircraft_arrays(aircraft_table, ac_index[c_idx])
        sol = _weight_limit_fields(solve(ac, _site(cases, c_idx, site_cls, temperature_k=t_b,
                                                    headwind_mps=hb)), int(ok.sum()))
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
        ordered = [c for c in RESULT_COLUMNS if c in frame.columns]
        return frame[ordered + [c for c in frame.columns if c not in ordered]]

    # Airfield level: groups of directions.
    grp = cases.groupby(list(GROUP_KEYS), sort=False)
    g_id = grp.ngroup().to_numpy()
    d_id = grp.cumcount().to_numpy()
    n_grp, n_dir = int(g_id.max()) + 1, int(d_id.max()) + 1
    n_pts = point_mass.shape[1]
    case_at = np.full((n_grp, n_dir), -1, dtype=np.int64)
    case_at[g_id, d_id] = np.arange(n)
    valid = case_at >= 0
    safe = np.where(valid, case_at, 0)
    raw = np.where(valid[:, :, None, None], point_mass[safe], np.nan)
    cx = np.where(valid[:, :, None], cross_ex[safe], True)
    tx = np.where(valid[:, :, None], tail_ex[safe], True)
    first = safe[:, 0]
    w_grp = weight_case[first]
    flown, m_grp, lost = climatology.flown_direction(raw, cx, tx, valid)
    res = climatology.reliability_masses(m_grp, scores[first], w_grp, oew[first], mtow[first],
                                         levels=levels, lost_reason=lost)
    d_bind = np.take_along_axis(flown, res.point, axis=1)  # (N, L)
    case_bind = np.take_along_axis(safe, d_bind, axis=1)
    h_bind = h_f[case_bind, res.point]
    airfield = binding_rows(case_bind.copy(), res, h_bind)
    if details is not None:
        def temperature(case_index, score):
            am_idx = am_pos[case_index]
            pv = None if t_pv is None else t_pv[am_idx]
            return climatology.daily_max_temperature_k(score, t_mean[am_idx], t_sd[am_idx], pv)

        details.update(grid=grid, h_nodes=h_rows, t_nodes=t_nodes, point_mass=point_mass,
                       scores=scores, temperature=temperature, crosswind_exceeded=cross_ex,
                       tailwind_exceeded=tail_ex,
                       point_headwind=h_f, point_weight=weight_case, levels=res,
                       group_case=case_at, case_bind=case_bind)

    direction = None
    if settings.per_direction:
        _, m_one, lost_one = climatology.flown_direction(point_mass[:, None], cross_ex[:, None],
                                                         tail_ex[:, None])
        res1 = climatology.reliability_masses(m_one, scores, weight_case, oew, mtow,
                                              levels=levels, lost_reason=lost_one)
        case1 = np.repeat(np.arange(n)[:, None], levels.size, axis=1)
        direction = binding_rows(case1, res1, h_f[case1, res1.point])
        # A direction alone names its own runway even when no day is possible.
        direction["runway_id"] = cases["runway_id"].to_numpy(object)[case1.ravel()]
    return direction, airfield
