-- complete_run: mark a run complete with its row counts (inside the load transaction).
UPDATE runs
SET status = 'complete',
    finished_at = $finished_at,
    rows_direction = $rows_direction,
    rows_airfield = $rows_airfield,
    rows_route_payload = $rows_route_payload,
    error = NULL
WHERE run_id = $run_id;
