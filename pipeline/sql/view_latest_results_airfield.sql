-- latest_results_airfield: results_airfield rows (best direction) of the last complete baseline run (latest_run), with its scenario.
CREATE OR REPLACE VIEW latest_results_airfield AS
SELECT r.run_id, (SELECT scenario FROM latest_run) AS scenario, r.* EXCLUDE (run_id)
FROM results_airfield AS r
WHERE r.run_id = (SELECT run_id FROM latest_run);
