"""Class defaults: the aircraft-type coefficients a planner rarely has, by class of type.

A planner knows a type's masses, wing area and span, engines and thrust, wind limits, cruise
figures and seats. The aerodynamic and configuration coefficients of ``aircraft_types``
(:data:`DEFAULTED_COLUMNS`) may be left blank; :func:`fill_class_defaults` then fills them
with the typical value of the type's class below, each with its published source (or "from
memory" where that is what it is) and a spread (one standard deviation, used as the prior
of ``fieldlimits calibrate``). A value given in the table always wins.

Classes (column ``type_class``; blank → :func:`resolve_class`):

==================== ==============================================================
``transport_jet``    jets (``turbofan``, ``quadratic``) not in the business-jet rule
``business_jet``     jets with 1 … 19 seats
``regional_turboprop`` propeller types above 5 700 kg MTOW
``light_twin``       propeller types up to 5 700 kg with two or more engines
``light_single``     propeller types up to 5 700 kg with one engine
==================== ==============================================================

The 19-seat line is the usual split between business and commuter-size jets and airline
jets (common practice); 5 700 kg (12 500 lb) is the old normal-category limit of CS-23 and
14 CFR Part 23 (from memory). A freighter jet (0 seats) is a ``transport_jet``.

Derived defaults (``kind``):

* ``value``: the number itself.
* ``per_span``: the number × ``wing_span_m`` (wing height above the runway).
* ``stall_ratio``: the number × the stall speed at MTOW, sea level ISA, with the type's
  ``cl_max_takeoff`` (given or default), in knots (V_MCG). 0.9 is what invented but
  plausible types give and sits below 14 CFR 25.149's bound on VMC (≤ 1.13 V_SR), since
  V_MCG is usually a little below VMC (from memory). Single-engine types: 0.

This module is pure data and the fill function: no I/O.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

CLASS_NAMES: tuple[str, ...] = ("transport_jet", "business_jet", "regional_turboprop", "light_twin",
                                "light_single")
"""Allowed values of ``aircraft_types.type_class``."""

BUSINESS_JET_MAX_SEATS = 19
"""Jets with 1 … this many seats are ``business_jet`` when ``type_class`` is blank."""

LIGHT_MTOW_KG = 5700.0
"""Propeller types up to this MTOW are light (CS-23 / 14 CFR 23 normal category, from memory)."""

JETS = ("turbofan", "quadratic")


@dataclass(frozen=True)
class Default:
    """One class default (user units of the column).

    Attributes
    ----------
    value : float
        The number (see ``kind``).
    spread : float
        One standard deviation: absolute, or a share of the value for ``per_span`` and
        ``stall_ratio``.
    source : str
        Where the number comes from.
    kind : str
        ``value``, ``per_span`` or ``stall_ratio`` (module docstring).
    """

    value: float
    spread: float
    source: str
    kind: str = "value"


# sources, written once
_ROSKAM_31 = "Roskam, Airplane Design Part I, Table 3.1 (CL,max takeoff {})"
_ROSKAM_36_GEAR = "Roskam, Airplane Design Part I, Table 3.6: gear ΔCD0 0.015 … 0.025"
_ROSKAM_36_FLAPS = "Roskam, Airplane Design Part I, Table 3.6: takeoff flaps ΔCD0 0.010 … 0.020"
_ROSKAM_36_E = "Roskam, Airplane Design Part I, Table 3.6: e 0.75 … 0.80 with takeoff flaps"
_RAYMER_CFE = ("Raymer, Aircraft Design, Table 12.3: equivalent skin friction {} × wetted/reference "
               "area ≈ {} (Raymer Fig. 7.3); from memory")
_RAYMER_SPEEDS = "Raymer, Aircraft Design, §17.8: lift-off at about 1.1 V_S"
_V2 = "Raymer, Aircraft Design, §17.8 (climb at 1.2 V_S); 14 CFR 25.107(b) before the 1-g stall rules"
_VR = "14 CFR 25.107(e) (VR not below V1 and 1.05 VMC); about 1.05 V_S, from memory"
_VMCG = "0.9 × stall speed at MTOW (see the module notes); from memory"
_DUMPERS = "from memory: lift dumpers and ground spoilers deployed"
_IDLE = "from memory: ground idle about 5 … 8 % of takeoff thrust"


def _common(cl_ground, cl_ground_source, clmax, clmax_range, speeds_v2=1.20):
    return {
        "cd0_gear": Default(0.020, 0.005, _ROSKAM_36_GEAR),
        "cd0_takeoff_flaps": Default(0.015, 0.005, _ROSKAM_36_FLAPS),
        "oswald_efficiency": Default(0.775, 0.04, _ROSKAM_36_E),
        "cl_ground_roll": Default(cl_ground, 0.15, cl_ground_source),
        "cl_max_takeoff": Default(clmax, 0.3 if clmax_range[1] - clmax_range[0] > 0.45 else 0.2,
                                  _ROSKAM_31.format(f"{clmax_range[0]:g} … {clmax_range[1]:g}")),
        "vr_over_vs": Default(1.05, 0.03, _VR),
        "vlof_over_vs": Default(1.10, 0.03, _RAYMER_SPEEDS),
        "v2_over_vs": Default(speeds_v2, 0.04, _V2),
    }


_ROSKAM_31_L = "Roskam, Airplane Design Part I, Table 3.1 (CL,max landing {}; range from memory)"
_ROSKAM_36_LAND = "Roskam, Airplane Design Part I, Table 3.6: landing flaps ΔCD0 0.055 … 0.075 (from memory)"
_FREE_ROLL = "Raymer, Aircraft Design, §17.9: free roll about 1 s small, 3 s large aircraft (from memory)"


def _landing(clmax, clmax_range, braking_cl, braking_source, free_roll_s):
    """Landing configuration (physics.landing): C_Lmax with landing flaps, flap drag, braking
    lift, free roll."""
    return {
        "cl_max_landing": Default(clmax, 0.3, _ROSKAM_31_L.format(f"{clmax_range[0]:g} … {clmax_range[1]:g}")),
        "cd0_landing_flaps": Default(0.065, 0.01, _ROSKAM_36_LAND),
        "landing_braking_cl": Default(braking_cl, 0.1, braking_source),
        "landing_free_roll_s": Default(free_roll_s, 1.0, _FREE_ROLL),
    }


CLASS_DEFAULTS: dict[str, dict[str, Default]] = {
    "transport_jet": {
        "wing_height_m": Default(0.07, 0.25, "from memory: low wing about 7 % of the span above the runway",
                                 "per_span"),
        "cd0_clean": Default(0.018, 0.003, _RAYMER_CFE.format("0.0030 (civil transport)", "6")),
        **_common(0.30, "from memory: ground attitude with takeoff flaps, jets 0.2 … 0.4", 1.9, (1.6, 2.2)),
        "engine_out_drag_cd": Default(0.005, 0.003, "from memory: windmilling fan and rudder trim"),
        "vmcg_kt": Default(0.9, 0.1, _VMCG, "stall_ratio"),
        "braking_cl": Default(0.05, 0.1, _DUMPERS),
        "braking_cd_increment": Default(0.04, 0.015, _DUMPERS),
        "idle_thrust_fraction": Default(0.06, 0.02, _IDLE),
        # slats and slotted flaps of airline jets: the upper half of the range (from memory)
        **_landing(2.5, (1.8, 2.8), 0.10, "from memory: lift dumpers deployed, landing flaps", 3.0),
    },
    "business_jet": {
        "wing_height_m": Default(0.055, 0.25, "from memory: low wing about 5.5 % of the span above the runway",
                                 "per_span"),
        "cd0_clean": Default(0.020, 0.004, _RAYMER_CFE.format("0.0030 (civil transport)", "6.5")),
        **_common(0.25, "from memory: ground attitude with takeoff flaps, jets 0.2 … 0.4", 1.9, (1.6, 2.2)),
        "engine_out_drag_cd": Default(0.006, 0.003, "from memory: windmilling fan and rudder trim"),
        "vmcg_kt": Default(0.9, 0.1, _VMCG, "stall_ratio"),
        "braking_cl": Default(0.10, 0.1, "from memory: ground spoilers, smaller than an airliner's"),
        "braking_cd_increment": Default(0.03, 0.015, "from memory: ground spoilers"),
        "idle_thrust_fraction": Default(0.06, 0.02, _IDLE),
        **_landing(2.1, (1.6, 2.6), 0.15, "from memory: ground spoilers deployed, landing flaps", 2.0),
    },
    "regional_turboprop": {
        "wing_height_m": Default(0.10, 0.4, "from memory: low wings about 7 %, high wings about 14 % of the span",
                                 "per_span"),
        "cd0_clean": Default(0.025, 0.004, _RAYMER_CFE.format("0.0045 (light twin)", "5.5")),
        **_common(0.50, "from memory: propeller slipstream over the flaps, 0.3 … 0.7", 1.9, (1.7, 2.1)),
        "engine_out_drag_cd": Default(0.009, 0.004, "from memory: feathered propeller, nacelle and rudder trim"),
        "vmcg_kt": Default(0.9, 0.1, _VMCG, "stall_ratio"),
        "braking_cl": Default(0.20, 0.1, "from memory: no lift dumpers, flaps still down"),
        "braking_cd_increment": Default(0.02, 0.015, "from memory: propellers at ground idle (disc drag)"),
        "idle_thrust_fraction": Default(0.05, 0.02, "from memory: flight idle to ground idle"),
        **_landing(2.6, (1.9, 3.3), 0.40, "from memory: no lift dumpers, landing flaps down", 2.0),
    },
    "light_twin": {
        "wing_height_m": Default(0.08, 0.3, "from memory: low wing about 8 % of the span above the runway",
                                 "per_span"),
        "cd0_clean": Default(0.025, 0.005, _RAYMER_CFE.format("0.0045 (light twin)", "5.5")),
        **_common(0.45, "from memory: propeller slipstream over the flaps, 0.3 … 0.6", 1.7, (1.4, 2.0)),
        "engine_out_drag_cd": Default(0.010, 0.005, "from memory: windmilling propeller until feathered, trim"),
        "vmcg_kt": Default(0.9, 0.1, _VMCG, "stall_ratio"),
        "braking_cl": Default(0.30, 0.1, "from memory: no lift dumpers: the ground-roll lift"),
        "braking_cd_increment": Default(0.0, 0.01, "from memory: no spoilers"),
        "idle_thrust_fraction": Default(0.05, 0.02, "from memory: idle power"),
        **_landing(2.0, (1.6, 2.5), 0.45, "from memory: no lift dumpers, landing flaps at ground attitude", 1.0),
    },
    "light_single": {
        "wing_height_m": Default(0.09, 0.4, "from memory: low wing about 9 % of the span above the runway",
                                 "per_span"),
        "cd0_clean": Default(0.028, 0.005, _RAYMER_CFE.format("0.0055 (light single)", "5")),
        **_common(0.45, "from memory: ground attitude with flaps, 0.3 … 0.6", 1.6, (1.3, 1.9)),
        "engine_out_drag_cd": Default(0.0, 0.0, "single engine: no engine-out case"),
        "vmcg_kt": Default(0.0, 0.0, "single engine: no V_MCG"),
        "braking_cl": Default(0.30, 0.1, "from memory: no lift dumpers: the ground-roll lift"),
        "braking_cd_increment": Default(0.0, 0.01, "from memory: no spoilers"),
        "idle_thrust_fraction": Default(0.05, 0.02, "from memory: idle power"),
        **_landing(1.9, (1.6, 2.3), 0.45, "from memory: no lift dumpers, landing flaps at ground attitude", 1.0),
    },
}
"""Class name → column → default (user units of ``aircraft_types``)."""

DEFAULTED_COLUMNS: tuple[str, ...] = tuple(CLASS_DEFAULTS["transport_jet"])
"""Columns of ``aircraft_types`` that a class default fills when blank."""

# stall speed at MTOW needs cl_max_takeoff first; vmcg is filled after it
_ORDER = tuple(c for c in DEFAULTED_COLUMNS if c != "vmcg_kt") + ("vmcg_kt",)


def resolve_class(thrust_model, engine_count, mtow_kg, max_passengers) -> np.ndarray:
    """Class of each type from its planner figures (the rule when ``type_class`` is blank).

    Parameters
    ----------
    thrust_model : array_like of str
        ``turbofan``, ``quadratic`` or ``propeller``.
    engine_count, mtow_kg, max_passengers : array_like
        Per type (NaN allowed: gives no class where it matters).

    Returns
    -------
    numpy.ndarray of object
        Class names; None where the figures do not decide it (an unknown thrust model).
    """
    model = np.asarray(thrust_model, dtype=object)
    engines = np.asarray(engine_count, dtype=float)
    mtow = np.asarray(mtow_kg, dtype=float)
    seats = np.asarray(max_passengers, dtype=float)
    out = np.full(model.shape, None, dtype=object)
    jet = np.isin(model, JETS)
    prop = model == "propeller"
    with np.errstate(invalid="ignore"):
        out[jet] = "transport_jet"
        out[jet & (seats >= 1) & (seats <= BUSINESS_JET_MAX_SEATS)] = "business_jet"
        out[prop & (mtow > LIGHT_MTOW_KG)] = "regional_turboprop"
        out[prop & (mtow <= LIGHT_MTOW_KG) & (engines >= 2)] = "light_twin"
        out[prop & (mtow <= LIGHT_MTOW_KG) & (engines == 1)] = "light_single"
    return out


def _stall_speed_kt(mtow_kg, wing_area_m2, cl_max):
    from fieldlimits.physics import aerodynamics, constants

    vs = aerodynamics.stall_speed_mps(mtow_kg, constants.RHO0_KG_M3, wing_area_m2, cl_max)
    return np.asarray(vs, dtype=float) / constants.KT_MPS


def default_value(name: str, column: str, row) -> float:
    """The class default of one column for one type (``row``: its other columns, user units).

    A derived default (``per_span``, ``stall_ratio``) is held within the column's allowed
    range of :mod:`schemas.tables`.
    """
    d = CLASS_DEFAULTS[name][column]
    if d.kind == "value" or d.value == 0.0:
        return float(d.value)
    if d.kind == "per_span":
        value = d.value * float(row["wing_span_m"])
    else:
        value = d.value * float(_stall_speed_kt(float(row["mtow_kg"]), float(row["wing_area_m2"]),
                                                float(row["cl_max_takeoff"])))
    from fieldlimits.schemas.tables import AIRCRAFT_TYPES

    col = AIRCRAFT_TYPES.column(column)
    return float(np.clip(value, col.min, col.max))


def prior_sd(name: str, column: str, value: float) -> float:
    """Spread (one standard deviation, user units) of a column's value for a class."""
    d = CLASS_DEFAULTS[name][column]
    if d.kind in ("per_span", "stall_ratio"):
        return abs(float(value)) * d.spread
    return d.spread


def fill_class_defaults(frame: pd.DataFrame) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Fill blank coefficients of ``aircraft_types`` from the class defaults.

    Parameters
    ----------
    frame : DataFrame
        ``aircraft_types`` in user units (blank cells NaN / None); not changed.

    Returns
    -------
    filled : DataFrame
        A copy with ``type_class`` resolved (blank → :func:`resolve_class`) and every blank
        cell of :data:`DEFAULTED_COLUMNS` filled; rows whose class cannot be resolved (an
        unknown thrust model) keep their blanks.
    defaulted : DataFrame of bool
        Same index, one column per :data:`DEFAULTED_COLUMNS`: True where the class default
        was used.
    """
    out = frame.copy()
    for col in DEFAULTED_COLUMNS:
        out[col] = out[col].astype(float) if col in out.columns else np.nan
    given = out["type_class"] if "type_class" in out.columns else pd.Series([None] * len(out), index=out.index)
    given = given.where(given.isin(CLASS_NAMES), None)
    rule = pd.Series(resolve_class(out["thrust_model"], out["engine_count"], out["mtow_kg"],
                                   out["max_passengers"]), index=out.index, dtype=object)
    classes = given.where(given.notna(), rule).astype(object)
    out["type_class"] = classes
    mask = pd.DataFrame({col: out[col].isna().to_numpy() & classes.notna().to_numpy()
                         for col in DEFAULTED_COLUMNS}, index=out.index)
    for i, name in classes.items():
        if name is None:
            continue
        for col in _ORDER:
            if mask.at[i, col]:
                out.at[i, col] = default_value(name, col, out.loc[i])
    return out, mask


def defaulted_columns(filled: pd.DataFrame, defaulted: pd.DataFrame) -> dict[str, tuple[str, ...]]:
    """Type id → the columns filled from its class defaults (from :func:`fill_class_defaults`)."""
    out = {}
    for i, key in filled["aircraft_type_id"].items():
        cols = tuple(c for c in DEFAULTED_COLUMNS if defaulted.at[i, c])
        if cols and key is not None and not (isinstance(key, float) and np.isnan(key)):
            out[str(key)] = cols
    return out


def describe(name: str, column: str) -> str:
    """One line: the class default of a column and its source (for reports and ``explain``)."""
    d = CLASS_DEFAULTS[name][column]
    what = {"value": f"{d.value:g}", "per_span": f"{d.value:g} × wing span",
            "stall_ratio": f"{d.value:g} × stall speed at MTOW"}[d.kind]
    return f"{what} ({d.source})"


def shown_values(filled: pd.DataFrame, defaulted: pd.DataFrame, column: str,
                 other: str | None = None) -> np.ndarray:
    """A column's values for a message, saying where a class default is involved.

    ``1.05 (blank: class default of transport_jet)`` for a defaulted cell of ``column``;
    with ``other`` (the column it is compared with), ``1.04 (vr_over_vs 1.05: blank, class
    default of transport_jet)`` where that one was defaulted. Other cells: the numbers.
    """
    values = filled[column].to_numpy().astype(object)
    classes = filled["type_class"].to_numpy()
    mine = defaulted[column].to_numpy()
    theirs = defaulted[other].to_numpy() if other is not None else np.zeros(len(values), bool)
    for i in np.flatnonzero(mine | theirs):
        notes = []
        if mine[i]:
            notes.append(f"blank: class default of {classes[i]}")
        if theirs[i]:
            notes.append(f"{other} {float(filled[other].iloc[i]):g}: blank, class default of {classes[i]}")
        values[i] = f"{float(values[i]):g} ({'; '.join(notes)})"
    return values


__all__ = ["CLASS_NAMES", "CLASS_DEFAULTS", "DEFAULTED_COLUMNS", "Default", "resolve_class", "default_value",
           "prior_sd", "fill_class_defaults", "defaulted_columns", "describe", "shown_values", "BUSINESS_JET_MAX_SEATS",
           "LIGHT_MTOW_KG"]
