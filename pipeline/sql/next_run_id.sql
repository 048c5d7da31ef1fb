-- next_run_id: the number for a new run.
SELECT coalesce(max(run_id), 0) + 1 AS run_id FROM runs;
