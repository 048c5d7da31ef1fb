-- prune_runs: every run with what `fieldlimits prune` decides on, oldest first.
SELECT run_id, status, started_at, finished_at,
       coalesce(temperature_offset_k, 0) AS temperature_offset_k,
       reused_from_run_id, rows_direction, rows_airfield, rows_route_payload
FROM runs
ORDER BY run_id;
