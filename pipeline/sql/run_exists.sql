-- run_exists: one row when a run of that number is stored (any status).
SELECT run_id, status
FROM runs
WHERE run_id = $run_id;
