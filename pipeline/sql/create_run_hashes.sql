-- run_hashes: per run, the content hash of each airfield and aircraft type (incremental reruns).
-- Generated from schemas/results.py by `python -m fieldlimits.pipeline.ddl --write`; edit that file, not this one.
CREATE TABLE IF NOT EXISTS run_hashes (
    run_id BIGINT NOT NULL,  -- [-] run number
    kind   VARCHAR NOT NULL,  -- [text] airfield or aircraft_type
    key    VARCHAR NOT NULL,  -- [text] airfield_id or aircraft_type_id
    sha256 VARCHAR NOT NULL  -- [sha256] hash of that airfield's rows (airfield, runways, climate, wind rose) or that type's row
);
