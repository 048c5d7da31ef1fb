"""Route payloads: join the routes table to the origin's takeoff-weight limits (and, where
given, the destination's landing-mass limits of :mod:`pipeline.landing`) and call
:mod:`physics.routefuel` once for every route × type × month × condition × basis.

The destination's limit is taken at the same month, runway condition and level (design day,
or the same reliability level p: where the weather at the two ends is independent the
payload is then achievable on at least 2p − 1 of the days, on p where it moves together; a
planning convention of ours). A destination without a landing check (no ``lda_m``) keeps
the structural maximum landing mass as its only limit, and the row says ``not_checked``.

Distances are geodesics on the WGS84 ellipsoid (``pyproj.Geod(ellps="WGS84").inv``) times a
route factor; every formula lives in :mod:`physics.routefuel`. The reserve policy and the
standard passenger mass come from :class:`RouteParams` (run parameters) unless the routes table
gives a value for that route.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import asdict, dataclass, fields

import numpy as np
import pandas as pd
import pyproj

from fieldlimits.physics import routefuel
from fieldlimits.pipeline.errors import BadInput
from fieldlimits.schemas import results as result_tables
from fieldlimits.schemas.tables import ROUTE_DEFAULTS

_GEOD = pyproj.Geod(ellps="WGS84")


@dataclass(frozen=True)
class RouteParams:
    """Run-wide defaults for route payloads; a routes-table column of the same name wins per row.

    Attributes
    ----------
    route_factor : float
        Flown distance over great-circle distance; 1.05 is common practice for planning.
    contingency_pct : float
        Contingency fuel, per cent of trip fuel; 5 % is common practice (EASA AMC1
        CAT.OP.MPA.150(b), from memory).
    alternate_distance_km : float
        Destination-to-alternate cruise distance; 370 km (200 NM) is a common planning
        figure (common practice).
    final_reserve_min : float
        Final reserve, minutes of holding; 30 min for turbine aircraft (ICAO Annex 6 Part I,
        4.3.6.3; from memory).
    passenger_mass_kg : float
        Standard mass per passenger with baggage; 100 kg is common practice.
    """

    route_factor: float = ROUTE_DEFAULTS["route_factor"]
    contingency_pct: float = ROUTE_DEFAULTS["contingency_pct"]
    alternate_distance_km: float = ROUTE_DEFAULTS["alternate_distance_km"]
    final_reserve_min: float = ROUTE_DEFAULTS["final_reserve_min"]
    passenger_mass_kg: float = ROUTE_DEFAULTS["passenger_mass_kg"]

    @classmethod
    def from_mapping(cls, params) -> "RouteParams":
        """Build from a mapping (unknown keys ignored), an existing RouteParams, or None."""
        if params is None:
            return cls()
        if isinstance(params, cls):
            return params
        if not isinstance(params, Mapping):
            params = {f.name: getattr(params, f.name) for f in fields(cls) if hasattr(params, f.name)}
        known = {f.name for f in fields(cls)}
        values = {k: float(v) for k, v in params.items() if k in known and v is not None}
        bad = [k for k, v in values.items() if not np.isfinite(v) or v < 0]
        if bad:
            raise BadInput(f"route parameters {bad} must be finite and not negative")
        if values.get("route_factor", 1.0) < 1.0:
            raise BadInput("route_factor must be at least 1 (flown distance >= great circle)")
        return cls(**values)

    def as_dict(self) -> dict[str, float]:
        return asdict(self)


#: Result columns of ``route_payload`` in order, defined in ``schemas.results.ROUTE_PAYLOAD``
#: (DDL generated into ``pipeline/sql/create_route_payload.sql``). ``run_id`` leads when the
#: airfield results carry it; the store sets it.
ROUTE_PAYLOAD_COLUMNS: tuple[str, ...] = tuple(
    c.name for c in result_tables.ROUTE_PAYLOAD if c.name != "run_id")

#: Landing factor of the destination (physics.landing) → route limit (physics.routefuel).
_DESTINATION_CODE = {"max_landing_mass": "landing_mass", "landing_distance": "landing_distance",
                     "approach_climb": "approach_climb", "landing_climb": "landing_climb"}

#: Which end a route limit belongs to (``limiting_end``).
_END = {"takeoff_limit": "origin", "no_takeoff": "origin", "landing_mass": "destination",
        "landing_distance": "destination", "approach_climb": "destination", "landing_climb": "destination",
        "no_landing": "destination", "max_payload": "aircraft", "fuel_capacity": "aircraft",
        "no_cruise_data": "aircraft"}

_REASONS = {
    "takeoff_limit": "empty mass and fuel exceed the origin takeoff-weight limit",
    "landing_distance": "empty mass and reserve fuel exceed the destination's landing-distance limit",
    "approach_climb": "empty mass and reserve fuel exceed the destination's approach-climb limit",
    "landing_climb": "empty mass and reserve fuel exceed the destination's landing-climb limit",
    "no_landing": "no landing mass at the destination",
    "fuel_capacity": "trip and reserve fuel exceed the fuel capacity",
    "landing_mass": "empty mass and reserve fuel exceed the maximum landing mass",
    "max_payload": "maximum payload is below zero",
    "no_takeoff": "no takeoff mass at the origin",
    "no_cruise_data": "the aircraft type has no usable cruise speed, lift-to-drag ratio or fuel consumption",
}

#: (user-unit column, SI column of ``schemas.load``, SI per user unit)
_POLICY_SI = (("contingency_pct", "contingency_fraction", 0.01),
              ("alternate_distance_km", "alternate_distance_m", 1000.0),
              ("final_reserve_min", "final_reserve_s", 60.0))

_AIRCRAFT_NEEDED = ("aircraft_type_id", "oew_kg", "mtow_kg", "max_payload_kg", "max_fuel_kg",
                    "max_landing_mass_kg", "taxi_fuel_kg", "cruise_tas_mps", "cruise_lift_to_drag")


def _table(tables, name: str) -> pd.DataFrame:
    if isinstance(tables, Mapping):
        if name in tables:
            return tables[name]
    elif hasattr(tables, name):
        return getattr(tables, name)
    raise BadInput(f"input table {name!r} is missing; route payloads need it")


def _column(frame: pd.DataFrame, table: str, *names: str) -> pd.Series:
    for n in names:
        if n in frame.columns:
            return frame[n]
    raise BadInput(f"table {table!r} has no column {names[0]!r}")


def _optional(frame: pd.DataFrame, name: str, default: float) -> np.ndarray:
    if name not in frame.columns:
        return np.full(len(frame), float(default))
    values = pd.to_numeric(frame[name], errors="coerce").to_numpy(dtype=float)
    return np.where(np.isfinite(values), values, float(default))


def great_circle_km(lat1_deg, lon1_deg, lat2_deg, lon2_deg) -> np.ndarray:
    """Geodesic distance on the WGS84 ellipsoid (``pyproj.Geod.inv``), in km."""
    arrays = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in
                                   (lon1_deg, lat1_deg, lon2_deg, lat2_deg)))
    if arrays[0].size == 0:
        return np.zeros(arrays[0].shape)
    _, _, dist_m = _GEOD.inv(*(np.ascontiguousarray(a) for a in arrays))
    return np.asarray(dist_m, dtype=float) / 1000.0


def route_legs(tables, params=None) -> pd.DataFrame:
    """One row per routes-table row with coordinates, distances and the reserve policy in force."""
    p = RouteParams.from_mapping(params)
    routes = _table(tables, "routes").copy()
    if routes.empty:
        return routes.assign(great_circle_km=pd.Series(dtype=float))
    airfields = _table(tables, "airfields")
    ids = _column(airfields, "airfields", "airfield_id", "id").astype(str)
    lat = pd.Series(_column(airfields, "airfields", "latitude_deg", "latitude").to_numpy(float),
                    index=ids)
    lon = pd.Series(_column(airfields, "airfields", "longitude_deg", "longitude").to_numpy(float),
                    index=ids)
    routes["origin_id"] = routes["origin_id"].astype(str)
    routes["destination_id"] = routes["destination_id"].astype(str)
    unknown = sorted((set(routes["origin_id"]) | set(routes["destination_id"])) - set(ids))
    if unknown:
        raise BadInput(f"routes refer to unknown airfields {unknown}; add them to airfields "
                       "or fix origin_id/destination_id")
    routes["great_circle_km"] = great_circle_km(
        lat[routes["origin_id"]].to_numpy(), lon[routes["origin_id"]].to_numpy(),
        lat[routes["destination_id"]].to_numpy(), lon[routes["destination_id"]].to_numpy())
    # the loaded (SI) routes table names the policy columns in SI; a user-unit frame does not
    for name, si_name, scale in _POLICY_SI:
        if name not in routes.columns and si_name in routes.columns:
            routes[name] = pd.to_numeric(routes[si_name], errors="coerce") / scale
    for name, default in p.as_dict().items():
        routes[name] = _optional(routes, name, default)
    routes["air_distance_km"] = routefuel.air_distance_m(
        routes["great_circle_km"].to_numpy(), routes["route_factor"].to_numpy())
    return routes


def _aircraft_frame(tables) -> pd.DataFrame:
    aircraft = _table(tables, "aircraft_types").copy()
    missing = [c for c in _AIRCRAFT_NEEDED if c not in aircraft.columns]
    if missing:
        raise BadInput(f"aircraft_types lacks {missing}, needed for route payloads")
    for name in ("cruise_tsfc_kg_per_n_s", "cruise_psfc_kg_per_w_s", "propeller_efficiency",
                 "max_passengers"):
        if name not in aircraft.columns:
            aircraft[name] = np.nan
    aircraft["aircraft_type_id"] = aircraft["aircraft_type_id"].astype(str)
    keep = list(_AIRCRAFT_NEEDED) + ["cruise_tsfc_kg_per_n_s", "cruise_psfc_kg_per_w_s",
                                     "propeller_efficiency", "max_passengers"]
    return aircraft[keep].rename(columns={"taxi_fuel_kg": "aircraft_taxi_fuel_kg"})


def route_payload_frame(tables, airfield_results_df: pd.DataFrame, params=None,
                        landing: pd.DataFrame | None = None) -> pd.DataFrame:
    """Route payload for every route × type × month × condition × basis/reliability.

    Parameters
    ----------
    tables : mapping or object
        Loaded input tables (``schemas.load.load_folder``): ``routes``, ``airfields`` and
        ``aircraft_types`` (SI columns) are used.
    airfield_results_df : pandas.DataFrame
        Best-direction takeoff limits (``results_airfield`` columns: airfield_id,
        aircraft_type_id, month, condition, basis, reliability, tow_limit_kg,
        limiting_factor, optionally run_id and runway_id).
    params : mapping, RouteParams or None
        Run-wide reserve policy, route factor and passenger mass (:class:`RouteParams`).
    landing : pandas.DataFrame, optional
        Landing-mass limits of the destinations (``landing_airfield`` rows of
        :mod:`pipeline.landing`); None or a missing row: the destination is not checked
        (structural maximum landing mass only, the results of earlier versions to the bit).

    Returns
    -------
    pandas.DataFrame
        Columns :data:`ROUTE_PAYLOAD_COLUMNS` (``run_id`` first when present).
    """
    legs = route_legs(tables, params)
    has_run = "run_id" in airfield_results_df.columns
    columns = (["run_id"] if has_run else []) + list(ROUTE_PAYLOAD_COLUMNS)
    if legs.empty or airfield_results_df.empty:
        return pd.DataFrame({c: pd.Series(dtype=object) for c in columns})
    if "aircraft_type_id" not in legs.columns:
        raise BadInput("table 'routes' has no column 'aircraft_type_id'")
    legs["aircraft_type_id"] = legs["aircraft_type_id"].astype(str)
    aircraft = _aircraft_frame(tables)
    unknown = sorted(set(legs["aircraft_type_id"]) - set(aircraft["aircraft_type_id"]))
    if unknown:
        raise BadInput(f"routes refer to unknown aircraft types {unknown}; add them to "
                       "aircraft_types or fix aircraft_type_id")
    res = airfield_results_df.copy()
    res["airfield_id"] = res["airfield_id"].astype(str)
    res["aircraft_type_id"] = res["aircraft_type_id"].astype(str)
    res = res.rename(columns={"airfield_id": "origin_id", "tow_limit_kg": "origin_tow_limit_kg",
                              "limiting_factor": "origin_limiting_factor",
                              "runway_id": "origin_runway_id"})
    if "origin_runway_id" not in res.columns:
        res["origin_runway_id"] = None
    keep = (["run_id"] if has_run else []) + [
        "origin_id", "aircraft_type_id", "month", "condition", "basis", "reliability",
        "origin_runway_id", "origin_tow_limit_kg", "origin_limiting_factor"]
    leg_cols = ["route_id", "origin_id", "destination_id", "aircraft_type_id", "great_circle_km",
                "route_factor", "air_distance_km", "contingency_pct", "alternate_distance_km",
                "final_reserve_min", "passenger_mass_kg"]
    df = legs[leg_cols].merge(res[keep], on=["origin_id", "aircraft_type_id"], how="inner")
    df = df.merge(aircraft, on="aircraft_type_id", how="left")
    dest_limit, dest_code = _destination(df, landing)

    k = routefuel.range_coefficient_per_m(
        df["cruise_tas_mps"].to_numpy(float), df["cruise_lift_to_drag"].to_numpy(float),
        df["cruise_tsfc_kg_per_n_s"].to_numpy(float), df["cruise_psfc_kg_per_w_s"].to_numpy(float),
        df["propeller_efficiency"].to_numpy(float))
    policy = routefuel.ReservePolicy(
        contingency_fraction=df["contingency_pct"].to_numpy(float) / 100.0,
        alternate_distance_m=df["alternate_distance_km"].to_numpy(float) * 1000.0,
        final_reserve_s=df["final_reserve_min"].to_numpy(float) * 60.0)
    out = routefuel.payload_available(
        df["origin_tow_limit_kg"].to_numpy(float), df["oew_kg"].to_numpy(float),
        df["max_payload_kg"].to_numpy(float), df["max_fuel_kg"].to_numpy(float),
        df["max_landing_mass_kg"].to_numpy(float), df["aircraft_taxi_fuel_kg"].to_numpy(float),
        k, df["air_distance_km"].to_numpy(float) * 1000.0, df["cruise_tas_mps"].to_numpy(float),
        policy, mtow_kg=df["mtow_kg"].to_numpy(float), destination_limit_kg=dest_limit,
        destination_code=dest_code)

    factor = routefuel.route_limit_name(out.limiting_factor)
    df["possible"] = out.possible
    df["payload_kg"] = out.payload_kg
    max_pax = df["max_passengers"].to_numpy(float)
    df["passengers"] = routefuel.passengers_for_payload(
        out.payload_kg, df["passenger_mass_kg"].to_numpy(float),
        np.where(np.isfinite(max_pax), max_pax, np.inf))
    df["payload_limiting_factor"] = factor
    reason = pd.Series(factor, index=df.index).map(_REASONS)
    no_takeoff = factor == "no_takeoff"
    reason[no_takeoff] = (reason[no_takeoff] + " ("
                          + df.loc[no_takeoff, "origin_limiting_factor"].astype(str) + ")")
    no_landing = factor == "no_landing"
    reason[no_landing] = (reason[no_landing] + " ("
                          + df.loc[no_landing, "destination_limiting_factor"].astype(str) + ")")
    df["not_possible_reason"] = reason.where(~out.possible, None)
    df["payload_at_mtow_kg"] = out.payload_at_mtow_kg
    lost = out.payload_at_mtow_kg - np.where(out.possible, out.payload_kg, 0.0)
    df["payload_restriction_kg"] = np.where(np.isfinite(lost), np.maximum(lost, 0.0), np.nan)
    plan = out.plan
    df["takeoff_mass_kg"] = plan.takeoff_mass_kg
    df["landing_mass_kg"] = plan.landing_mass_kg
    df["trip_fuel_kg"] = plan.trip_fuel_kg
    df["contingency_fuel_kg"] = plan.contingency_fuel_kg
    df["alternate_fuel_kg"] = plan.alternate_fuel_kg
    df["final_reserve_fuel_kg"] = plan.final_reserve_fuel_kg
    df["taxi_fuel_kg"] = df["aircraft_taxi_fuel_kg"]
    df["block_fuel_kg"] = plan.block_fuel_kg
    df["max_passengers"] = max_pax
    df["limiting_end"] = pd.Series(factor, index=df.index).map(_END)
    lost_at_destination = out.payload_without_destination_kg - np.where(out.possible, out.payload_kg, 0.0)
    df["payload_landing_restriction_kg"] = np.where(np.isfinite(lost_at_destination),
                                                    np.maximum(lost_at_destination, 0.0), np.nan)
    df = df[columns].sort_values(
        ["route_id", "aircraft_type_id", "month", "condition", "basis", "reliability"],
        na_position="first", kind="mergesort").reset_index(drop=True)
    df["month"] = df["month"].astype("int64")
    df["possible"] = df["possible"].astype(bool)
    return df


def _destination(df: pd.DataFrame, landing: pd.DataFrame | None):
    """The destination's landing limit of each route row, in place: the columns
    ``destination_runway_id``, ``destination_landing_limit_kg`` and
    ``destination_limiting_factor``; returns the limit for :func:`physics.routefuel.payload_available`
    (+inf: not checked, NaN: no landing possible) and its route-limit code."""
    keys = ["destination_id", "aircraft_type_id", "month", "condition", "basis", "reliability"]
    cols = {"runway_id": "destination_runway_id", "landing_limit_kg": "destination_landing_limit_kg",
            "limiting_factor": "destination_limiting_factor"}
    if landing is not None and len(landing):
        dest = landing.rename(columns={"airfield_id": "destination_id", **cols})
        dest = dest[keys + list(cols.values())].copy()
        dest["destination_id"] = dest["destination_id"].astype(str)
        dest["aircraft_type_id"] = dest["aircraft_type_id"].astype(str)
        dest["month"] = dest["month"].astype("int64")
        merged = df[keys].assign(month=df["month"].astype("int64")).merge(
            dest, on=keys, how="left", validate="many_to_one")
        for c in cols.values():
            df[c] = merged[c].to_numpy()
    else:
        df["destination_runway_id"] = None
        df["destination_landing_limit_kg"] = np.nan
        df["destination_limiting_factor"] = None
    factor = df["destination_limiting_factor"].where(df["destination_limiting_factor"].notna(), "not_checked")
    df["destination_limiting_factor"] = factor.to_numpy(object)
    limit = pd.to_numeric(df["destination_landing_limit_kg"], errors="coerce").to_numpy(float)
    unchecked = (factor == "not_checked").to_numpy()
    limit = np.where(unchecked, np.inf, limit)
    codes = {name: routefuel.route_limit_code(route) for name, route in _DESTINATION_CODE.items()}
    code = factor.map(codes).fillna(routefuel.route_limit_code("no_landing")).to_numpy(np.int64)
    return limit, code


def level_label(basis, reliability) -> str:
    """Short label of a result level: ``design_day`` or ``p85`` for reliability 0.85."""
    if basis == "design_day" or reliability is None or pd.isna(reliability):
        return str(basis)
    return f"p{int(round(float(reliability) * 100))}"


def payload_planning_frame(route_payload: pd.DataFrame) -> pd.DataFrame:
    """One row per route × type × month for payload planners (units in the headers).

    Columns: route and leg facts; for each condition and level (design day, p50, ...)
    ``payload_<condition>_<level>_kg``; and for the dry design day (or the first condition
    and level present) the passengers, binding limit, trip and block fuel and takeoff mass.
    A route level that is not possible shows an empty payload and its reason.
    """
    keys = ["route_id", "origin_id", "destination_id", "aircraft_type_id", "month"]
    if route_payload.empty:
        return pd.DataFrame(columns=keys + ["air_distance_km"])
    rp = route_payload.copy()
    rp["level"] = [level_label(b, r) for b, r in zip(rp["basis"], rp["reliability"])]
    rp["column"] = "payload_" + rp["condition"].astype(str) + "_" + rp["level"] + "_kg"
    wide = (rp.drop_duplicates(keys + ["column"]).set_index(keys + ["column"])["payload_kg"]
            .unstack("column"))
    order = (rp[["condition", "basis", "reliability", "column"]]
             .drop_duplicates("column")
             .assign(_d=lambda d: d["basis"].ne("design_day"))
             .sort_values(["condition", "_d", "reliability"])["column"].tolist())
    wide = wide.reindex(columns=order)
    ref_condition = "dry" if (rp["condition"] == "dry").any() else rp["condition"].iloc[0]
    ref = rp[(rp["condition"] == ref_condition)]
    ref = ref[ref["basis"] == "design_day"] if (ref["basis"] == "design_day").any() else ref
    ref = ref.drop_duplicates(keys).set_index(keys)
    tag = f"{ref_condition}_{ref['level'].iloc[0]}" if len(ref) else "reference"
    facts = rp.drop_duplicates(keys).set_index(keys)[
        ["great_circle_km", "air_distance_km", "max_payload_kg", "contingency_pct",
         "alternate_distance_km", "final_reserve_min", "passenger_mass_kg"]]
    extra = pd.DataFrame({
        f"passengers_{tag}": ref["passengers"],
        f"payload_limiting_factor_{tag}": ref["payload_limiting_factor"],
        f"not_possible_reason_{tag}": ref["not_possible_reason"],
        f"origin_tow_limit_{tag}_kg": ref["origin_tow_limit_kg"],
        f"limiting_end_{tag}": ref["limiting_end"] if "limiting_end" in ref else None,
        f"destination_landing_limit_{tag}_kg": (ref["destination_landing_limit_kg"]
                                                 if "destination_landing_limit_kg" in ref else np.nan),
        f"destination_limiting_factor_{tag}": (ref["destination_limiting_factor"]
                                                if "destination_limiting_factor" in ref else None),
        f"takeoff_mass_{tag}_kg": ref["takeoff_mass_kg"],
        f"trip_fuel_{tag}_kg": ref["trip_fuel_kg"],
        f"block_fuel_{tag}_kg": ref["block_fuel_kg"],
    })
    out = facts.join(wide).join(extra).reset_index()
    # planners read whole kilograms and tenths of a kilometre
    for col in out.columns:
        if col.endswith("_kg"):
            out[col] = pd.to_numeric(out[col], errors="coerce").round(0)
        elif col.endswith("_km"):
            out[col] = pd.to_numeric(out[col], errors="coerce").round(1)
    return out.sort_values(keys, kind="mergesort").reset_index(drop=True)
