"""One landing case explained step by step (``fieldlimits explain --landing``).

:func:`explain_landing` builds the case as a run does (:func:`pipeline.landing.landing_cases`
on the design day: the month's mean daily maximum, calm wind), solves its landing-mass limit
with :func:`physics.landing.landing_mass_limit` and then asks :mod:`physics.landing` for
every intermediate figure at the limit mass. No formulas here: this module only formats.
"""

from __future__ import annotations

import os
from dataclasses import dataclass

import numpy as np
import pandas as pd

from fieldlimits.pipeline.errors import BadInput
from fieldlimits.schemas.caution import CAUTION


@dataclass(frozen=True)
class ExplainedLanding:
    """The text of a landing explanation and its headline figures."""

    text: str
    landing_limit_kg: float
    limiting_factor: str
    vref_kt: float


def _f(x) -> float:
    return float(np.ravel(np.asarray(x, dtype=float))[0])


def _num(x, digits=0) -> str:
    x = _f(x)
    return "—" if not np.isfinite(x) else f"{x:,.{digits}f}"


def explain_landing(input_dir=None, airfield_id="", runway_id="", month=1, aircraft_type_id="",
                    condition="dry", temperature_offset_k=0.0, params=None) -> ExplainedLanding:
    """Solve one landing case and explain every step.

    Parameters
    ----------
    input_dir : str or Path, optional
        Input folder (default: the bundled demo network).
    airfield_id, runway_id : str
        Destination airfield and the runway direction of the landing.
    month : int
        1–12.
    aircraft_type_id : str
        Aircraft type.
    condition : str
        ``dry`` or ``wet``.
    temperature_offset_k : float
        Climate scenario offset added to the month's temperature. [K]
    params : mapping, optional
        The landing rule (``landing_jet_share``, ``landing_turboprop_share``,
        ``landing_wet_increase``); default the run defaults.

    Returns
    -------
    ExplainedLanding
        The text and the headline figures.
    """
    from fieldlimits.physics import atmosphere, constants, landing as ph
    from fieldlimits.pipeline import landing as pl
    from fieldlimits.pipeline.explain import build_case, load_tables

    if input_dir is None:
        from fieldlimits.demo_network import demo_path

        input_dir = demo_path()
    if not os.path.isdir(input_dir):
        raise BadInput(f"input folder {input_dir} does not exist")
    tables = load_tables(input_dir)
    # the same checks (and messages) as the takeoff case: airfield, runway, month, type
    build_case(tables, airfield_id, str(runway_id), int(month), aircraft_type_id, condition, temperature_offset_k)
    rule = pl.LandingRule.from_params(params)
    pairs = pd.DataFrame({"airfield_id": [airfield_id], "aircraft_type_id": [aircraft_type_id]})
    cases = pl.landing_cases(tables, pairs, temperature_offset_k, (condition,))
    cases = cases[(cases["runway_id"].astype(str) == str(runway_id)) & (cases["month"] == int(month))]
    cases = cases.reset_index(drop=True)
    aircraft_table = tables["aircraft_types"].reset_index(drop=True)
    res = pl.solve(cases, aircraft_table, rule)
    a, cfg = pl.aircraft_inputs(aircraft_table, cases["aircraft_index"].to_numpy())
    row = aircraft_table.iloc[int(cases["aircraft_index"].iloc[0])]
    case = cases.iloc[0]
    checked = np.isfinite(case["lda_m"])
    factor = str(ph.factor_name(int(res.limiting_factor[0])))
    limit = _f(res.landing_limit_kg)
    mlm = _f(a.max_landing_mass_kg)
    mass = limit if np.isfinite(limit) else (mlm if not checked else _f(a.oew_kg))
    at = ("the limit mass" if np.isfinite(limit) else
          "the maximum landing mass (no landing check)" if not checked else
          "OEW (no mass meets every requirement)")
    p, t = float(case["pressure_pa"]), float(case["temperature_k"])
    rho = _f(atmosphere.density_kg_m3(p, t))
    kt = constants.KT_MPS
    share = _f(ph.dispatch_share(a.thrust_model, rule.jet_share, rule.turboprop_share))
    wet = condition == "wet"
    site = ph.LandingSite(lda_m=case["lda_m"], slope=case["slope"], mu_brake=case["mu_brake"],
                          mu_brake_dry=case["mu_brake_dry"], wet=float(wet), pressure_pa=p, temperature_k=t,
                          headwind_mps=0.0)
    m = np.asarray([mass])
    own = ph.landing_distance(a, cfg, site, m)
    dry = ph.landing_distance(a, cfg, site, m, dry=True)

    out = []

    def head(title):
        out.extend(["", title, "-" * len(title)])

    def add(label, value, unit="", note=""):
        out.append((f"  {label:<46} {value:>12} {unit:<6}" + ("  " + note if note else "")).rstrip())

    def speed(label, tas, note=""):
        eas = _f(atmosphere.equivalent_airspeed_mps(tas, rho))
        add(label, _num(eas / kt, 1), "kt", f"EAS {_num(eas, 2)} m/s, TAS {_num(tas, 2)} m/s" + (f"; {note}" if note else ""))

    out.append(f"fieldlimits explain --landing — {airfield_id} runway {runway_id}, month {int(month)}, "
               f"{aircraft_type_id} ({row.get('name', '')}), {condition} runway, design day")
    out.append(CAUTION)

    head("1. Atmosphere at the destination (design day: mean daily maximum, calm)")
    add("outside air temperature", _num(t - constants.ZERO_CELSIUS_K, 1), "°C",
        f"{_num(t, 2)} K" + (f" incl. scenario offset {temperature_offset_k:+.1f} K" if temperature_offset_k else ""))
    add("station pressure", _num(p / constants.HPA_PA, 2), "hPa", f"{_num(p, 0)} Pa")
    add("air density", _num(rho, 4), "kg/m³", f"sigma = {_num(rho / constants.RHO0_KG_M3, 4)}")
    add("pressure altitude", _num(case["pressure_altitude_m"]), "m")
    add("density altitude", _num(case["density_altitude_m"]), "m")

    head("2. Runway direction of the landing")
    if checked:
        add("landing distance available (LDA)", _num(case["lda_m"]), "m")
    else:
        out.append("  no landing distance available (lda_m) is given for this direction: the run makes no")
        out.append("  landing check here (not_checked) and never takes it as long; the figures below are for")
        out.append("  information at the maximum landing mass.")
    add("effective slope (+ uphill)", _num(100 * float(case["slope"]), 2), "%")
    add("braking friction", f"{float(case['mu_brake']):.3f}", "–",
        f"{condition} runway" + (f"; dry {float(case['mu_brake_dry']):.3f} for the +15 % rule" if wet else ""))
    add("headwind component (factored)", "0.0", "m/s", "design day: calm")

    head(f"3. Speeds at {at}: {_num(mass)} kg (14 CFR 25.125)")
    speed("V_SR0 (1-g stall, landing flaps)", own.vsr0_mps, f"C_Lmax,landing {float(row['cl_max_landing']):g}")
    speed("VREF = 1.23 V_SR0 (at 50 ft)", own.vref_mps)
    speed("touchdown = 1.15 V_SR0", own.touchdown_mps)

    head("4. Landing distance from 50 ft (no reverse thrust)")
    radius = ph.flare_radius_m(own.vref_mps)
    add("approach angle", f"{ph.APPROACH_ANGLE_DEG:g}", "°", "the usual glide path")
    add("flare radius, n = 1.2", _num(radius), "m", "R = VREF² / (0.2 g)")
    add("flare height", _num(ph.flare_height_m(radius), 2), "m", "R (1 − cos θ); screen 50 ft = 15.24 m")
    add("airborne: 50 ft to touchdown", _num(own.airborne_m), "m")
    add("free roll before braking", _num(own.free_roll_m), "m",
        f"{_num(cfg.landing_free_roll_s, 1)} s at the touchdown speed")
    terms = ph.braking_terms(a, cfg, density_kg_m3=rho, pressure_pa=p, temperature_k=t,
                             mu_brake=float(case["mu_brake"]), slope=float(case["slope"]))
    decel = ph.braking_deceleration_mps2(terms, mass_kg=m, airspeed_mps=own.touchdown_mps)
    add("deceleration at touchdown, braking", _num(decel, 2), "m/s²",
        f"{_num(decel / constants.G0, 3)} g; lift dumpers C_L {float(row['landing_braking_cl']):g}, idle thrust")
    add("braking roll to rest", _num(own.braking_m), "m")
    add("actual landing distance", _num(own.distance_m), "m", f"{condition} friction")
    if wet:
        add("actual landing distance, dry friction", _num(dry.distance_m), "m")

    head("5. Required landing distance (dispatch rule, 14 CFR 121.195)")
    model = "propeller" if _f(a.thrust_model) == 2 else "jet"
    add("share of the LDA the dry distance may use", f"{share:g}", "–",
        f"{model}: 0.6 (121.195(b))" + ("; 0.7 under the turboprop rule (121.195(c))" if model == "propeller" else ""))
    req_dry = _f(dry.distance_m) / share
    add("dry: actual / share", _num(req_dry), "m")
    if wet:
        add(f"wet: (1 + {rule.wet_increase:g}) × dry required", _num((1 + rule.wet_increase) * req_dry), "m",
            "121.195(d)")
        add("wet: actual with wet friction / share", _num(_f(own.distance_m) / share), "m", "the greater counts")
    req = ph.required_landing_distance_m(dry.distance_m, share, wet=wet, wet_distance_m=own.distance_m,
                                         wet_increase=rule.wet_increase)
    add("required landing distance", _num(req), "m", f"LDA {_num(case['lda_m'])} m" if checked else "not checked")

    head("6. Approach and landing climb")
    app = ph.approach_climb_setup(a, pressure_pa=p, temperature_k=t)
    land = ph.landing_climb_setup(a, cfg, pressure_pa=p, temperature_k=t)
    if np.isfinite(_f(app.required_gradient)):
        add("approach climb, one engine out (gross)", _num(100 * _f(ph.climb_gradient_at(app, m)), 2), "%",
            f"required {100 * _f(app.required_gradient):.1f} % (14 CFR 25.121(d)); takeoff flaps, gear up")
    else:
        add("approach climb, one engine out", "n/a", "", "single engine: no engine-out rule")
    add("landing climb, all engines (gross)", _num(100 * _f(ph.climb_gradient_at(land, m)), 2), "%",
        "required 3.2 % (14 CFR 25.119); landing flaps, gear down, at VREF")

    head("7. The landing-mass limit")
    add("maximum landing mass (structural)", _num(mlm), "kg")
    add("landing-distance limited mass", _num(res.distance_limited_kg), "kg")
    add("approach-climb limited mass", _num(res.approach_climb_limited_kg), "kg")
    add("landing-climb limited mass", _num(res.landing_climb_limited_kg), "kg")
    add("landing-mass limit", _num(limit), "kg")
    add("limited by", factor)
    out.append("")
    out.append(CAUTION)
    vref_kt = _f(atmosphere.equivalent_airspeed_mps(own.vref_mps, rho)) / kt
    return ExplainedLanding("\n".join(out), limit, factor, vref_kt)
