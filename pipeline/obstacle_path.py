"""The takeoff flight path of one case over its runway's obstacles, for ``explain`` and the report.

:func:`flight_path_view` builds the case exactly as a run does (:func:`pipeline.explain.build_case`,
the obstacles of :func:`pipeline.cases.obstacle_arrays`), solves it, and asks
:mod:`physics.flightpath` for the one-engine-inoperative takeoff flight path at the limit
mass (OEW where no mass is possible): gradients, the level acceleration, the gross and net
breakpoints and each obstacle's net height and clearance. No formulas here: every number
comes from :mod:`physics`; distances are moved to the end of TODA only.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

#: Names of the path's breakpoints (``physics.flightpath.FlightPath``), in order.
POINTS = ("screen height", "gear up", "acceleration height", "final speed reached", "1 500 ft")
#: Names of its four segments.
SEGMENTS = ("first segment: V2, gear down, takeoff flaps",
            "second segment: V2, gear up, takeoff flaps",
            "level acceleration to the final takeoff speed",
            "final segment: clean, maximum continuous thrust")


@dataclass(frozen=True)
class FlightPathView:
    """One case's takeoff flight path and obstacles (SI; distances from the end of TODA).

    ``gross_x_m``/``net_x_m`` and ``gross_h_m``/``net_h_m``: the five breakpoints of
    :data:`POINTS` (inf where a segment never ends); ``gradients``: gross gradients of the
    first, second and final segments [–]; ``accel_mps2``: gross level acceleration;
    ``reduction``: the net reduction Δγ [–]; ``obstacles``: one row per obstacle of the
    runway direction (``obstacle_id``, ``distance_from_toda_end_m``, ``lateral_offset_m``,
    ``height_m``, ``in_area``, ``net_height_m`` (NaN beyond the path or outside the area),
    ``clearance_m``, ``status`` (cleared, not cleared, beyond the path, outside the departure
    area) and ``governing``).
    """

    airfield_id: str
    runway_id: str
    aircraft_type_id: str
    month: int
    condition: str
    tow_limit_kg: float
    limiting_factor: str
    mass_kg: float
    engine_count: int
    takeoff_distance_m: float
    toda_m: float
    screen_height_m: float
    v2_mps: float
    v_final_mps: float
    density_kg_m3: float
    gradients: tuple[float, float, float]
    accel_mps2: float
    reduction: float
    gear_retraction_s: float
    acceleration_height_m: float
    default_acceleration_height_m: float
    max_acceleration_height_m: float
    gross_x_m: np.ndarray
    gross_h_m: np.ndarray
    net_x_m: np.ndarray
    net_h_m: np.ndarray
    least_margin: float
    obstacle_clearance_m: float
    obstacles: pd.DataFrame

    @property
    def start_m(self) -> float:
        """Where the path starts (the end of the takeoff distance), from the end of TODA. [m]"""
        return self.takeoff_distance_m - self.toda_m


def _f(x) -> float:
    return float(np.ravel(np.asarray(x, dtype=float))[0])


def flight_path_view(tables, airfield_id: str, runway_id: str, month: int, aircraft_type_id: str,
                     condition: str = "dry", temperature_offset_k: float = 0.0) -> FlightPathView | None:
    """The case's takeoff flight path over its obstacles (None: the runway has none).

    Parameters
    ----------
    tables : schemas.load.Tables or dict of SI frames
        Input tables (``obstacles`` included).
    airfield_id, runway_id, month, aircraft_type_id, condition
        The case, as in a run (design day).
    temperature_offset_k : float
        Climate scenario offset. [K]
    """
    from fieldlimits.physics import climb, enginefailure, flightpath as fp, limits, takeoffevents
    from fieldlimits.physics import weightlimit as wl
    from fieldlimits.pipeline import cases as case_io
    from fieldlimits.pipeline.explain import build_case

    table = tables["obstacles"]
    if table is None or len(table) == 0:
        return None
    mine = table[(table["airfield_id"].astype(str) == airfield_id) & (table["runway_id"].astype(str) == runway_id)]
    if len(mine) == 0:
        return None
    case, a, s, _ = build_case(tables, airfield_id, runway_id, int(month), aircraft_type_id, condition,
                               temperature_offset_k)
    obstacles, ids = case_io.obstacle_arrays(case, table)
    res = wl.solve_takeoff_weight(a, s, obstacles=obstacles)
    limit = _f(res.tow_limit_kg)
    mass = limit if np.isfinite(limit) else _f(a.oew_kg)
    s = takeoffevents.site_after_lineup(s, a.lineup_allowance_m)  # as the solver: line-up off each distance
    rows = mine.assign(in_area=False, net_height_m=np.nan, clearance_m=np.nan, status="outside the departure area",
                       governing=False).set_index("obstacle_id")
    base = dict(airfield_id=airfield_id, runway_id=runway_id, aircraft_type_id=aircraft_type_id, month=int(month),
                condition=condition, tow_limit_kg=limit, limiting_factor=str(limits.name(int(res.limiting_factor[0]))),
                mass_kg=mass, engine_count=int(_f(a.engine_count)), toda_m=_f(s.toda_m),
                screen_height_m=_f(s.screen_height_m), gear_retraction_s=_f(a.gear_retraction_s),
                default_acceleration_height_m=_f(a.acceleration_height_m),
                max_acceleration_height_m=_f(a.max_acceleration_height_m),
                obstacle_clearance_m=_f(res.obstacle_clearance_m))
    m = np.asarray([mass])
    cases = wl.prepare_cases(a, s, vmcg_floor=True)
    if obstacles is not None:
        cases.cached("obstacles", lambda cs: obstacles)
    cases.cached("engine_failure_final", lambda cs: True)  # the converged V1, as the results
    memo = {}
    if base["engine_count"] > 1:
        r = enginefailure.weight_limit_engine_failure(cases, m, memo)
        tod, v2 = r.takeoff_distance_m, r.speeds.v2_mps
    else:
        aeo = wl.all_engines(cases, m, memo)
        tod, v2 = aeo.takeoff_distance_m, aeo.v2_mps
    law = climb.climb_thrust_law(a, s.pressure_pa, s.temperature_k)
    inp = fp.path_inputs(a, mass_kg=m, density_kg_m3=cases.density_kg_m3, v2_mps=v2, thrust_fn=law.thrust_n)
    if obstacles is not None:
        found = fp.weight_limit_flight_path(cases, m, memo)
        h_acc, margin, gov = found["height_m"], _f(found["margin"]), _f(found["obstacle"])
    else:
        h_acc, margin, gov = np.asarray(a.acceleration_height_m, dtype=float), np.inf, np.nan
    red = fp.net_gradient_reduction(a.engine_count)
    kw = dict(screen_m=s.screen_height_m, v2_mps=inp.v2_mps, v_final_mps=inp.v_final_mps,
              headwind_mps=s.headwind_mps, gradient_gear_down=inp.gradient_gear_down,
              gradient_second=inp.gradient_second, accel_mps2=inp.accel_mps2,
              gradient_final=inp.gradient_final, gear_time_s=a.gear_retraction_s, acceleration_height_m=h_acc)
    gross = fp.takeoff_flight_path(**kw)
    net = fp.takeoff_flight_path(**kw, reduction=red)
    start = _f(tod) - _f(s.toda_m)
    if obstacles is not None:
        dist = np.asarray(obstacles.distance_m)[0]
        height = np.asarray(obstacles.height_m)[0]
        x_obs = dist - start  # from the path's start
        h_net = np.asarray(net.height_at(x_obs[None, :]))[0]
        margins = np.asarray(fp.obstacle_margins(net, x_obs[None, :], height[None, :]))[0]
        for k, oid in enumerate(ids[0]):
            if oid is None:
                continue
            past = not np.isfinite(h_net[k])
            rows.loc[oid, ["in_area", "net_height_m", "clearance_m", "status", "governing"]] = [
                True, h_net[k], h_net[k] - height[k] - fp.OBSTACLE_CLEARANCE_M,
                "beyond the end of the takeoff path" if past else "cleared" if margins[k] >= 0 else "not cleared",
                bool(np.isfinite(gov) and int(gov) == k)]
    return FlightPathView(
        **base, takeoff_distance_m=_f(tod), v2_mps=_f(inp.v2_mps), v_final_mps=_f(inp.v_final_mps),
        density_kg_m3=_f(cases.density_kg_m3),
        gradients=(_f(inp.gradient_gear_down), _f(inp.gradient_second), _f(inp.gradient_final)),
        accel_mps2=_f(inp.accel_mps2), reduction=_f(red), acceleration_height_m=_f(h_acc),
        gross_x_m=np.asarray(gross.x_m, dtype=float).ravel() + start, gross_h_m=np.asarray(gross.h_m, float).ravel(),
        net_x_m=np.asarray(net.x_m, dtype=float).ravel() + start, net_h_m=np.asarray(net.h_m, float).ravel(),
        least_margin=margin,
        obstacles=rows.reset_index().sort_values(["distance_from_toda_end_m", "obstacle_id"], ignore_index=True))
