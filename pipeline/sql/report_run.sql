-- report_run: the run a report draws: the given complete run, or the last complete run.
SELECT run_id, finished_at, input_dir
FROM runs
WHERE status = 'complete'
  AND ($run_id IS NULL OR run_id = $run_id)
ORDER BY finished_at DESC, run_id DESC
LIMIT 1;
