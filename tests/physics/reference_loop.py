"""A plain per-case takeoff-weight solver: scipy solve_ivp for the ground run, brentq for the mass.

Independent of physics.groundrun and physics.weightlimit (it integrates the equation of motion
in time, Raymer §17.8 Eq. 17.100 with slope and wind, and root-finds on the mass). Used as
the oracle in tests/physics/test_weightlimit.py and as the baseline in
tests/benchmarks/bench_physics.py.
"""

import math

import numpy as np
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from fieldlimits.physics import aerodynamics as aero
from fieldlimits.physics import airborne
from fieldlimits.physics import constants as c
from fieldlimits.physics import thrust

FACTOR = 1.15  # 14 CFR 25.113(a)(2), (b)(2)


def _scalar(obj, i):
    return {k: float(np.broadcast_to(v, np.shape(v) or (1,))[i if np.ndim(v) else 0]) for k, v in vars(obj).items()}


def _takeoff(a, s, mass, law, rtol):
    rho = s["pressure_pa"] / (c.R_AIR * s["temperature_k"])
    area, w = a["wing_area_m2"], s["headwind_mps"]
    k = 1.0 / (math.pi * a["oswald_efficiency"] * a["wing_span_m"] ** 2 / area)
    cd0 = a["cd0_clean"] + a["cd0_gear"] + a["cd0_takeoff_flaps"]
    x = (16 * a["wing_height_m"] / a["wing_span_m"]) ** 2
    cd = cd0 + x / (1 + x) * k * a["cl_ground_roll"] ** 2
    cl, mu = a["cl_ground_roll"], s["mu_roll"]
    vs = math.sqrt(2 * mass * c.G0 / (rho * area * a["cl_max_takeoff"]))
    vlof, v2 = a["vlof_over_vs"] * vs, a["v2_over_vs"] * vs
    ang = math.atan(s["slope"])
    weight = mass * c.G0

    def rhs(t, y):
        va = y[1] + w
        q = 0.5 * rho * area * va * abs(va)
        tt = float(law.thrust_n(np.array([va]))[0])
        return [y[1], (tt - q * cd - mu * (weight * math.cos(ang) - q * cl) - weight * math.sin(ang)) / mass]

    def lift_off(t, y):
        return y[1] + w - vlof

    lift_off.terminal = True
    if w >= vlof:
        ground = 0.0
    else:
        sol = solve_ivp(rhs, (0.0, 900.0), [0.0, 0.0], events=lift_off, rtol=rtol, atol=1e-8)
        if not sol.t_events[0].size:
            return math.nan, math.nan
        ground = sol.y_events[0][0][0]
    v_tr = 0.5 * (vlof + v2)
    q_s = 0.5 * rho * v_tr**2 * area
    drag = q_s * (cd0 + k * (weight / q_s) ** 2)
    sg = (float(law.thrust_n(np.array([v_tr]))[0]) - drag) / weight
    air = airborne.airborne_distance_m(v_transition_mps=v_tr, climb_sine=sg, screen_height_m=s["screen_height_m"])
    air *= (v_tr - w) / v_tr
    tod = ground + air
    tor = ground + (0.5 * air if s["toda_m"] > s["tora_m"] else air)
    return tod, tor


def loop_solve(aircraft, site, i, xtol_kg=0.5, rtol=1e-8):
    """Takeoff-weight limit of case i: (mass or NaN, factor name).

    rtol 1e-8 on the time integration keeps its own error far below the 1 kg of the
    solver (1e-6 already agrees to 0.9 kg, dominated by the solver bracket).
    """
    a, s = _scalar(aircraft, i), _scalar(site, i)
    law = thrust.thrust_law_for_aircraft(type("A", (), a)(), s["pressure_pa"], s["temperature_k"])
    law = thrust.ThrustLaw(*(np.atleast_1d(getattr(law, f)) for f in (
        "t0_n", "t1_n_per_mps", "t2_n_per_mps2", "propeller_power_w", "is_propeller")))

    def margin(mass):
        tod, tor = _takeoff(a, s, mass, law, rtol)
        if math.isnan(tod):
            return -1.0, "takeoff_distance"
        m1, m2 = 1 - FACTOR * tod / s["toda_m"], 1 - FACTOR * tor / s["tora_m"]
        return (m1, "takeoff_distance") if m1 <= m2 else (m2, "takeoff_run")

    if margin(a["mtow_kg"])[0] >= 0:
        return a["mtow_kg"], "structural"
    if margin(a["oew_kg"])[0] < 0:
        return math.nan, "no_takeoff"
    m = brentq(lambda x: margin(x)[0], a["oew_kg"], a["mtow_kg"], xtol=xtol_kg)
    return m, margin(m + xtol_kg)[1]


_ = aero  # the loop repeats the drag polar by hand on purpose (independent check)
