-- fail_run: record why a run failed (its own short transaction, after the load rolled back).
UPDATE runs
SET status = 'failed', finished_at = $finished_at, error = $error
WHERE run_id = $run_id AND status = 'running';
