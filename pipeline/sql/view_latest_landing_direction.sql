-- latest_landing_direction: landing_direction rows (the route destinations' landing limits) of the last complete baseline run (latest_run), with its scenario.
CREATE OR REPLACE VIEW latest_landing_direction AS
SELECT r.run_id, (SELECT scenario FROM latest_run) AS scenario, r.* EXCLUDE (run_id)
FROM landing_direction AS r
WHERE r.run_id = (SELECT run_id FROM latest_run);
