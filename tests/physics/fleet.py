"""Invented aircraft types and sites for physics tests (no published values exist for these)."""

import numpy as np

from fieldlimits.physics import constants as c
from fieldlimits.physics.weightlimit import Aircraft, Site

# Plausible invented parameters of three kinds of types: a twin turbofan (~70 t), a twin
# regional jet on the quadratic model (~40 t) and a twin turboprop (~22 t).
_TYPES = {
    "turbofan": dict(
        mtow_kg=72000.0, oew_kg=41000.0, max_payload_kg=18000.0, max_fuel_kg=19000.0, max_landing_mass_kg=64000.0,
        wing_area_m2=122.0, wing_span_m=34.0, wing_height_m=2.0, cd0_clean=0.020, cd0_gear=0.015,
        cd0_takeoff_flaps=0.012, oswald_efficiency=0.80, cl_ground_roll=0.30, cl_max_takeoff=2.0,
        vr_over_vs=1.05, vlof_over_vs=1.10, v2_over_vs=1.20, engine_count=2.0, thrust_model=1.0,
        static_thrust_per_engine_n=105e3, thrust_linear_per_engine_n_per_mps=0.0,
        thrust_quadratic_per_engine_n_per_mps2=0.0, bypass_ratio=5.5, flat_rate_oat_k=303.15,
        shaft_power_per_engine_w=0.0, propeller_efficiency=0.0),
    "quadratic": dict(
        mtow_kg=40000.0, oew_kg=24000.0, max_payload_kg=10000.0, max_fuel_kg=9000.0, max_landing_mass_kg=36000.0,
        wing_area_m2=75.0, wing_span_m=27.0, wing_height_m=1.6, cd0_clean=0.022, cd0_gear=0.016,
        cd0_takeoff_flaps=0.012, oswald_efficiency=0.78, cl_ground_roll=0.30, cl_max_takeoff=2.2,
        vr_over_vs=1.05, vlof_over_vs=1.10, v2_over_vs=1.20, engine_count=2.0, thrust_model=0.0,
        static_thrust_per_engine_n=62e3, thrust_linear_per_engine_n_per_mps=-120.0,
        thrust_quadratic_per_engine_n_per_mps2=0.25, bypass_ratio=0.0, flat_rate_oat_k=303.15,
        shaft_power_per_engine_w=0.0, propeller_efficiency=0.0),
    "propeller": dict(
        mtow_kg=22000.0, oew_kg=13000.0, max_payload_kg=7000.0, max_fuel_kg=5000.0, max_landing_mass_kg=21500.0,
        wing_area_m2=61.0, wing_span_m=27.0, wing_height_m=3.0, cd0_clean=0.026, cd0_gear=0.018,
        cd0_takeoff_flaps=0.010, oswald_efficiency=0.82, cl_ground_roll=0.40, cl_max_takeoff=2.0,
        vr_over_vs=1.05, vlof_over_vs=1.10, v2_over_vs=1.20, engine_count=2.0, thrust_model=2.0,
        static_thrust_per_engine_n=36e3, thrust_linear_per_engine_n_per_mps=0.0,
        thrust_quadratic_per_engine_n_per_mps2=0.0, bypass_ratio=0.0, flat_rate_oat_k=305.15,
        shaft_power_per_engine_w=1.6e6, propeller_efficiency=0.72),
}
_COMMON = dict(engine_out_drag_cd=0.004, vmcg_mps=50.0, braking_cl=0.05, braking_cd_increment=0.02,
               idle_thrust_fraction=0.06, tailwind_limit_mps=5.0, crosswind_limit_mps=15.0, cruise_tas_mps=200.0,
               cruise_lift_to_drag=16.0, cruise_tsfc_kg_per_n_s=1.6e-5, cruise_psfc_kg_per_w_s=8e-8,
               taxi_fuel_kg=150.0)
KINDS = tuple(_TYPES)


def aircraft(kinds):
    """Aircraft arrays for a sequence of kind names."""
    kinds = list(kinds)
    cols = {k: np.array([_TYPES[t][k] for t in kinds]) for k in _TYPES["turbofan"]}
    cols.update({k: np.full(len(kinds), v) for k, v in _COMMON.items()})
    return Aircraft(**cols)


def site(n=1, **over):
    """Site arrays: a 2 400 m paved dry runway at sea level, ISA, calm, unless overridden."""
    base = dict(tora_m=2400.0, toda_m=2600.0, asda_m=2400.0, slope=0.0, mu_roll=0.03, mu_brake=0.4,
                pressure_pa=c.P0_PA, temperature_k=c.T0_K, headwind_mps=0.0,
                screen_height_m=c.SCREEN_HEIGHT_35FT_M)
    base.update(over)
    return Site(**{k: np.broadcast_to(np.asarray(v, dtype=float), (n,)).copy() for k, v in base.items()})


def random_cases(n, seed=0):
    """n cases mixing the three kinds over varied runways, elevations, days and winds."""
    rng = np.random.default_rng(seed)
    kinds = rng.choice(KINDS, size=n)
    elev = rng.uniform(0.0, 2500.0, n)
    p = c.P0_PA * (1.0 - c.LAPSE_TROPOSPHERE * elev / c.T0_K) ** c.PRESSURE_EXPONENT * rng.uniform(0.98, 1.02, n)
    tora = rng.uniform(800.0, 2600.0, n)
    s = site(n, tora_m=tora, toda_m=tora + rng.uniform(0.0, 300.0, n), asda_m=tora,
             slope=rng.uniform(-0.015, 0.015, n), mu_roll=rng.choice([0.03, 0.05, 0.04], n),
             pressure_pa=p, temperature_k=rng.uniform(250.0, 320.0, n), headwind_mps=rng.uniform(-6.0, 8.0, n))
    return aircraft(kinds), s
