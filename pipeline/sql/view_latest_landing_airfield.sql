-- latest_landing_airfield: landing_airfield rows (the route destinations' landing limits) of the last complete baseline run (latest_run), with its scenario.
CREATE OR REPLACE VIEW latest_landing_airfield AS
SELECT r.run_id, (SELECT scenario FROM latest_run) AS scenario, r.* EXCLUDE (run_id)
FROM landing_airfield AS r
WHERE r.run_id = (SELECT run_id FROM latest_run);
