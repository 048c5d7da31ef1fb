-- latest_scenario_runs: the runs row of the last complete run of each scenario (baseline,
-- temperature +2 K, ...), with the scenario's parts from run_scenarios.
CREATE OR REPLACE VIEW latest_scenario_runs AS
SELECT r.run_id, s.scenario, s.conditions, s.reliability_levels, s.reliability_conditions,
       r.* EXCLUDE (run_id)
FROM runs AS r
JOIN run_scenarios AS s USING (run_id)
WHERE r.status = 'complete'
QUALIFY row_number() OVER (PARTITION BY s.scenario ORDER BY r.finished_at DESC, r.run_id DESC) = 1;
