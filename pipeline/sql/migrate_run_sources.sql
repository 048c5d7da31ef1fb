-- migrate_run_sources: a file written before reruns stored by reference holds every run's rows
-- in full; each of its runs reads its own stored rows.
INSERT INTO run_sources (run_id, airfield_id, aircraft_type_id, source_run_id)
SELECT DISTINCT run_id, airfield_id, aircraft_type_id, run_id
FROM (
    SELECT run_id, airfield_id, aircraft_type_id FROM results_direction_stored
    UNION ALL
    SELECT run_id, airfield_id, aircraft_type_id FROM results_airfield_stored
);
