-- route_payload: payload available per run, route, aircraft type, month, origin condition and basis.
-- Rows stored once under the run that computed them; the view route_payload
-- (view_route_payload.sql) gives every run its full rows.
-- Generated from schemas/results.py by `python -m fieldlimits.pipeline.ddl --write`; edit that file, not this one.
CREATE TABLE IF NOT EXISTS route_payload_stored (
    run_id                         BIGINT NOT NULL,  -- [-] run number
    route_id                       VARCHAR NOT NULL,  -- [text] route id
    origin_id                      VARCHAR NOT NULL,  -- [text] departure airfield id
    destination_id                 VARCHAR NOT NULL,  -- [text] arrival airfield id
    aircraft_type_id               VARCHAR NOT NULL,  -- [text] aircraft type id
    month                          TINYINT NOT NULL,  -- [1-12] calendar month
    condition                      VARCHAR NOT NULL,  -- [text] runway condition at the origin and the destination: dry or wet
    basis                          VARCHAR NOT NULL,  -- [text] design_day or reliability (as results_airfield)
    reliability                    DOUBLE,  -- [-] share of days the origin limit is achieved; NULL for the design day
    great_circle_km                DOUBLE,  -- [km] geodesic distance origin to destination on the WGS84 ellipsoid
    route_factor                   DOUBLE,  -- [-] flown distance / great-circle distance
    air_distance_km                DOUBLE,  -- [km] still-air distance flown (great circle × route factor)
    origin_runway_id               VARCHAR,  -- [text] best runway direction at the origin
    origin_tow_limit_kg            DOUBLE,  -- [kg] takeoff-weight limit at the origin (NULL when no takeoff)
    origin_limiting_factor         VARCHAR,  -- [text] what sets the origin limit (physics.limits.FACTORS)
    possible                       BOOLEAN NOT NULL,  -- [-] the route can be flown with zero or more payload
    payload_kg                     DOUBLE,  -- [kg] payload available (NULL when not possible)
    passengers                     DOUBLE,  -- [count] whole passengers at passenger_mass_kg, capped by the seats
    payload_limiting_factor        VARCHAR NOT NULL,  -- [text] binding limit: max_payload, takeoff_limit, fuel_capacity, landing_mass, landing_distance, approach_climb, landing_climb (or no_takeoff, no_landing, no_cruise_data)
    not_possible_reason            VARCHAR,  -- [text] why the route is not possible (NULL when possible)
    payload_at_mtow_kg             DOUBLE,  -- [kg] payload available if the origin allowed MTOW
    payload_restriction_kg         DOUBLE,  -- [kg] payload lost to the origin takeoff limit (payload_at_mtow_kg − payload_kg)
    takeoff_mass_kg                DOUBLE,  -- [kg] planned takeoff (brake-release) mass at the available payload
    landing_mass_kg                DOUBLE,  -- [kg] planned landing mass at the destination (reserves on board)
    trip_fuel_kg                   DOUBLE,  -- [kg] trip fuel (Breguet, still air)
    contingency_fuel_kg            DOUBLE,  -- [kg] contingency fuel (contingency_pct of trip fuel)
    alternate_fuel_kg              DOUBLE,  -- [kg] fuel to fly alternate_distance_km
    final_reserve_fuel_kg          DOUBLE,  -- [kg] final reserve: final_reserve_min of holding
    taxi_fuel_kg                   DOUBLE,  -- [kg] taxi fuel, burnt before takeoff
    block_fuel_kg                  DOUBLE,  -- [kg] taxi + trip + contingency + alternate + final reserve
    max_payload_kg                 DOUBLE,  -- [kg] structural payload limit of the type
    max_passengers                 DOUBLE,  -- [count] seats of the type
    contingency_pct                DOUBLE,  -- [%] contingency fuel as per cent of trip fuel used
    alternate_distance_km          DOUBLE,  -- [km] destination-to-alternate distance used
    final_reserve_min              DOUBLE,  -- [min] final reserve holding time used
    passenger_mass_kg              DOUBLE,  -- [kg] standard mass per passenger with baggage used
    destination_runway_id          VARCHAR,  -- [text] best landing direction at the destination (NULL when not checked)
    destination_landing_limit_kg   DOUBLE,  -- [kg] landing-mass limit at the destination, same condition and level (NULL when not checked or no landing possible)
    destination_limiting_factor    VARCHAR,  -- [text] what sets the destination limit (physics.landing.LANDING_FACTORS; not_checked: no lda_m at the destination)
    limiting_end                   VARCHAR,  -- [text] which end limits the payload: origin (takeoff), destination (landing) or aircraft (payload, fuel, cruise figures)
    payload_landing_restriction_kg DOUBLE  -- [kg] payload lost to the destination runway's landing limit (against its structural landing mass alone)
);
