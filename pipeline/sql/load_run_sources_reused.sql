-- load_run_sources_reused: the airfield × aircraft type pairs a rerun reuses, each pointing at
-- the run whose stored rows hold them (Parquet file written by the reuse step).
INSERT INTO run_sources (run_id, airfield_id, aircraft_type_id, source_run_id)
SELECT CAST($run_id AS BIGINT), airfield_id, aircraft_type_id, source_run_id
FROM read_parquet($file);
