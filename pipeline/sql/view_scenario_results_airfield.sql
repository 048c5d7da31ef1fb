-- scenario_results_airfield: for each scenario (baseline, temperature +2 K, ...; its offset in
-- temperature_offset_k [K]) the results_airfield rows of its last complete run, side by side
-- for comparison.
CREATE OR REPLACE VIEW scenario_results_airfield AS
SELECT s.scenario, s.temperature_offset_k, r.*
FROM results_airfield AS r
JOIN latest_scenario_runs AS s USING (run_id);
