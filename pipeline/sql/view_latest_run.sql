-- latest_run: the runs row of the last complete baseline run (no temperature offset; by finish
-- time, then run number), with its scenario. "Latest" never means a scenario run: those are in
-- latest_scenario_runs, scenario_results_airfield and scenario_route_payload.
CREATE OR REPLACE VIEW latest_run AS
SELECT r.run_id, s.scenario, r.* EXCLUDE (run_id)
FROM runs AS r
JOIN run_scenarios AS s USING (run_id)
WHERE r.status = 'complete' AND s.scenario = 'baseline'
ORDER BY r.finished_at DESC, r.run_id DESC
LIMIT 1;
