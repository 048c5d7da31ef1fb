"""One case explained step by step: atmosphere, speeds, thrust, every distance and gradient.

:func:`explain_case` builds the case exactly as a run does (:func:`pipeline.cases.block_cases`,
:func:`pipeline.chunks.aircraft_arrays`, :func:`pipeline.chunks.site_arrays`), solves it with
:func:`physics.weightlimit.solve_takeoff_weight` and then asks the physics modules for every
intermediate figure at the limit mass, so that an engineer can check the result by hand.
No formulas here: every number comes from :mod:`physics`; this module only formats them.
"""

from __future__ import annotations

import os
from dataclasses import dataclass

import numpy as np

from fieldlimits.pipeline.errors import BadInput
from fieldlimits.schemas.caution import CAUTION


@dataclass(frozen=True)
class ExplainedCase:
    """The text of an explanation and the solver's result it explains."""

    text: str
    tow_limit_kg: float
    limiting_factor: str
    v1_kt: float


_MARGIN_LABELS = {
    "_takeoff_distance_margin": "all engines: 1.15 × takeoff distance vs TODA",
    "_takeoff_run_margin": "all engines: 1.15 × takeoff run vs TORA",
    "engine_out_takeoff_distance_margin": "one engine out: takeoff distance vs TODA",
    "engine_out_takeoff_run_margin": "one engine out: takeoff run vs TORA",
    "accelerate_stop_margin": "accelerate-stop vs ASDA",
    "climb_gradient_margin": "climb gradient above the minimum",
}


def _known(values) -> str:
    vals = sorted({str(v) for v in values})
    return ", ".join(vals[:12]) + (" …" if len(vals) > 12 else "")


def load_tables(input_dir):
    """Validated SI tables of an input folder; a clear error listing the problems."""
    from fieldlimits.schemas.load import load_folder
    from fieldlimits.schemas.validate import InputError

    try:
        return load_folder(input_dir)
    except InputError as exc:
        lines = [str(p) for p in getattr(exc, "problems", [])]
        raise BadInput(f"the input tables in {input_dir} have errors; fix them first "
                       f"(fieldlimits check {input_dir}):\n  " + "\n  ".join(lines[:20])) from exc


def build_case(tables, airfield_id, runway_id, month, aircraft_type_id, condition="dry",
               temperature_offset_k=0.0):
    """The one case as a run builds it: (cases row frame, Aircraft, Site, aircraft row)."""
    from fieldlimits.pipeline import cases as case_io
    from fieldlimits.pipeline.chunks import aircraft_arrays, site_arrays

    airfields = tables["airfields"]
    if airfield_id not in set(airfields["airfield_id"].astype(str)):
        raise BadInput(f"unknown airfield {airfield_id!r}; known: {_known(airfields['airfield_id'])}")
    runways = tables["runways"]
    mine = runways[runways["airfield_id"].astype(str) == airfield_id]
    if str(runway_id) not in set(mine["runway_id"].astype(str)):
        raise BadInput(f"airfield {airfield_id!r} has no runway {runway_id!r}; "
                       f"its runways: {_known(mine['runway_id'])}")
    if not 1 <= int(month) <= 12:
        raise BadInput(f"month must be 1 to 12, not {month}")
    types = tables["aircraft_types"].reset_index(drop=True)
    if aircraft_type_id not in set(types["aircraft_type_id"].astype(str)):
        raise BadInput(f"unknown aircraft type {aircraft_type_id!r}; known: {_known(types['aircraft_type_id'])}")
    if condition not in ("dry", "wet"):
        raise BadInput(f"condition must be dry or wet, not {condition!r}")
    frame = case_io.block_cases(tables, [airfield_id], temperature_offset_k, conditions=(condition,))
    pick = frame[(frame["runway_id"].astype(str) == str(runway_id)) & (frame["month"] == int(month))
                 & (frame["aircraft_type_id"].astype(str) == aircraft_type_id)]
    if len(pick) != 1:
        raise BadInput(f"no climate for {airfield_id!r} in month {month} (or the case is ambiguous)")
    pick = pick.reset_index(drop=True)
    aircraft = aircraft_arrays(types, pick["aircraft_index"].to_numpy())
    site = site_arrays(pick)
    row = types.iloc[int(pick["aircraft_index"].iloc[0])]
    return pick, aircraft, site, row


def _f(x) -> float:
    return float(np.ravel(np.asarray(x, dtype=float))[0])


class _Lines:
    def __init__(self):
        self.out = []

    def head(self, title):
        self.out += ["", title, "-" * len(title)]

    def add(self, label, value, unit="", note=""):
        text = f"  {label:<46} {value:>12} {unit:<6}"
        self.out.append((text + ("  " + note if note else "")).rstrip())

    def text(self, s=""):
        self.out.append(s)


def _num(x, digits=0):
    x = _f(x)
    return "—" if not np.isfinite(x) else f"{x:,.{digits}f}"


def _speed(lines, label, tas, density):
    from fieldlimits.physics import atmosphere, constants

    eas = atmosphere.equivalent_airspeed_mps(tas, density)
    lines.add(label, _num(eas / constants.KT_MPS, 1), "kt",
              f"EAS {_num(eas, 2)} m/s, TAS {_num(tas, 2)} m/s")


def _class_defaults_line(tables, aircraft_type_id) -> str:
    """Which coefficients of the type are class defaults (``schemas.typeclasses``)."""
    from fieldlimits.schemas.typeclasses import describe

    users = getattr(tables, "user", {}).get("aircraft_types")
    cls = ""
    if users is not None and "type_class" in users.columns:
        mine = users[users["aircraft_type_id"].astype(str) == aircraft_type_id]
        cls = str(mine["type_class"].iloc[0]) if len(mine) else ""
    defaulted = getattr(tables, "class_defaults", {}).get(aircraft_type_id, ())
    if not defaulted:
        return f"Type class {cls}: every coefficient is given in the table."
    lines = [f"Type class {cls}: {len(defaulted)} coefficient(s) are class defaults (blank in the table):"]
    lines += [f"  {c:<22} {describe(cls, c)}" for c in defaulted]
    return "\n".join(lines)


def explain_case(input_dir=None, airfield_id="", runway_id="", month=1, aircraft_type_id="", condition="dry",
                 temperature_offset_k=0.0) -> ExplainedCase:
    """Solve one case and explain every step (plain function behind ``fieldlimits explain``).

    Parameters
    ----------
    input_dir : str or Path, optional
        Input folder (default: the bundled demo network).
    airfield_id, runway_id : str
        Airfield and runway direction (designator).
    month : int
        1–12.
    aircraft_type_id : str
        Aircraft type.
    condition : str
        ``dry`` or ``wet``.
    temperature_offset_k : float
        Climate scenario offset added to the month's temperature. [K]

    Returns
    -------
    ExplainedCase
        The text and the headline figures.
    """
    from fieldlimits.physics import atmosphere, climb, constants, enginefailure, fieldlength, limits, takeoffevents, thrust
    from fieldlimits.physics import weightlimit as wl

    if input_dir is None:
        from fieldlimits.demo_network import demo_path

        input_dir = demo_path()
    if not os.path.isdir(input_dir):
        raise BadInput(f"input folder {input_dir} does not exist")
    tables = load_tables(input_dir)
    case, a, s, row = build_case(tables, airfield_id, str(runway_id), int(month), aircraft_type_id, condition,
                                 temperature_offset_k)
    from fieldlimits.pipeline import cases as case_io

    obstacles, _ = case_io.obstacle_arrays(case, tables["obstacles"])  # as a run does
    res = wl.solve_takeoff_weight(a, s, obstacles=obstacles)
    factor = str(limits.name(int(res.limiting_factor[0])))
    limit = _f(res.tow_limit_kg)
    mass = limit if np.isfinite(limit) else _f(a.oew_kg)
    kt = constants.KT_MPS

    airfield = tables["airfields"].set_index("airfield_id").loc[airfield_id]
    climate = tables["climate_monthly"]
    climate = climate[(climate["airfield_id"] == airfield_id) & (climate["month"] == int(month))].iloc[0]
    p, t = _f(s.pressure_pa), _f(s.temperature_k)
    rho = _f(atmosphere.density_kg_m3(p, t))

    L = _Lines()
    L.text(f"fieldlimits explain — {airfield_id} runway {runway_id}, month {int(month)}, "
           f"{aircraft_type_id} ({row.get('name', '')}), {condition} runway, design day")
    L.text(CAUTION)
    L.text(_class_defaults_line(tables, aircraft_type_id))

    L.head("1. Atmosphere (design day: mean daily maximum, calm)")
    L.add("airfield elevation", _num(airfield["elevation_m"], 0), "m")
    L.add("QNH (month mean sea-level pressure)", _num(climate["qnh_pa"] / constants.HPA_PA, 1), "hPa")
    L.add("outside air temperature", _num(t - constants.ZERO_CELSIUS_K, 1), "°C",
          f"{_num(t, 2)} K" + (f" incl. scenario offset {temperature_offset_k:+.1f} K" if temperature_offset_k else ""))
    L.add("station pressure", _num(p / constants.HPA_PA, 2), "hPa", f"{_num(p, 0)} Pa")
    L.add("air density", _num(rho, 4), "kg/m³", f"sigma = rho/rho0 = {_num(rho / constants.RHO0_KG_M3, 4)}")
    L.add("pressure altitude", _num(atmosphere.pressure_altitude_m(p), 0), "m",
          f"{_num(atmosphere.pressure_altitude_m(p) / constants.FT_M, 0)} ft")
    L.add("density altitude", _num(atmosphere.density_altitude_m(rho), 0), "m",
          f"{_num(atmosphere.density_altitude_m(rho) / constants.FT_M, 0)} ft")
    L.add("ISA deviation", _num(atmosphere.isa_deviation_k(t, p), 1), "K")

    L.head("2. Runway")
    L.add("TORA / TODA / ASDA", f"{_num(s.tora_m)} / {_num(s.toda_m)} / {_num(s.asda_m)}", "m",
          f"clearway {_num(_f(s.toda_m) - _f(s.tora_m))} m, stopway {_num(_f(s.asda_m) - _f(s.tora_m))} m")
    L.add("effective slope (+ uphill)", _num(_f(s.slope) * 100, 2), "%")
    L.add("headwind component (factored)", _num(s.headwind_mps, 1), "m/s")
    L.add("rolling / braking friction", f"{_f(s.mu_roll):.3f} / {_f(s.mu_brake):.3f}", "–")
    L.add("screen height", _num(_f(s.screen_height_m) / constants.FT_M, 0), "ft",
          "35 ft dry, 15 ft wet (14 CFR 25.113)")
    lineup = _f(a.lineup_allowance_m)
    if lineup > 0:
        s = takeoffevents.site_after_lineup(s, lineup)
        L.add("line-up allowance", _num(lineup), "m", "runway used to align, off each declared distance")
        L.add("available after line-up", f"{_num(s.tora_m)} / {_num(s.toda_m)} / {_num(s.asda_m)}", "m",
              "TORA / TODA / ASDA used below")

    at = "the limit mass" if np.isfinite(limit) else "OEW (no mass meets every requirement)"
    L.head(f"3. Speeds at {at}: {_num(mass)} kg")
    ef = enginefailure.engine_failure_takeoff(a, s, np.asarray([mass]))
    sp = ef.speeds
    _speed(L, "VS (stall, takeoff flaps)", sp.vs_mps, rho)
    if _f(a.engine_count) > 1:
        _speed(L, "VMCG (minimum control speed on the ground)", sp.vmcg_mps, rho)
    _speed(L, "V1 (decision speed chosen)", ef.v1_mps, rho)
    _speed(L, "VR (rotation)", sp.vr_mps, rho)
    _speed(L, "VLOF (lift-off)", sp.vlof_mps, rho)
    _speed(L, "V2 (takeoff safety speed)", sp.v2_mps, rho)
    if bool(np.ravel(sp.vmcg_limited)[0]):
        L.text("  VR was below VMCG: VR, VLOF and V2 raised in proportion to VMCG (14 CFR 25.107).")

    L.head("3a. Event sequence (14 CFR 25.107, 25.109; delays: common flight-test practice)")
    t_r, t_a = _f(a.engine_failure_recognition_s), _f(a.stop_action_interval_s)
    t_rot = _f(takeoffevents.rotation_time_s(a.rotation_pitch_deg, a.rotation_rate_deg_per_s))
    if _f(a.engine_count) > 1:
        _speed(L, "VEF (engine failure)", ef.v_ef_mps, rho)
        L.add("recognition time, VEF to V1", _num(t_r, 1), "s", "on the remaining engines" if t_r else
              "0: failure recognised at V1")
    L.add("time between stop actions", _num(t_a, 1), "s",
          "brakes at V1, thrust to idle, then lift dumpers" if t_a else "0: all actions at V1")
    L.add("rotation", _num(t_rot, 2), "s",
          f"{_num(_f(a.rotation_pitch_deg), 1)}° at {_num(_f(a.rotation_rate_deg_per_s), 1)}°/s; "
          "VLOF at least VR plus the speed gained" if t_rot else "0: VLOF from its ratio")

    L.head("4. Thrust")
    n_eng = _f(a.engine_count)
    law_all = thrust.thrust_law_for_aircraft(a, s.pressure_pa, s.temperature_k)
    law_climb = climb.climb_thrust_law(a, s.pressure_pa, s.temperature_k)
    L.add(f"all {int(n_eng)} engine(s), static", _num(law_all.thrust_n(np.zeros(1)) / 1000, 1), "kN",
          f"model {thrust.MODEL_NAMES[int(_f(a.thrust_model))]}, flat rated to "
          f"{_num(_f(a.flat_rate_oat_k) - constants.ZERO_CELSIUS_K, 0)} °C")
    L.add("all engines at VLOF", _num(law_all.thrust_n(sp.vlof_mps) / 1000, 1), "kN")
    L.add(f"{int(climb.climb_engines_operating(n_eng))} engine(s) operating at V2 (climb)",
          _num(law_climb.thrust_n(sp.v2_mps) / 1000, 1), "kN")
    L.add("thrust / weight, all engines static", _num(law_all.thrust_n(np.zeros(1)) / (mass * constants.G0), 3), "–")

    L.head("5. Distances against what is available")
    cases = wl.prepare_cases(a, s, vmcg_floor=True)
    aeo = wl.all_engines(cases, np.asarray([mass]), {})
    f15 = fieldlength.ALL_ENGINES_FACTOR
    L.add("all engines: ground run to VLOF", _num(aeo.ground_run_m), "m")
    L.add("all engines: lift-off to screen", _num(aeo.airborne_m), "m")
    L.add("all engines: takeoff distance × 1.15", _num(f15 * aeo.takeoff_distance_m), "m", f"TODA {_num(s.toda_m)} m")
    L.add("all engines: takeoff run × 1.15", _num(f15 * aeo.takeoff_run_m), "m", f"TORA {_num(s.tora_m)} m")
    if n_eng > 1:
        L.add("engine failure at V1: ground run to VLOF", _num(ef.ground_run_m), "m")
        L.add("engine failure at V1: lift-off to screen", _num(ef.airborne_m), "m")
        L.add("one engine out: takeoff distance", _num(ef.takeoff_distance_m), "m", f"TODA {_num(s.toda_m)} m")
        L.add("one engine out: takeoff run", _num(ef.takeoff_run_m), "m", f"TORA {_num(s.tora_m)} m")
        L.add("accelerate-stop, engine failure at V1", _num(ef.accelerate_stop_engine_failure_m), "m",
              f"ASDA {_num(s.asda_m)} m")
    L.add("accelerate-stop, all engines" + ("" if n_eng > 1 else " (stop from VR)"),
          _num(ef.accelerate_stop_all_engines_m), "m", f"ASDA {_num(s.asda_m)} m")
    L.text("  accelerate-stop: to V1 (engine failure: all engines to VEF, then the recognition time), "
           "the stop actions one interval apart, 2 s at V1, braking at idle thrust, no reverse "
           "(14 CFR 25.109).")
    if n_eng > 1:
        bfl, bv1 = enginefailure.balanced_field_length_m(a, s, np.asarray([_f(a.mtow_kg)]))
        L.add("balanced field length at MTOW", _num(bfl), "m",
              f"V1 {_num(atmosphere.equivalent_airspeed_mps(bv1, rho) / kt, 1)} kt EAS")

    L.head("6. Takeoff climb (second segment: gear up, takeoff flaps, at V2)")
    grad = climb.takeoff_climb_gradient(a, mass_kg=mass, pressure_pa=p, temperature_k=t)
    need = climb.required_climb_gradient(n_eng)
    rule = ("one engine inoperative, 14 CFR 25.121(b)" if n_eng > 1
            else "all engines, 14 CFR 23.65(a) before amendment 23-64")
    L.add("gross gradient", _num(100 * grad, 2), "%", f"required {100 * need:.1f} % ({rule})")
    m_climb = climb.climb_limited_mass_kg(a, pressure_pa=p, temperature_k=t, mass_min_kg=_f(a.oew_kg),
                                          mass_max_kg=_f(a.mtow_kg))
    L.add("climb-limited mass (any runway)", _num(m_climb), "kg",
          "MTOW reached" if np.isfinite(_f(m_climb)) and _f(m_climb) >= _f(a.mtow_kg) * (1 - 1e-9) else "")

    L.head("7. The limit")
    L.add("MTOW (structural)", _num(a.mtow_kg), "kg")
    L.add("takeoff-weight limit", _num(limit), "kg")
    L.add("limited by", factor, "")
    # margins also for no_takeoff: they show which requirement fails at OEW
    margins, _ = wl.requirement_margins(wl.prepare_cases(a, s, vmcg_floor=True), np.asarray([mass]))
    L.text(f"  margins at {at} (distances: available/required − 1; climb: gradient points; "
           "negative = not met):")
    for r, m in zip(wl.REQUIREMENTS, margins[:, 0]):
        label = _MARGIN_LABELS.get(getattr(r.margin, "__name__", ""), r.factor)
        shown = ("not applicable" if np.isposinf(m) else "impossible" if np.isneginf(m) or m <= -1
                 else _num(100 * m, 2))
        L.add(f"  {label}", shown, "" if np.isposinf(m) else "%")
    _flight_path_section(L, tables, airfield_id, str(runway_id), int(month), aircraft_type_id, condition,
                         temperature_offset_k, at)
    L.text("")
    L.text(CAUTION)
    v1_kt = _f(atmosphere.equivalent_airspeed_mps(ef.v1_mps, rho) / kt)
    return ExplainedCase("\n".join(L.out), limit, factor, v1_kt)



def _flight_path_section(L, tables, airfield_id, runway_id, month, aircraft_type_id, condition,
                         temperature_offset_k, at):
    """Section 8 for a runway direction with obstacles: the one-engine-inoperative takeoff
    flight path segment by segment (gross and net) and each obstacle's clearance
    (:func:`pipeline.obstacle_path.flight_path_view`)."""
    from fieldlimits.physics import atmosphere, constants
    from fieldlimits.pipeline.obstacle_path import POINTS, SEGMENTS, flight_path_view

    v = flight_path_view(tables, airfield_id, runway_id, month, aircraft_type_id, condition, temperature_offset_k)
    if v is None:
        return
    ft = constants.FT_M
    L.head("8. Takeoff flight path over the obstacles (one engine inoperative; 14 CFR 25.111, 25.115, 25.121)")
    ob = v.obstacles
    if not ob["in_area"].any():
        L.text(f"  all {len(ob)} obstacle(s) of runway {runway_id} lie outside the departure area "
               "(schemas/departure.py): none is checked.")
        return
    L.text(f"  at {at}: {_num(v.mass_kg)} kg; "
           f"{'one engine inoperative' if v.engine_count > 1 else 'single engine: all engines'}, from the end "
           f"of the takeoff distance ({_num(v.takeoff_distance_m)} m), {_num(v.screen_height_m / ft)} ft above the "
           f"runway, {_num(abs(v.start_m))} m {'past' if v.start_m >= 0 else 'before'} the end of TODA")
    _speed(L, "V2", v.v2_mps, v.density_kg_m3)
    _speed(L, "final takeoff speed (1.25 VS clean)", v.v_final_mps, v.density_kg_m3)
    L.add("gear retraction time", _num(v.gear_retraction_s, 1), "s")
    L.add("acceleration height used", _num(v.acceleration_height_m / ft), "ft",
          f"{_num(v.acceleration_height_m)} m; type default {_num(v.default_acceleration_height_m / ft)} ft, "
          f"up to {_num(v.max_acceleration_height_m / ft)} ft where that helps")
    L.add("net gradient reduction", _num(100 * v.reduction, 1), "%",
          f"{v.engine_count} engine(s), 14 CFR 25.115(b); level acceleration less g × that")
    L.text("")
    L.text(f"  {'segment':<53} {'gross':>9} {'net':>9}")
    g1, g2, g4 = v.gradients
    for j, (name, g) in enumerate(zip(SEGMENTS, (g1, g2, None, g4)), 1):
        if g is None:
            net = v.accel_mps2 - constants.G0 * v.reduction
            L.text(f"  {j}. {name:<50} {v.accel_mps2:>9.3f} {net:>9.3f} m/s² (acceleration)")
        else:
            L.text(f"  {j}. {name:<50} {100 * g:>9.2f} {100 * (g - v.reduction):>9.2f} %   (gradient)")
    L.text("")
    L.text("  breakpoints: ground distance past the end of TODA / height above the runway end")
    L.text(f"  {'':<22} {'gross path':>24} {'net path':>24}")
    for j, name in enumerate(POINTS):
        cells = []
        for xs, hs in ((v.gross_x_m, v.gross_h_m), (v.net_x_m, v.net_h_m)):
            x, h = xs[j], hs[j]
            cells.append(f"{_num(x):>10} m {_num(h / ft):>6} ft" if np.isfinite(x)
                         else f"{'never':>10}   {_num(h / ft):>6} ft")
        L.text(f"  {name:<22} {cells[0]:>24} {cells[1]:>24}")
    L.text("")
    L.text("  obstacles (net path must clear each by 35 ft, 14 CFR 121.189(d)(2); departure area: "
           "schemas/departure.py):")
    L.text(f"  {'obstacle':<16} {'distance m':>10} {'offset m':>9} {'height m':>9} {'net path m':>11} "
           f"{'clearance m':>12}")
    for _, o in ob.iterrows():
        shown = o["in_area"] and np.isfinite(o["net_height_m"])
        note = {"cleared": "cleared", "not cleared": "NOT cleared",
                "beyond the end of the takeoff path": "beyond the end of the takeoff path: not checked",
                "outside the departure area": "outside the departure area: left out"}[o["status"]]
        if o["governing"]:
            note += " (governing)"
        L.text(f"  {str(o['obstacle_id']):<16} {_num(o['distance_from_toda_end_m']):>10} "
               f"{_num(o['lateral_offset_m']):>9} {_num(o['height_m'], 1):>9} "
               f"{_num(o['net_height_m'], 1) if shown else '—':>11} {_num(o['clearance_m'], 1) if shown else '—':>12}  "
               f"{note}")
    margin = v.least_margin
    L.add("least obstacle margin (best acceleration height)",
          "not applicable" if np.isposinf(margin) else _num(100 * margin, 2), "" if np.isposinf(margin) else "%",
          "(net height − obstacle − 35 ft) / (obstacle + 35 ft); negative = not met")
    if np.isfinite(v.obstacle_clearance_m):
        L.add("clearance of the governing obstacle at the limit", _num(v.obstacle_clearance_m, 2), "m")
