-- route_results_source: the run whose stored route payloads and landing limits a run reads
-- (itself, or the run it points at).
SELECT coalesce(route_results_from_run_id, run_id) AS source_run_id FROM runs WHERE run_id = $run_id;
