-- latest_route_payload: route_payload rows of the last complete baseline run (latest_run), with its scenario.
CREATE OR REPLACE VIEW latest_route_payload AS
SELECT r.run_id, (SELECT scenario FROM latest_run) AS scenario, r.* EXCLUDE (run_id)
FROM route_payload AS r
WHERE r.run_id = (SELECT run_id FROM latest_run);
