-- results_direction: takeoff-weight limit per run, runway direction, month, aircraft type, condition and basis.
-- Rows stored once under the run that computed them; the view results_direction
-- (view_results_direction.sql) gives every run its full rows.
-- Generated from schemas/results.py by `python -m fieldlimits.pipeline.ddl --write`; edit that file, not this one.
CREATE TABLE IF NOT EXISTS results_direction_stored (
    run_id                BIGINT NOT NULL,  -- [-] run number
    airfield_id           VARCHAR NOT NULL,  -- [text] airfield id
    runway_id             VARCHAR,  -- [text] runway direction (designator) for the takeoff
    aircraft_type_id      VARCHAR NOT NULL,  -- [text] aircraft type id
    month                 TINYINT NOT NULL,  -- [1-12] calendar month
    condition             VARCHAR NOT NULL,  -- [text] runway condition: dry or wet
    basis                 VARCHAR NOT NULL,  -- [text] design_day (mean daily maximum, calm) or reliability
    reliability           DOUBLE,  -- [-] share of days the limit is achieved; NULL for the design day
    oat_c                 DOUBLE,  -- [degC] outside air temperature used
    pressure_altitude_m   DOUBLE,  -- [m] pressure altitude of the station
    density_altitude_m    DOUBLE,  -- [m] density altitude of the station
    headwind_mps          DOUBLE,  -- [m/s] factored headwind component used (negative = tailwind)
    tow_limit_kg          DOUBLE,  -- [kg] takeoff-weight limit (NULL when no takeoff is possible)
    limiting_factor       VARCHAR NOT NULL,  -- [text] what sets the limit (physics.limits.FACTORS)
    takeoff_distance_m    DOUBLE,  -- [m] takeoff distance required at the limit mass
    takeoff_run_m         DOUBLE,  -- [m] takeoff run required at the limit mass
    accelerate_stop_m     DOUBLE,  -- [m] accelerate-stop distance at the limit mass
    v1_kt                 DOUBLE,  -- [kt] decision speed V1 at the limit mass
    vr_kt                 DOUBLE,  -- [kt] rotation speed VR at the limit mass
    v2_kt                 DOUBLE,  -- [kt] takeoff safety speed V2 at the limit mass
    v_lof_kt              DOUBLE,  -- [kt] lift-off speed at the limit mass
    climb_gradient        DOUBLE,  -- [-] second-segment climb gradient at the limit mass (rise over run)
    share_days_full_mass  DOUBLE,  -- [-] reliability rows: share of the month's days on which MTOW is achievable (NULL for the design day)
    obstacle_clearance_m  DOUBLE,  -- [m] runway directions with obstacles: height of the net takeoff flight path over the governing obstacle less the obstacle and 35 ft, at the limit mass (0 where obstacle_clearance limits; NULL without obstacles)
    acceleration_height_m DOUBLE,  -- [m] runway directions with obstacles: acceleration height of the takeoff path used (the lowest from the type's default to its maximum that clears every obstacle; NULL without obstacles)
    governing_obstacle_id VARCHAR  -- [text] runway directions with obstacles: obstacle_id the net takeoff flight path clears by the least margin (NULL without obstacles)
);
