-- set_route_results_source: a run whose whole input is unchanged reads the stored route
-- payloads and destination landing limits of an earlier run (inside the load transaction).
UPDATE runs SET route_results_from_run_id = $source_run_id WHERE run_id = $run_id;
