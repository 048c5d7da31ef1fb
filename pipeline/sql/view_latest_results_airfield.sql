-- latest_results_airfield: results_airfield rows (best direction) of the last complete run.
CREATE OR REPLACE VIEW latest_results_airfield AS
SELECT r.*
FROM results_airfield AS r
WHERE r.run_id = (SELECT run_id FROM latest_run);
