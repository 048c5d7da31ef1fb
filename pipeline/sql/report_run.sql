-- report_run: the run a report draws: the given complete run, or else the last complete
-- baseline run (latest_run); with its scenario and the options that chose its rows.
SELECT r.run_id, r.finished_at, r.input_dir, s.scenario, s.conditions, s.reliability_levels,
       s.reliability_conditions
FROM runs AS r
JOIN run_scenarios AS s USING (run_id)
WHERE r.status = 'complete'
  AND (($run_id IS NULL AND s.scenario = 'baseline') OR r.run_id = $run_id)
ORDER BY r.finished_at DESC, r.run_id DESC
LIMIT 1;
