"""Definitions of the output tables fieldlimits writes to DuckDB.

One definition per table drives the DDL files ``pipeline/sql/create_<table>.sql`` (generated
with ``python -m fieldlimits.pipeline.ddl --write`` and checked by a test) and the column reference in
the documentation. Every column says its unit; ``[-]`` means dimensionless, ``[text]`` a
name or code.

The tables:

``runs``
    One row per run: status, times, parameters (including the climate scenario
    ``temperature_offset_k``), input hashes, code version, row counts.
``run_inputs``
    One row per run × input table: the file read, its row count and SHA-256.
``run_hashes``
    Per run, a hash of each airfield's and each aircraft type's input rows: a rerun reuses
    the results of every airfield × type whose two hashes are unchanged.
``run_sources``
    Per run × airfield × aircraft type, the run whose stored rows hold the results: the run
    itself where it computed them, an earlier run where it reused them unchanged.
``results_direction``
    One row per run × runway direction × month × aircraft type × condition × basis.
``results_airfield``
    The best runway direction per run × airfield × month × type × condition × basis
    (same columns; ``runway_id`` is the best direction).
``route_payload``
    Payload available per run × route × aircraft type × month × condition × basis, with the
    binding limit and the fuel plan (built by :mod:`pipeline.routes`).
``landing_direction``
    Landing-mass limit per run × destination runway direction × month × aircraft type ×
    condition on the design day (route destinations and the types flown there;
    :mod:`pipeline.landing`).
``landing_airfield``
    The best landing direction per run × destination × month × type × condition × basis
    (design day and reliability levels), the destination limit of the route payloads.

Stored by reference (:data:`STORED_BY_REFERENCE`): each row of the results, route payload
and landing tables is stored once, in ``<table>_stored`` under the run that computed it, and
``<table>`` is a view that gives every run its full rows. ``results_direction`` and
``results_airfield`` follow ``run_sources`` (per airfield × type); ``route_payload``,
``landing_direction`` and ``landing_airfield`` follow ``runs.route_results_from_run_id``
(per run: a run whose whole input is unchanged reads the earlier run's).

No primary keys on the big tables: a key makes bulk inserts about ten times slower in
DuckDB 2 and the writer guarantees uniqueness by construction (one load per run).
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class ResultColumn:
    """One column of an output table."""

    name: str
    sql_type: str
    unit: str
    description: str
    not_null: bool = False


def _c(name, sql_type, unit, description, not_null=False):
    return ResultColumn(name, sql_type, unit, description, not_null)


RUNS = (
    _c("run_id", "BIGINT", "-", "run number, increasing", True),
    _c("status", "VARCHAR", "text", "running, complete, failed or interrupted", True),
    _c("started_at", "TIMESTAMP", "UTC", "when the run was registered", True),
    _c("finished_at", "TIMESTAMP", "UTC", "when the run completed or failed"),
    _c("input_dir", "VARCHAR", "text", "input folder read (absolute path)"),
    _c("parameters", "VARCHAR", "JSON", "all run parameters as a JSON object"),
    _c("temperature_offset_k", "DOUBLE", "K", "climate scenario: uniform offset added to every monthly temperature"),
    _c("input_hash", "VARCHAR", "sha256", "hash over all input tables used"),
    _c("input_hashes", "VARCHAR", "JSON", "per table SHA-256 of the input files"),
    _c("code_version", "VARCHAR", "text", "package version + hash of the source code"),
    _c("airfields", "BIGINT", "count", "airfields computed"),
    _c("cases", "BIGINT", "count", "design-day cases computed (directions × months × types × conditions)"),
    _c("chunks", "BIGINT", "count", "chunk tasks the cases were split into"),
    _c("reused_cases", "BIGINT", "count", "design-day cases reused from an earlier run instead of recomputed"),
    _c("reused_from_run_id", "BIGINT", "-", "the run whose results were reused (NULL: all computed)"),
    _c("reuse_key", "VARCHAR", "sha256", "code version + result-changing parameters; runs with equal keys can share results"),
    _c("rows_direction", "BIGINT", "count", "rows written to results_direction"),
    _c("rows_airfield", "BIGINT", "count", "rows written to results_airfield"),
    _c("rows_route_payload", "BIGINT", "count", "rows written to route_payload"),
    _c("error", "VARCHAR", "text", "why the run failed (NULL when complete)"),
    _c("host", "VARCHAR", "text", "machine that ran it"),
    _c("pid", "BIGINT", "-", "process id of the run (detects interrupted runs)"),
    _c("route_results_from_run_id", "BIGINT", "-", "run whose stored route payloads and destination landing limits this run reads, its whole input being unchanged (NULL: its own)"),
)

RUN_HASHES = (
    _c("run_id", "BIGINT", "-", "run number", True),
    _c("kind", "VARCHAR", "text", "airfield or aircraft_type", True),
    _c("key", "VARCHAR", "text", "airfield_id or aircraft_type_id", True),
    _c("sha256", "VARCHAR", "sha256", "hash of that airfield's rows (airfield, runways, climate, wind rose) or that type's row", True),
)

RUN_SOURCES = (
    _c("run_id", "BIGINT", "-", "run number", True),
    _c("airfield_id", "VARCHAR", "text", "airfield id", True),
    _c("aircraft_type_id", "VARCHAR", "text", "aircraft type id", True),
    _c("source_run_id", "BIGINT", "-", "run whose stored rows hold these results (run_id itself when this run computed them)", True),
)

RUN_INPUTS = (
    _c("run_id", "BIGINT", "-", "run number", True),
    _c("table_name", "VARCHAR", "text", "input table (airfields, runways, ...)", True),
    _c("file_name", "VARCHAR", "text", "file read for it (absolute path)"),
    _c("row_count", "BIGINT", "count", "rows in the table"),
    _c("sha256", "VARCHAR", "sha256", "hash of the table's content"),
)

_RESULT_COMMON = (
    _c("run_id", "BIGINT", "-", "run number", True),
    _c("airfield_id", "VARCHAR", "text", "airfield id", True),
    _c("runway_id", "VARCHAR", "text", "runway direction (designator) for the takeoff"),
    _c("aircraft_type_id", "VARCHAR", "text", "aircraft type id", True),
    _c("month", "TINYINT", "1-12", "calendar month", True),
    _c("condition", "VARCHAR", "text", "runway condition: dry or wet", True),
    _c("basis", "VARCHAR", "text", "design_day (mean daily maximum, calm) or reliability", True),
    _c("reliability", "DOUBLE", "-", "share of days the limit is achieved; NULL for the design day"),
    _c("oat_c", "DOUBLE", "degC", "outside air temperature used"),
    _c("pressure_altitude_m", "DOUBLE", "m", "pressure altitude of the station"),
    _c("density_altitude_m", "DOUBLE", "m", "density altitude of the station"),
    _c("headwind_mps", "DOUBLE", "m/s", "factored headwind component used (negative = tailwind)"),
    _c("tow_limit_kg", "DOUBLE", "kg", "takeoff-weight limit (NULL when no takeoff is possible)"),
    _c("limiting_factor", "VARCHAR", "text", "what sets the limit (physics.limits.FACTORS)", True),
    _c("takeoff_distance_m", "DOUBLE", "m", "takeoff distance required at the limit mass"),
    _c("takeoff_run_m", "DOUBLE", "m", "takeoff run required at the limit mass"),
    _c("accelerate_stop_m", "DOUBLE", "m", "accelerate-stop distance at the limit mass"),
    _c("v1_kt", "DOUBLE", "kt", "decision speed V1 at the limit mass"),
    _c("vr_kt", "DOUBLE", "kt", "rotation speed VR at the limit mass"),
    _c("v2_kt", "DOUBLE", "kt", "takeoff safety speed V2 at the limit mass"),
    _c("v_lof_kt", "DOUBLE", "kt", "lift-off speed at the limit mass"),
    _c("climb_gradient", "DOUBLE", "-", "second-segment climb gradient at the limit mass (rise over run)"),
    _c("share_days_full_mass", "DOUBLE", "-", "reliability rows: share of the month's days on which MTOW is achievable (NULL for the design day)"),
    _c("obstacle_clearance_m", "DOUBLE", "m", "runway directions with obstacles: height of the net takeoff flight path over the governing obstacle less the obstacle and 35 ft, at the limit mass (0 where obstacle_clearance limits; NULL without obstacles)"),
    _c("acceleration_height_m", "DOUBLE", "m", "runway directions with obstacles: acceleration height of the takeoff path used (the lowest from the type's default to its maximum that clears every obstacle; NULL without obstacles)"),
    _c("governing_obstacle_id", "VARCHAR", "text", "runway directions with obstacles: obstacle_id the net takeoff flight path clears by the least margin (NULL without obstacles)"),
)

ROUTE_PAYLOAD = (
    _c("run_id", "BIGINT", "-", "run number", True),
    _c("route_id", "VARCHAR", "text", "route id", True),
    _c("origin_id", "VARCHAR", "text", "departure airfield id", True),
    _c("destination_id", "VARCHAR", "text", "arrival airfield id", True),
    _c("aircraft_type_id", "VARCHAR", "text", "aircraft type id", True),
    _c("month", "TINYINT", "1-12", "calendar month", True),
    _c("condition", "VARCHAR", "text", "runway condition at the origin and the destination: dry or wet", True),
    _c("basis", "VARCHAR", "text", "design_day or reliability (as results_airfield)", True),
    _c("reliability", "DOUBLE", "-", "share of days the origin limit is achieved; NULL for the design day"),
    _c("great_circle_km", "DOUBLE", "km", "geodesic distance origin to destination on the WGS84 ellipsoid"),
    _c("route_factor", "DOUBLE", "-", "flown distance / great-circle distance"),
    _c("air_distance_km", "DOUBLE", "km", "still-air distance flown (great circle × route factor)"),
    _c("origin_runway_id", "VARCHAR", "text", "best runway direction at the origin"),
    _c("origin_tow_limit_kg", "DOUBLE", "kg", "takeoff-weight limit at the origin (NULL when no takeoff)"),
    _c("origin_limiting_factor", "VARCHAR", "text", "what sets the origin limit (physics.limits.FACTORS)"),
    _c("possible", "BOOLEAN", "-", "the route can be flown with zero or more payload", True),
    _c("payload_kg", "DOUBLE", "kg", "payload available (NULL when not possible)"),
    _c("passengers", "DOUBLE", "count", "whole passengers at passenger_mass_kg, capped by the seats"),
    _c("payload_limiting_factor", "VARCHAR", "text", "binding limit: max_payload, takeoff_limit, fuel_capacity, landing_mass, landing_distance, approach_climb, landing_climb (or no_takeoff, no_landing, no_cruise_data)", True),
    _c("not_possible_reason", "VARCHAR", "text", "why the route is not possible (NULL when possible)"),
    _c("payload_at_mtow_kg", "DOUBLE", "kg", "payload available if the origin allowed MTOW"),
    _c("payload_restriction_kg", "DOUBLE", "kg", "payload lost to the origin takeoff limit (payload_at_mtow_kg − payload_kg)"),
    _c("takeoff_mass_kg", "DOUBLE", "kg", "planned takeoff (brake-release) mass at the available payload"),
    _c("landing_mass_kg", "DOUBLE", "kg", "planned landing mass at the destination (reserves on board)"),
    _c("trip_fuel_kg", "DOUBLE", "kg", "trip fuel (Breguet, still air)"),
    _c("contingency_fuel_kg", "DOUBLE", "kg", "contingency fuel (contingency_pct of trip fuel)"),
    _c("alternate_fuel_kg", "DOUBLE", "kg", "fuel to fly alternate_distance_km"),
    _c("final_reserve_fuel_kg", "DOUBLE", "kg", "final reserve: final_reserve_min of holding"),
    _c("taxi_fuel_kg", "DOUBLE", "kg", "taxi fuel, burnt before takeoff"),
    _c("block_fuel_kg", "DOUBLE", "kg", "taxi + trip + contingency + alternate + final reserve"),
    _c("max_payload_kg", "DOUBLE", "kg", "structural payload limit of the type"),
    _c("max_passengers", "DOUBLE", "count", "seats of the type"),
    _c("contingency_pct", "DOUBLE", "%", "contingency fuel as per cent of trip fuel used"),
    _c("alternate_distance_km", "DOUBLE", "km", "destination-to-alternate distance used"),
    _c("final_reserve_min", "DOUBLE", "min", "final reserve holding time used"),
    _c("passenger_mass_kg", "DOUBLE", "kg", "standard mass per passenger with baggage used"),
    _c("destination_runway_id", "VARCHAR", "text", "best landing direction at the destination (NULL when not checked)"),
    _c("destination_landing_limit_kg", "DOUBLE", "kg", "landing-mass limit at the destination, same condition and level (NULL when not checked or no landing possible)"),
    _c("destination_limiting_factor", "VARCHAR", "text", "what sets the destination limit (physics.landing.LANDING_FACTORS; not_checked: no lda_m at the destination)"),
    _c("limiting_end", "VARCHAR", "text", "which end limits the payload: origin (takeoff), destination (landing) or aircraft (payload, fuel, cruise figures)"),
    _c("payload_landing_restriction_kg", "DOUBLE", "kg", "payload lost to the destination runway's landing limit (against its structural landing mass alone)"),
)

LANDING_COMMON = (
    _c("run_id", "BIGINT", "-", "run number", True),
    _c("airfield_id", "VARCHAR", "text", "destination airfield id", True),
    _c("runway_id", "VARCHAR", "text", "runway direction of the landing (NULL: none checked, or no day usable)"),
    _c("aircraft_type_id", "VARCHAR", "text", "aircraft type id", True),
    _c("month", "TINYINT", "1-12", "calendar month", True),
    _c("condition", "VARCHAR", "text", "runway condition: dry or wet", True),
    _c("basis", "VARCHAR", "text", "design_day (mean daily maximum, calm) or reliability", True),
    _c("reliability", "DOUBLE", "-", "share of days the landing limit is achieved; NULL for the design day"),
    _c("oat_c", "DOUBLE", "degC", "outside air temperature used"),
    _c("pressure_altitude_m", "DOUBLE", "m", "pressure altitude of the station"),
    _c("density_altitude_m", "DOUBLE", "m", "density altitude of the station"),
    _c("headwind_mps", "DOUBLE", "m/s", "factored headwind component used (negative = tailwind)"),
    _c("lda_m", "DOUBLE", "m", "landing distance available (NULL: no landing check at this direction)"),
    _c("landing_limit_kg", "DOUBLE", "kg", "landing-mass limit (NULL when not checked or no landing possible)"),
    _c("limiting_factor", "VARCHAR", "text", "what sets the limit (physics.landing.LANDING_FACTORS)", True),
    _c("distance_limited_mass_kg", "DOUBLE", "kg", "largest mass whose required landing distance fits the LDA, at most the maximum landing mass"),
    _c("approach_climb_limited_mass_kg", "DOUBLE", "kg", "approach-climb limited mass (one engine out, 14 CFR 25.121(d)), at most the maximum landing mass"),
    _c("landing_climb_limited_mass_kg", "DOUBLE", "kg", "landing-climb limited mass (all engines, 14 CFR 25.119), at most the maximum landing mass"),
    _c("landing_distance_m", "DOUBLE", "m", "actual landing distance from 50 ft at the limit mass"),
    _c("required_landing_distance_m", "DOUBLE", "m", "required landing distance at the limit mass (dispatch factors of the run)"),
    _c("vref_kt", "DOUBLE", "kt", "reference landing speed VREF (1.23 V_SR0, EAS) at the limit mass"),
    _c("approach_climb_gradient", "DOUBLE", "-", "approach-climb gradient at the limit mass (NULL for single-engine types)"),
    _c("landing_climb_gradient", "DOUBLE", "-", "landing-climb gradient at the limit mass"),
    _c("share_days_full_mass", "DOUBLE", "-", "reliability rows: share of the month's days on which the maximum landing mass can land (NULL for the design day)"),
)

TABLES: dict[str, tuple[ResultColumn, ...]] = {
    "runs": RUNS,
    "run_inputs": RUN_INPUTS,
    "run_hashes": RUN_HASHES,
    "run_sources": RUN_SOURCES,
    "results_direction": _RESULT_COMMON,
    "results_airfield": _RESULT_COMMON,
    "route_payload": ROUTE_PAYLOAD,
    "landing_direction": LANDING_COMMON,
    "landing_airfield": LANDING_COMMON,
}

DESCRIPTIONS: dict[str, str] = {
    "runs": "one row per run: status, times, parameters, input hashes, code version, row counts",
    "run_inputs": "one row per run and input table: file, rows, SHA-256",
    "run_hashes": "per run, the content hash of each airfield and aircraft type (incremental reruns)",
    "run_sources": "per run, airfield and aircraft type, the run whose stored rows hold the results (reruns store by reference)",
    "results_direction": "takeoff-weight limit per run, runway direction, month, aircraft type, condition and basis",
    "results_airfield": "best runway direction per run, airfield, month, aircraft type, condition and basis",
    "route_payload": "payload available per run, route, aircraft type, month, origin condition and basis",
    "landing_direction": "landing-mass limit per run, destination runway direction, month, aircraft type and condition (design day)",
    "landing_airfield": "best landing direction per run, destination, month, aircraft type, condition and basis",
}

RESULT_COLUMNS: tuple[str, ...] = tuple(c.name for c in _RESULT_COMMON)
"""Column order of results_direction and results_airfield (the contract in DEVELOPERS.md)."""

STORED_BY_REFERENCE: dict[str, str] = {
    "results_direction": "results_direction_stored",
    "results_airfield": "results_airfield_stored",
    "route_payload": "route_payload_stored",
    "landing_direction": "landing_direction_stored",
    "landing_airfield": "landing_airfield_stored",
}
"""Output tables whose rows are stored once (table on the right, ``run_id`` = the run that
computed them) and read per run through the view named on the left."""

CONDITIONS: tuple[str, ...] = ("dry", "wet")
BASES: tuple[str, ...] = ("design_day", "reliability")


def columns(table: str) -> tuple[ResultColumn, ...]:
    """Columns of an output table, in order."""
    try:
        return TABLES[table]
    except KeyError:
        raise KeyError(f"unknown output table {table!r}; known: {', '.join(TABLES)}") from None


def stored_name(table: str) -> str:
    """The table that holds an output table's rows (``results_direction_stored`` for the view
    ``results_direction``; the table itself otherwise)."""
    return STORED_BY_REFERENCE.get(table, table)


def create_table_sql(table: str) -> str:
    """``CREATE TABLE IF NOT EXISTS`` statement for an output table, units in comments (for a
    table stored by reference, the table of its stored rows)."""
    cols = columns(table)
    width = max(len(c.name) for c in cols)
    lines = []
    for i, c in enumerate(cols):
        sep = "," if i < len(cols) - 1 else ""
        null = " NOT NULL" if c.not_null else ""
        lines.append(f"    {c.name.ljust(width)} {c.sql_type}{null}{sep}  -- [{c.unit}] {c.description}")
    stored = stored_name(table)
    by_reference = (f"-- Rows stored once under the run that computed them; the view {table}\n"
                    f"-- (view_{table}.sql) gives every run its full rows.\n"
                    if stored != table else "")
    return (
        f"-- {table}: {DESCRIPTIONS[table]}.\n" + by_reference +
        f"-- Generated from schemas/results.py by `python -m fieldlimits.pipeline.ddl --write`; edit that file, not this one.\n"
        f"CREATE TABLE IF NOT EXISTS {stored} (\n" + "\n".join(lines) + "\n);\n"
    )
