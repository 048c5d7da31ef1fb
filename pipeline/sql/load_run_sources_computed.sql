-- load_run_sources_computed: each airfield × aircraft type a run computed reads its own stored
-- rows (inside the load transaction, after those rows are inserted).
INSERT INTO run_sources (run_id, airfield_id, aircraft_type_id, source_run_id)
SELECT DISTINCT run_id, airfield_id, aircraft_type_id, run_id
FROM (
    SELECT run_id, airfield_id, aircraft_type_id FROM results_direction_stored WHERE run_id = $run_id
    UNION ALL
    SELECT run_id, airfield_id, aircraft_type_id FROM results_airfield_stored WHERE run_id = $run_id
);
