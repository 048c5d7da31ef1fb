"""Landing-mass limits at the route destinations: the input tables wired to
:mod:`physics.landing` (and :mod:`physics.climatology`, :mod:`physics.solvinggrid` and
:mod:`physics.reliabilitylevels` for the reliability levels). No formulas here.

For every destination of the routes table and every aircraft type flown there:

* **Design day** (as for takeoff): each runway direction × month × runway condition at the
  month's mean daily maximum temperature (plus the run's climate scenario offset), the
  station pressure from the month's QNH and the airfield elevation, calm wind. One row per
  direction (``landing_direction``) and the best direction per airfield
  (``landing_airfield``: the highest landing-mass limit among the directions checked).
* **Reliability levels** (the run's ``reliability_levels``, for its
  ``reliability_conditions``): the landing-mass limit on a grid per direction × month × type
  × condition — the temperature at the standard-normal scores −2.5 … 2.5 of the month's
  daily maximum (:data:`physics.solvinggrid.DEFAULT_SCORE_NODES`) × factored headwinds
  (50 % of a headwind, 150 % of a tailwind, 14 CFR 25.105(d)(1) as for takeoff) spanning the
  wind-rose points usable on that direction —, interpolated to the points, each day landed
  on the best usable direction (the type's crosswind and tailwind limits), and the level
  masses found by :func:`physics.reliabilitylevels.reliability_masses` (capped at the maximum
  landing mass). Each level's binding day is solved directly for the row's figures. The
  limit changes smoothly with temperature and headwind (no V1 regimes as at takeoff), so the
  grid needs no refinement step (the grid is solved with the structural cap raised, so it
  stays smooth through it, and the cap applied in the level search): against direct solves
  of every wind point the levels of the demo network agree within 0.1 %
  (tests/pipeline/test_landing.py).

A runway direction without ``lda_m`` gets no landing check: its rows say ``not_checked``,
and the best direction is chosen among the directions that have one; an airfield with none
is ``not_checked`` throughout (route payloads then keep the structural maximum landing mass
as the only destination limit, as before).
"""

from __future__ import annotations

import dataclasses
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq

from fieldlimits.physics import (atmosphere, climatology, constants, landing, limits, reliabilitylevels,
                                  solvinggrid)
from fieldlimits.schemas import results as result_tables

LANDING_COLUMNS: tuple[str, ...] = tuple(c.name for c in result_tables.LANDING_COMMON)
"""Columns of ``landing_direction`` and ``landing_airfield`` (``run_id`` first)."""

GROUP_KEYS = ("airfield_id", "aircraft_type_id", "month", "condition")

#: Headwind nodes below and above calm of the reliability grid. [–]
TAIL_NODES, HEAD_NODES = 3, 4
#: Wind-rose points per sector and per speed class (as the takeoff reliability rows).
DIRECTIONS_PER_SECTOR, SPEEDS_PER_CLASS = 3, 1
#: The reliability grid is solved with the maximum landing mass raised by this factor.
GRID_CAP_SCALE = 1.25
#: Block of groups handled at once in the reliability step (bounded memory).
BLOCK_ELEMENTS = 2_000_000


@dataclass(frozen=True)
class LandingRule:
    """The dispatch rule of a run (run parameters ``landing_jet_share``,
    ``landing_turboprop_share``, ``landing_wet_increase``; see
    :func:`physics.landing.required_landing_distance_m`)."""

    jet_share: float = landing.DRY_SHARE_TURBOJET
    turboprop_share: float = landing.DRY_SHARE_TURBOJET
    wet_increase: float = landing.WET_INCREASE

    @classmethod
    def from_params(cls, params) -> "LandingRule":
        p = dict(params or {})
        return cls(float(p.get("landing_jet_share", cls.jet_share)),
                   float(p.get("landing_turboprop_share", cls.turboprop_share)),
                   float(p.get("landing_wet_increase", cls.wet_increase)))


def destination_pairs(routes: pd.DataFrame) -> pd.DataFrame:
    """Unique (airfield_id, aircraft_type_id) of the route destinations, sorted."""
    if routes is None or len(routes) == 0:
        return pd.DataFrame({"airfield_id": pd.Series(dtype=object), "aircraft_type_id": pd.Series(dtype=object)})
    pairs = pd.DataFrame({"airfield_id": routes["destination_id"].astype(str).to_numpy(),
                          "aircraft_type_id": routes["aircraft_type_id"].astype(str).to_numpy()})
    return pairs.drop_duplicates().sort_values(["airfield_id", "aircraft_type_id"], ignore_index=True)


def landing_cases(tables, pairs: pd.DataFrame, temperature_offset_k: float = 0.0,
                  conditions=result_tables.CONDITIONS) -> pd.DataFrame:
    """Design-day landing cases: destination runway direction × type × month × condition.

    Columns: the keys, ``aircraft_index`` (row of ``aircraft_types``), ``heading_true_deg``,
    ``lda_m`` (NaN: not checked), ``slope``, the design-day atmosphere of
    :func:`pipeline.cases.station_frame`, ``mu_brake`` (the condition's), ``mu_brake_dry`` and
    ``wet``.
    """
    from fieldlimits.pipeline import cases as case_io

    runways = tables["runways"]
    rw = runways[runways["airfield_id"].astype(str).isin(set(pairs["airfield_id"]))]
    if "lda_m" not in rw.columns:
        rw = rw.assign(lda_m=np.nan)
    st = case_io.station_frame(tables, rw, temperature_offset_k)
    types = tables["aircraft_types"].reset_index(drop=True)
    index = pd.Series(np.arange(len(types)), index=types["aircraft_type_id"].astype(str))
    st = st.merge(pairs, on="airfield_id", how="inner")
    st["aircraft_index"] = index.reindex(st["aircraft_type_id"]).to_numpy()
    frames = []
    for cond in conditions:
        _, mu_brake = case_io.friction_for(st["surface"].to_numpy(object), cond)
        _, mu_dry = case_io.friction_for(st["surface"].to_numpy(object), "dry")
        frames.append(st.assign(condition=cond, mu_brake=mu_brake, mu_brake_dry=mu_dry,
                                wet=float(cond == "wet")))
    out = pd.concat(frames, ignore_index=True) if frames else st.iloc[:0]
    out = out.sort_values(["airfield_id", "runway_id", "aircraft_type_id", "month", "condition"],
                          kind="stable", ignore_index=True)
    out["month"] = out["month"].astype(np.int8)
    out["aircraft_index"] = out["aircraft_index"].astype(np.int64)
    return out


def aircraft_inputs(aircraft_table: pd.DataFrame, index: np.ndarray):
    """``physics.weightlimit.Aircraft`` and ``physics.landing.LandingConfig`` per case."""
    from fieldlimits.pipeline.chunks import aircraft_arrays

    config = landing.LandingConfig(**{name: aircraft_table[name].to_numpy(float)[index]
                                      for name in landing.LANDING_FIELDS})
    return aircraft_arrays(aircraft_table, index), config


def solve(cases: pd.DataFrame, aircraft_table: pd.DataFrame, rule: LandingRule, index=None, *,
          temperature_k=None, headwind_mps=None, figures=True, cap_scale=1.0) -> landing.LandingLimit:
    """Landing-mass limits of cases (rows ``index``; temperature and headwind overridable;
    ``cap_scale`` raises the structural cap, for a grid that stays smooth through it)."""
    idx = np.arange(len(cases)) if index is None else np.asarray(index, dtype=np.int64)
    a, config = aircraft_inputs(aircraft_table, cases["aircraft_index"].to_numpy()[idx])
    if cap_scale != 1.0:
        a = dataclasses.replace(a, max_landing_mass_kg=np.asarray(a.max_landing_mass_kg) * cap_scale)
    t = None if temperature_k is None else np.asarray(temperature_k, dtype=float)
    grid = t is not None and t.ndim == 2  # (case, node): the case's fields broadcast along the nodes
    if grid:
        a, config = (type(x)(**{f.name: np.asarray(getattr(x, f.name))[:, None] for f in dataclasses.fields(x)})
                     for x in (a, config))
    col = (lambda name: cases[name].to_numpy(float)[idx][:, None]) if grid else (  # noqa: E731
        lambda name: cases[name].to_numpy(float)[idx])
    site = landing.LandingSite(
        lda_m=col("lda_m"), slope=col("slope"), mu_brake=col("mu_brake"), mu_brake_dry=col("mu_brake_dry"),
        wet=col("wet"), pressure_pa=col("pressure_pa"),
        temperature_k=col("temperature_k") if t is None else t,
        headwind_mps=np.zeros(idx.size) if headwind_mps is None else np.asarray(headwind_mps, dtype=float))
    share = landing.dispatch_share(a.thrust_model, rule.jet_share, rule.turboprop_share)
    return landing.landing_mass_limit(a, config, site, share=share, wet_increase=rule.wet_increase,
                                      figures=figures)


def _rows(cases: pd.DataFrame, idx: np.ndarray, result: landing.LandingLimit, *, run_id, basis, reliability,
          temperature_k, headwind_mps, share_days=None, factor_names=None) -> pd.DataFrame:
    """Result rows (``LANDING_COLUMNS``) of the cases ``idx`` and their limits."""
    n = idx.size
    pressure = cases["pressure_pa"].to_numpy(float)[idx]
    t = np.asarray(temperature_k, dtype=float)
    with np.errstate(invalid="ignore"):
        rho = atmosphere.density_kg_m3(pressure, t)
        vref_eas = atmosphere.equivalent_airspeed_mps(result.vref_mps, rho)
    names = (np.asarray(landing.factor_name(result.limiting_factor), dtype=object).reshape(n)
             if factor_names is None else factor_names)
    frame = pd.DataFrame({
        "run_id": np.full(n, -1 if run_id is None else run_id, dtype=np.int64),
        "airfield_id": cases["airfield_id"].to_numpy(object)[idx],
        "runway_id": cases["runway_id"].to_numpy(object)[idx],
        "aircraft_type_id": cases["aircraft_type_id"].to_numpy(object)[idx],
        "month": cases["month"].to_numpy(np.int8)[idx],
        "condition": cases["condition"].to_numpy(object)[idx],
        "basis": np.full(n, basis, dtype=object),
        "reliability": np.broadcast_to(np.asarray(reliability, dtype=float), (n,)),
        "oat_c": t - constants.ZERO_CELSIUS_K,
        "pressure_altitude_m": cases["pressure_altitude_m"].to_numpy(float)[idx],
        "density_altitude_m": atmosphere.density_altitude_m(rho),
        "headwind_mps": np.broadcast_to(np.asarray(headwind_mps, dtype=float), (n,)),
        "lda_m": cases["lda_m"].to_numpy(float)[idx],
        "landing_limit_kg": result.landing_limit_kg,
        "limiting_factor": names,
        "distance_limited_mass_kg": result.distance_limited_kg,
        "approach_climb_limited_mass_kg": result.approach_climb_limited_kg,
        "landing_climb_limited_mass_kg": result.landing_climb_limited_kg,
        "landing_distance_m": result.landing_distance_m,
        "required_landing_distance_m": result.required_distance_m,
        "vref_kt": vref_eas / constants.KT_MPS,
        "approach_climb_gradient": result.approach_climb_gradient,
        "landing_climb_gradient": result.landing_climb_gradient,
        "share_days_full_mass": (np.full(n, np.nan) if share_days is None
                                 else np.broadcast_to(np.asarray(share_days, dtype=float), (n,))),
    })
    if run_id is None:
        frame = frame.drop(columns="run_id")
    return frame


def best_direction(direction: pd.DataFrame) -> pd.DataFrame:
    """Airfield rows from direction rows: per airfield × type × month × condition × basis ×
    reliability the checked direction with the highest limit (the first on a tie; a
    ``no_landing`` direction only where no direction allows a landing), else one
    ``not_checked`` row without a runway."""
    keys = list(GROUP_KEYS) + ["basis", "reliability"]
    d = direction.assign(_checked=direction["lda_m"].notna(),
                         _m=direction["landing_limit_kg"].fillna(-np.inf), _pos=np.arange(len(direction)))
    d = d.sort_values(keys + ["_checked", "_m", "_pos"], ascending=[True] * len(keys) + [False, False, True],
                      kind="stable", na_position="first")
    best = d.drop_duplicates(keys, keep="first").copy()
    unchecked = ~best["_checked"].to_numpy()
    if unchecked.any():
        blank = [c for c in best.columns if c not in keys + ["run_id", "airfield_id", "aircraft_type_id", "month",
                                                              "condition", "oat_c", "pressure_altitude_m",
                                                              "density_altitude_m", "headwind_mps", "limiting_factor"]
                 and not c.startswith("_")]
        for c in blank:
            best.loc[unchecked, c] = None if best[c].dtype == object else np.nan
        best.loc[unchecked, "limiting_factor"] = "not_checked"
    return best.drop(columns=["_checked", "_m", "_pos"]).sort_values(keys, kind="stable", ignore_index=True)


def design_day_frames(cases: pd.DataFrame, aircraft_table: pd.DataFrame, rule: LandingRule, run_id=None):
    """(direction rows, airfield rows) of the design day."""
    idx = np.arange(len(cases))
    result = solve(cases, aircraft_table, rule)
    direction = _rows(cases, idx, result, run_id=run_id, basis="design_day", reliability=np.nan,
                      temperature_k=cases["temperature_k"].to_numpy(float), headwind_mps=0.0)
    return direction, best_direction(direction)


# ------------------------------------------------------------------------------------------
# reliability levels


def _lost_name(codes: np.ndarray) -> np.ndarray:
    """Landing factor names of climatology's not-possible reasons (physics.limits codes)."""
    out = np.full(codes.shape, "no_landing", dtype=object)
    out[codes == limits.code("crosswind_limit")] = "crosswind_limit"
    out[codes == limits.code("tailwind_limit")] = "tailwind_limit"
    return out


#: Destination airfields per block of the landing step: a block's landing cases (design
#: day and reliability levels: each case × 144 wind points × a few arrays) are built, solved
#: and written together, so memory is bounded by the block, and blocks are the jobs of the
#: worker processes (:func:`write_landing_parts`). 200 destinations of the 20 000-airfield
#: synthetic network: about 0.2 GiB at the block's peak (0.45 GiB with 400).
BLOCK_AIRFIELDS = 200


def _destination_blocks(cases: pd.DataFrame, size: int | None):
    """``cases`` split into blocks of at most ``size`` whole destination airfields."""
    ids = np.sort(cases["airfield_id"].unique())
    if size is None or ids.size <= size:
        yield cases
        return
    for start in range(0, ids.size, size):
        yield cases[cases["airfield_id"].isin(ids[start:start + size])].reset_index(drop=True)


def reliability_frame(cases: pd.DataFrame, aircraft_table: pd.DataFrame, climate: pd.DataFrame,
                      wind_rose: pd.DataFrame, *, levels, conditions, rule: LandingRule,
                      temperature_offset_k: float = 0.0, run_id=None, details: dict | None = None,
                      block_airfields: int | None = BLOCK_AIRFIELDS) -> pd.DataFrame:
    """Airfield rows (basis ``reliability``) of the landing cases for the given levels.

    ``cases`` are design-day landing cases (:func:`landing_cases`); ``climate`` and
    ``wind_rose`` the SI input tables (at least the destinations), or for the wind rose a
    function of airfield ids that returns their rows (a large run reads it block by block
    from its Parquet copy). The destinations are solved ``block_airfields`` at a time (None:
    all at once). ``details`` (tests) gets the interpolated point masses, weights and scores
    (all destinations in one block).
    """
    from fieldlimits.pipeline import reliability as rel

    levels = np.asarray(levels, dtype=float)
    cases = cases[cases["condition"].isin(list(conditions))].reset_index(drop=True)
    if len(cases) == 0 or levels.size == 0:
        return None
    checked = cases["lda_m"].notna().to_numpy()
    # groups with no checked direction: not_checked rows, nothing to solve
    any_checked = (cases.groupby(list(GROUP_KEYS), sort=True)["lda_m"].transform("count") > 0).to_numpy()
    out = []
    none = cases[~any_checked].drop_duplicates(list(GROUP_KEYS))
    if len(none):
        idx = none.index.to_numpy()
        blank = landing.LandingLimit(**{f.name: np.full(idx.size, np.nan)
                                        for f in dataclasses.fields(landing.LandingLimit)})
        for p in levels:
            f = _rows(cases, idx, blank, run_id=run_id, basis="reliability", reliability=p,
                      temperature_k=np.full(idx.size, np.nan), headwind_mps=np.nan,
                      factor_names=np.full(idx.size, "not_checked", dtype=object))
            f["runway_id"] = None
            f["lda_m"] = np.nan
            f["density_altitude_m"] = np.nan
            out.append(f)
    cs = cases[checked].reset_index(drop=True)
    if len(cs):
        # Whole destinations at a time, so memory stays bounded on a large network (every
        # case's levels come from its own airfield-month: the blocks give the same rows).
        size = None if details is not None else block_airfields
        for block in _destination_blocks(cs, size):
            rose = wind_rose(block["airfield_id"].unique()) if callable(wind_rose) else wind_rose
            out.append(_reliability_checked(block, aircraft_table, climate, rose, levels, rule,
                                            float(temperature_offset_k), run_id, rel, details))
    frame = pd.concat(out, ignore_index=True)
    keys = list(GROUP_KEYS) + ["reliability"]
    return frame.sort_values(keys, kind="stable", ignore_index=True)[list(frame.columns)]


def _reliability_checked(cases, aircraft_table, climate, wind_rose, levels, rule, offset, run_id, rel, details):
    n = len(cases)
    ac_index = cases["aircraft_index"].to_numpy()
    col = lambda name: aircraft_table[name].to_numpy(float)[ac_index]  # noqa: E731
    oew, mlm = col("oew_kg"), col("max_landing_mass_kg")
    am = cases[["airfield_id", "month"]].drop_duplicates().reset_index(drop=True)
    am_pos = pd.Series(np.arange(len(am)), index=pd.MultiIndex.from_frame(am)).reindex(
        pd.MultiIndex.from_frame(cases[["airfield_id", "month"]])).to_numpy()
    rose_rows = wind_rose.merge(am, on=["airfield_id", "month"], how="inner")
    rose, calm = rel._rose_arrays(rose_rows, am)
    p_dir, p_speed, p_weight = climatology.wind_rose_points(
        rose["direction_deg"], rose["sector_width_deg"], rose["speed_low_mps"], rose["speed_high_mps"],
        rose["frequency"], calm, directions_per_sector=DIRECTIONS_PER_SECTOR, speeds_per_class=SPEEDS_PER_CLASS)
    t_mean, t_sd, t_pv = rel._temperatures(climate, am, offset)
    h_f, cross_ex, tail_ex = climatology.runway_usability(
        p_dir[am_pos], p_speed[am_pos], cases["heading_true_deg"].to_numpy(float)[:, None],
        col("tailwind_limit_mps")[:, None], col("crosswind_limit_mps")[:, None])
    weight = p_weight[am_pos]
    usable = ~cross_ex & ~tail_ex
    lo = np.where(usable, h_f, np.inf).min(axis=1)
    hi = np.where(usable, h_f, -np.inf).max(axis=1)
    lo, hi = np.where(np.isfinite(lo), lo, 0.0), np.where(np.isfinite(hi), hi, 0.0)
    h_nodes = solvinggrid.headwind_nodes(lo, hi, tail_nodes=TAIL_NODES, head_nodes=HEAD_NODES)  # (n, H)
    scores = np.asarray(solvinggrid.DEFAULT_SCORE_NODES, dtype=float)
    n_g, n_h = scores.size, h_nodes.shape[1]

    # Each airfield-month on its own distribution: the normal one unless it gives a
    # percentile (not the piecewise one for all as soon as one destination of the block gives
    # percentiles: the same in exact arithmetic but not to the bit), so a row does not
    # depend on the other destinations solved with it.
    given = None if t_pv is None else np.isfinite(t_pv).any(axis=-1)

    def temperature(case, score):
        a = am_pos[case]
        normal = climatology.daily_max_temperature_k(score, t_mean[a], t_sd[a])
        if given is None:
            return normal
        return np.where(given[a], climatology.daily_max_temperature_k(score, t_mean[a], t_sd[a], t_pv[a]), normal)

    t_nodes = temperature(np.arange(n)[:, None], scores[None, :])  # (n, G)
    # the grid: every direction × node, one vectorised solve (mass only), (n, G·H)
    t_grid = np.repeat(t_nodes, n_h, axis=1)
    h_grid = np.tile(h_nodes, (1, n_g))
    # the structural cap raised so that the surface stays smooth through it (a kink between
    # two nodes would be cut off by the interpolation); reliability_masses applies the cap
    grid = solve(cases, aircraft_table, rule, None, temperature_k=t_grid, headwind_mps=h_grid,
                 figures=False, cap_scale=GRID_CAP_SCALE).landing_limit_kg.reshape(n, n_g, n_h)

    grp = cases.groupby(list(GROUP_KEYS), sort=True)
    g_id, d_id = grp.ngroup().to_numpy(), grp.cumcount().to_numpy()
    n_grp, n_dir = int(g_id.max()) + 1, int(d_id.max()) + 1
    case_at = np.full((n_grp, n_dir), -1, dtype=np.int64)
    case_at[g_id, d_id] = np.arange(n)
    valid = case_at >= 0
    safe = np.where(valid, case_at, 0)
    first = safe[:, 0]
    n_pts = h_f.shape[1]
    block = max(1, BLOCK_ELEMENTS // max(1, n_dir * n_pts * n_g))
    parts = []
    for b0 in range(0, n_grp, block):  # blocks of groups: memory, not a loop over cases
        sb, vb = safe[b0:b0 + block], valid[b0:b0 + block]
        pm = solvinggrid.interpolate_headwind(grid[sb], h_nodes[sb], h_f[sb])  # (B, D, J, G)
        raw = np.where(vb[:, :, None, None], pm, np.nan)
        _, m_grp, lost = reliabilitylevels.flown_direction(raw, np.where(vb[:, :, None], cross_ex[sb], True),
                                                     np.where(vb[:, :, None], tail_ex[sb], True), vb)
        fb = sb[:, 0]
        parts.append(reliabilitylevels.reliability_masses(m_grp, scores, weight[fb], oew[fb], mlm[fb], levels=levels,
                                                    lost_reason=lost))
        if details is not None:
            details.setdefault("point_mass", []).append(m_grp)
    res = rel._concat(parts)
    if details is not None:
        details.update(levels=res, scores=scores, weight=weight[first], group_case=case_at, grid=grid,
                       h_nodes=h_nodes, point_headwind=h_f, temperature=temperature, usable=usable)

    # each level's binding day, solved directly on its best usable direction
    ok = np.isfinite(res.mass_kg)
    g_o, l_o = np.nonzero(ok)
    j_o, z_o = res.point[ok], res.score[ok]
    c_grp = safe[g_o]  # (R, D)
    pm_d = solvinggrid.interpolate_headwind(grid[c_grp], h_nodes[c_grp], h_f[c_grp, j_o[:, None]][..., None])
    use = valid[g_o] & usable[c_grp, j_o[:, None]]
    best, _ = reliabilitylevels.direction_at_score(np.where(valid[g_o][..., None], pm_d[:, :, 0, :], np.nan), use,
                                             scores, z_o)
    c_o = c_grp[np.arange(best.size), best]
    t_o = temperature(c_o, z_o)
    hw_o = h_f[c_o, j_o]
    direct = solve(cases, aircraft_table, rule, c_o, temperature_k=t_o, headwind_mps=hw_o)

    n_lev = levels.size
    case_of = np.repeat(first[:, None], n_lev, axis=1)
    case_of[g_o, l_o] = c_o
    fields = {f.name: np.full((n_grp, n_lev), np.nan) for f in dataclasses.fields(landing.LandingLimit)
              if f.name != "limiting_factor"}
    for name in fields:
        fields[name][g_o, l_o] = getattr(direct, name)
    names = np.full((n_grp, n_lev), None, dtype=object)
    names[~ok] = _lost_name(res.reason[~ok])
    names[g_o, l_o] = landing.factor_name(direct.limiting_factor)
    temp = np.full((n_grp, n_lev), np.nan)
    temp[g_o, l_o] = t_o
    head = np.full((n_grp, n_lev), np.nan)
    head[g_o, l_o] = hw_o
    # keep the levels non-increasing in mass: a level whose binding-day solve came out above
    # the level below it takes that level's solution (the same day)
    order = np.argsort(levels)
    for lo_l, hi_l in zip(order[:-1], order[1:]):
        worse = ok[:, lo_l] & ok[:, hi_l] & (fields["landing_limit_kg"][:, hi_l] > fields["landing_limit_kg"][:, lo_l])
        for arr in list(fields.values()) + [names, temp, head, case_of]:
            arr[worse, hi_l] = arr[worse, lo_l]
    flat = case_of.ravel()
    result = landing.LandingLimit(**{k: v.ravel() for k, v in fields.items()},
                                  limiting_factor=np.zeros(flat.size, dtype=np.int64))
    frame = _rows(cases, flat, result, run_id=run_id, basis="reliability", reliability=np.tile(levels, n_grp),
                  temperature_k=temp.ravel(), headwind_mps=head.ravel(),
                  share_days=np.repeat(res.share_days, n_lev), factor_names=names.ravel())
    lost = ~ok.ravel()
    frame.loc[lost, "runway_id"] = None
    frame.loc[lost, ["lda_m", "density_altitude_m"]] = np.nan
    return frame


# ------------------------------------------------------------------------------------------
# the run: blocks of destinations, each written to Parquet parts as it is solved


@dataclass
class LandingFrames:
    """Landing rows of a run: per direction (design day) and per airfield (all bases)."""

    direction: pd.DataFrame
    airfield: pd.DataFrame


def empty_frame(with_run_id: bool = True) -> pd.DataFrame:
    cols = LANDING_COLUMNS if with_run_id else LANDING_COLUMNS[1:]
    return pd.DataFrame({c: pd.Series(dtype=object) for c in cols})


def _run_settings(params):
    p = dict(params or {})
    levels = tuple(float(x) for x in (p.get("reliability_levels") or ()))
    return (p, LandingRule.from_params(p), float(p.get("temperature_offset_k", 0.0) or 0.0),
            tuple(p.get("conditions") or result_tables.CONDITIONS), levels,
            tuple(p.get("reliability_conditions") or ("dry",)))


def _block_frames(tables, pairs: pd.DataFrame, params, wind_rose, run_id=None):
    """(direction rows, design-day airfield rows, reliability airfield rows or None) of some
    destinations: their landing cases built, solved and turned into rows together."""
    _, rule, offset, conditions, levels, rel_conditions = _run_settings(params)
    cases = landing_cases(tables, pairs, offset, conditions)
    aircraft_table = tables["aircraft_types"].reset_index(drop=True)
    direction, airfield = design_day_frames(cases, aircraft_table, rule, run_id)
    rel = None
    if levels:
        if wind_rose is None and cases["lda_m"].notna().any():
            raise ValueError("the wind rose is needed for the landing reliability levels")
        rel = reliability_frame(cases, aircraft_table, tables["climate_monthly"], wind_rose, levels=levels,
                                conditions=rel_conditions, rule=rule, temperature_offset_k=offset, run_id=run_id,
                                block_airfields=None)
        rel = rel[airfield.columns] if rel is not None and len(rel) else None
    return direction, airfield, rel


def landing_frames(tables, params=None, run_id=None, wind_rose: pd.DataFrame | None = None,
                   routes: pd.DataFrame | None = None) -> LandingFrames:
    """Landing rows for every route destination × type of a run, all in one block and held
    in memory (tests, small networks; a run writes them block by block with
    :func:`write_landing_parts`: the same rows).

    Parameters
    ----------
    tables : mapping
        SI input tables (``schemas.load.load_folder``): ``routes``, ``runways``,
        ``airfields``, ``climate_monthly``, ``aircraft_types`` (and ``wind_rose`` for the
        reliability levels unless given).
    params : mapping, optional
        Run parameters (:class:`pipeline.steps.RunParams` as a dict): temperature offset,
        conditions, reliability levels and conditions, the landing rule.
    run_id : int, optional
        Written into the rows (left out when None).
    wind_rose : DataFrame or callable, optional
        The wind rose when ``tables`` no longer holds it, or a function of airfield ids
        returning their wind-rose rows.
    routes : DataFrame, optional
        Routes (default ``tables["routes"]``).
    """
    routes = tables["routes"] if routes is None else routes
    pairs = destination_pairs(routes)
    if len(pairs) == 0:
        return LandingFrames(empty_frame(run_id is not None), empty_frame(run_id is not None))
    rose = tables.get("wind_rose") if wind_rose is None else wind_rose
    if callable(rose):
        rose = rose(pairs["airfield_id"].unique())
    direction, airfield, rel = _block_frames(tables, pairs, params, rose, run_id)
    if rel is not None:
        airfield = pd.concat([airfield, rel], ignore_index=True)
    return LandingFrames(direction, airfield)


def read_wind_rose(path: Path, airfield_ids) -> pd.DataFrame:
    """The wind rose of some airfields from a run's Parquet copy (``<work>/tables``), reading
    only the row groups that can hold them (:func:`pipeline.chunks.read_airfield_rows`), not
    the whole file for every block."""
    from fieldlimits.pipeline.chunks import read_airfield_rows

    return read_airfield_rows(path, airfield_ids)


#: Part folders of the landing rows in the run's work folder (read by the route step and
#: scanned by the load). Airfield parts: ``design-NNNNN`` then ``reliability-NNNNN``, so the
#: files in name order give the rows in the order of :func:`landing_frames`.
DIRECTION_PARTS, AIRFIELD_PARTS = "landing_direction", "landing_airfield"
#: The block tables a worker gets (the rows of its destinations; aircraft types whole).
BLOCK_TABLES = ("runways", "airfields", "climate_monthly")

_ARROW_TYPES = {"BIGINT": pa.int64(), "VARCHAR": pa.string(), "TINYINT": pa.int8(), "DOUBLE": pa.float64()}
PART_SCHEMA = pa.schema([pa.field(c.name, _ARROW_TYPES[c.sql_type]) for c in result_tables.LANDING_COMMON
                         if c.name != "run_id"])
"""Arrow schema of every landing part (the stored columns but ``run_id``, set by the load)."""


@dataclass(frozen=True)
class LandingParts:
    """The landing part files of a run, in row order (see :data:`AIRFIELD_PARTS`)."""

    direction: tuple[str, ...]
    airfield: tuple[str, ...]
    rows_direction: int = 0
    rows_airfield: int = 0


@dataclass(frozen=True)
class BlockJob:
    """One block of destinations: all a worker process needs to write the block's parts."""

    number: int
    tables: dict  # BLOCK_TABLES rows of the block's airfields, and aircraft_types
    pairs: pd.DataFrame  # (airfield_id, aircraft_type_id) of the block
    wind_rose: object  # the block's rows, the path of the run's Parquet copy, or None
    params: dict
    folder: str  # the work folder


def _write_part(frame: pd.DataFrame, path: Path) -> int:
    """One part file with :data:`PART_SCHEMA`, written under a temporary name and renamed."""
    table = pa.Table.from_pandas(frame[list(PART_SCHEMA.names)], schema=PART_SCHEMA, preserve_index=False)
    tmp = path.with_name(f".{path.name}.tmp")
    pq.write_table(table, tmp)
    os.replace(tmp, path)
    return table.num_rows


def write_block(job: BlockJob) -> tuple[str, ...]:
    """Solve one block of destinations and write its parts; return their paths (direction,
    design-day airfield, reliability airfield when there are levels)."""
    rose = job.wind_rose
    if isinstance(rose, (str, os.PathLike)):
        rose = read_wind_rose(Path(rose), job.pairs["airfield_id"].unique())
    direction, airfield, rel = _block_frames(job.tables, job.pairs, job.params, rose)
    del rose
    folder = Path(job.folder)
    paths = [folder / DIRECTION_PARTS / f"part-{job.number:05d}.parquet",
             folder / AIRFIELD_PARTS / f"design-{job.number:05d}.parquet"]
    _write_part(direction, paths[0])
    _write_part(airfield, paths[1])
    if rel is not None:
        paths.append(folder / AIRFIELD_PARTS / f"reliability-{job.number:05d}.parquet")
        _write_part(rel, paths[2])
    return tuple(map(str, paths))


def write_block_in_worker(job: BlockJob) -> tuple[str, ...]:
    """:func:`write_block` in a worker process, whose freed memory then goes back to the
    system before its next block (:func:`pipeline.chunks.release_free_memory`)."""
    from fieldlimits.pipeline.chunks import release_free_memory

    try:
        return write_block(job)
    finally:
        release_free_memory()


def destination_blocks(pairs: pd.DataFrame, size: int | None) -> list[np.ndarray]:
    """The destination airfield ids in blocks of at most ``size`` (None: one block), sorted."""
    ids = np.sort(pairs["airfield_id"].unique())
    if size is None or ids.size <= size:
        return [ids] if ids.size else []
    return [ids[start:start + size] for start in range(0, ids.size, size)]


def _rows_by_block(frame: pd.DataFrame, blocks: list[np.ndarray]) -> list[np.ndarray]:
    """Row positions of ``frame`` per block of airfield ids (each in the frame's order)."""
    number = pd.Series(np.repeat(np.arange(len(blocks)), [b.size for b in blocks]),
                       index=np.concatenate(blocks) if blocks else np.array([], dtype=object))
    of = number.reindex(frame["airfield_id"].astype(str).to_numpy()).to_numpy(float)
    have = np.flatnonzero(~np.isnan(of))
    order = have[np.argsort(of[have], kind="stable")]
    bounds = np.searchsorted(of[order], np.arange(len(blocks) + 1) - 0.5)
    return [order[a:b] for a, b in zip(bounds[:-1], bounds[1:])]


def _block_jobs(tables, pairs, blocks, params, wind_rose, folder):
    """The jobs of the blocks, made one at a time (each holds only its block's rows)."""
    rows = {name: _rows_by_block(tables[name], blocks) for name in BLOCK_TABLES}
    pair_rows = _rows_by_block(pairs, blocks)
    rose_rows = _rows_by_block(wind_rose, blocks) if isinstance(wind_rose, pd.DataFrame) else None
    for n in range(len(blocks)):
        sub = {name: tables[name].iloc[rows[name][n]] for name in BLOCK_TABLES}
        sub["aircraft_types"] = tables["aircraft_types"]
        rose = wind_rose.iloc[rose_rows[n]] if rose_rows is not None else wind_rose
        yield BlockJob(n, sub, pairs.iloc[pair_rows[n]].reset_index(drop=True), rose, params, str(folder))


def write_landing_parts(tables, params, folder, *, wind_rose=None, block_airfields: int | None = BLOCK_AIRFIELDS,
                        executor=None, routes: pd.DataFrame | None = None) -> LandingParts:
    """Landing rows for every route destination × type of a run, written block by block to
    the part folders of ``folder`` (:data:`DIRECTION_PARTS`, :data:`AIRFIELD_PARTS`); the
    rows are those of :func:`landing_frames` to the bit, in the same order.

    Parameters
    ----------
    tables : mapping
        SI input tables, as for :func:`landing_frames`.
    params : mapping
        Run parameters.
    folder : path
        The run's work folder; its part folders are emptied first (a retried step).
    wind_rose : DataFrame or path, optional
        The wind rose (default ``tables["wind_rose"]``), or the path of its Parquet copy,
        read by each block for its own airfields.
    block_airfields : int or None
        Destination airfields per block (None: one block).
    executor : concurrent.futures.Executor, optional
        Runs the blocks (a process pool: each worker solves and writes whole blocks); None:
        one after the other in this process. At most two blocks per worker are handed on at
        a time.
    routes : DataFrame, optional
        Routes (default ``tables["routes"]``).
    """
    import shutil

    folder = Path(folder)
    for sub in (DIRECTION_PARTS, AIRFIELD_PARTS):
        shutil.rmtree(folder / sub, ignore_errors=True)
        (folder / sub).mkdir(parents=True)
    routes = tables["routes"] if routes is None else routes
    pairs = destination_pairs(routes)
    rose = tables.get("wind_rose") if wind_rose is None else wind_rose
    blocks = destination_blocks(pairs, block_airfields)
    jobs = _block_jobs(tables, pairs, blocks, dict(params or {}), rose, folder)
    written: list[tuple[str, ...]] = []
    if executor is None:
        written = [write_block(job) for job in jobs]
    else:
        from collections import deque

        window = 2 * max(1, int(getattr(executor, "_max_workers", 1) or 1))
        pending: deque = deque()
        for job in jobs:
            pending.append(executor.submit(write_block_in_worker, job))
            if len(pending) >= window:
                written.append(pending.popleft().result())
        written.extend(f.result() for f in pending)
    direction = tuple(w[0] for w in written)
    airfield = tuple(sorted(p for w in written for p in w[1:]))
    count = lambda files: sum(pq.ParquetFile(f).metadata.num_rows for f in files)  # noqa: E731
    return LandingParts(direction, airfield, count(direction), count(airfield))


#: The landing airfield columns the route step reads (:func:`pipeline.routes.route_payload_frame`).
ROUTE_COLUMNS = ("airfield_id", "runway_id", "aircraft_type_id", "month", "condition", "basis", "reliability",
                 "landing_limit_kg", "limiting_factor")


def route_rows(parts: LandingParts) -> pd.DataFrame:
    """The destination rows the route step needs, read from the airfield parts."""
    if not parts.airfield:
        return empty_frame(False)[list(ROUTE_COLUMNS)]
    import pyarrow.dataset as ds

    return ds.dataset(list(parts.airfield), format="parquet").to_table(columns=list(ROUTE_COLUMNS)).to_pandas()
