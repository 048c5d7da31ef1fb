-- run_sources: per run, airfield and aircraft type, the run whose stored rows hold the results (reruns store by reference).
-- Generated from schemas/results.py by `python -m fieldlimits.pipeline.ddl --write`; edit that file, not this one.
CREATE TABLE IF NOT EXISTS run_sources (
    run_id           BIGINT NOT NULL,  -- [-] run number
    airfield_id      VARCHAR NOT NULL,  -- [text] airfield id
    aircraft_type_id VARCHAR NOT NULL,  -- [text] aircraft type id
    source_run_id    BIGINT NOT NULL  -- [-] run whose stored rows hold these results (run_id itself when this run computed them)
);
