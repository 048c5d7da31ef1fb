-- complete_runs: every complete run with its scenario, newest first (by finish time, then
-- run number), for choosing what to report or compare.
SELECT r.run_id, s.scenario, r.finished_at
FROM runs AS r
JOIN run_scenarios AS s USING (run_id)
WHERE r.status = 'complete'
ORDER BY r.finished_at DESC, r.run_id DESC;
