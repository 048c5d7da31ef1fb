-- landing_airfield: best landing direction per run, destination, month, aircraft type, condition and basis.
-- Rows stored once under the run that computed them; the view landing_airfield
-- (view_landing_airfield.sql) gives every run its full rows.
-- Generated from schemas/results.py by `python -m fieldlimits.pipeline.ddl --write`; edit that file, not this one.
CREATE TABLE IF NOT EXISTS landing_airfield_stored (
    run_id                         BIGINT NOT NULL,  -- [-] run number
    airfield_id                    VARCHAR NOT NULL,  -- [text] destination airfield id
    runway_id                      VARCHAR,  -- [text] runway direction of the landing (NULL: none checked, or no day usable)
    aircraft_type_id               VARCHAR NOT NULL,  -- [text] aircraft type id
    month                          TINYINT NOT NULL,  -- [1-12] calendar month
    condition                      VARCHAR NOT NULL,  -- [text] runway condition: dry or wet
    basis                          VARCHAR NOT NULL,  -- [text] design_day (mean daily maximum, calm) or reliability
    reliability                    DOUBLE,  -- [-] share of days the landing limit is achieved; NULL for the design day
    oat_c                          DOUBLE,  -- [degC] outside air temperature used
    pressure_altitude_m            DOUBLE,  -- [m] pressure altitude of the station
    density_altitude_m             DOUBLE,  -- [m] density altitude of the station
    headwind_mps                   DOUBLE,  -- [m/s] factored headwind component used (negative = tailwind)
    lda_m                          DOUBLE,  -- [m] landing distance available (NULL: no landing check at this direction)
    landing_limit_kg               DOUBLE,  -- [kg] landing-mass limit (NULL when not checked or no landing possible)
    limiting_factor                VARCHAR NOT NULL,  -- [text] what sets the limit (physics.landing.LANDING_FACTORS)
    distance_limited_mass_kg       DOUBLE,  -- [kg] largest mass whose required landing distance fits the LDA, at most the maximum landing mass
    approach_climb_limited_mass_kg DOUBLE,  -- [kg] approach-climb limited mass (one engine out, 14 CFR 25.121(d)), at most the maximum landing mass
    landing_climb_limited_mass_kg  DOUBLE,  -- [kg] landing-climb limited mass (all engines, 14 CFR 25.119), at most the maximum landing mass
    landing_distance_m             DOUBLE,  -- [m] actual landing distance from 50 ft at the limit mass
    required_landing_distance_m    DOUBLE,  -- [m] required landing distance at the limit mass (dispatch factors of the run)
    vref_kt                        DOUBLE,  -- [kt] reference landing speed VREF (1.23 V_SR0, EAS) at the limit mass
    approach_climb_gradient        DOUBLE,  -- [-] approach-climb gradient at the limit mass (NULL for single-engine types)
    landing_climb_gradient         DOUBLE,  -- [-] landing-climb gradient at the limit mass
    share_days_full_mass           DOUBLE  -- [-] reliability rows: share of the month's days on which the maximum landing mass can land (NULL for the design day)
);
