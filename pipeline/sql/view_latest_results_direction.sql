-- latest_results_direction: results_direction rows of the last complete run.
CREATE OR REPLACE VIEW latest_results_direction AS
SELECT r.*
FROM results_direction AS r
WHERE r.run_id = (SELECT run_id FROM latest_run);
