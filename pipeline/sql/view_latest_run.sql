-- latest_run: the runs row of the last run that completed (by finish time, then run number).
CREATE OR REPLACE VIEW latest_run AS
SELECT *
FROM runs
WHERE status = 'complete'
ORDER BY finished_at DESC, run_id DESC
LIMIT 1;
