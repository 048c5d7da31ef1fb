"""Invented aircraft for the engine-failure and climb tests (no real type's figures)."""

from __future__ import annotations

import dataclasses

import numpy as np

from fieldlimits.physics import constants as c


def _aircraft_class():
    try:
        from fieldlimits.physics.weightlimit import Aircraft
        return Aircraft
    except ImportError:  # the solver module is written in parallel; fields per DEVELOPERS.md
        return None


TWIN_JET = dict(
    mtow_kg=60_000.0, oew_kg=34_000.0, max_payload_kg=16_000.0, max_fuel_kg=16_000.0,
    max_landing_mass_kg=54_000.0, wing_area_m2=105.0, wing_span_m=32.0, wing_height_m=2.0,
    cd0_clean=0.020, cd0_gear=0.017, cd0_takeoff_flaps=0.013, oswald_efficiency=0.80,
    cl_ground_roll=0.30, cl_max_takeoff=2.3, vr_over_vs=1.05, vlof_over_vs=1.10,
    v2_over_vs=1.20, engine_count=2.0, thrust_model=0.0,
    static_thrust_per_engine_n=100_000.0, thrust_linear_per_engine_n_per_mps=-150.0,
    thrust_quadratic_per_engine_n_per_mps2=0.2, bypass_ratio=0.0, flat_rate_oat_k=303.15,
    shaft_power_per_engine_w=0.0, propeller_efficiency=0.0, engine_out_drag_cd=0.006,
    vmcg_mps=55.0, braking_cl=0.05, braking_cd_increment=0.04, idle_thrust_fraction=0.06,
    tailwind_limit_mps=5.0, crosswind_limit_mps=15.0, cruise_tas_mps=230.0,
    cruise_lift_to_drag=16.0, cruise_tsfc_kg_per_n_s=1.7e-5, cruise_psfc_kg_per_w_s=0.0,
    taxi_fuel_kg=150.0,
)


def make_aircraft(**changes):
    """An Aircraft (or a stand-in with the same fields) of the invented twin jet, changed."""
    values = {k: np.asarray(v, dtype=float) for k, v in {**TWIN_JET, **changes}.items()}
    cls = _aircraft_class()
    if cls is None:
        return type("AircraftStandIn", (), values)()
    names = {f.name for f in dataclasses.fields(cls)}
    return cls(**{k: v for k, v in values.items() if k in names})


def quad_of_same_thrust(**changes):
    """The twin with four engines of half the thrust each (same total thrust)."""
    t = TWIN_JET
    return make_aircraft(
        engine_count=4.0, static_thrust_per_engine_n=t["static_thrust_per_engine_n"] / 2,
        thrust_linear_per_engine_n_per_mps=t["thrust_linear_per_engine_n_per_mps"] / 2,
        thrust_quadratic_per_engine_n_per_mps2=t["thrust_quadratic_per_engine_n_per_mps2"] / 2,
        engine_out_drag_cd=t["engine_out_drag_cd"] / 2, **changes)


SEA_LEVEL_ISA = dict(pressure_pa=c.P0_PA, temperature_k=c.T0_K)
