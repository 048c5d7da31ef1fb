-- latest_route_payload: route_payload rows of the last complete run.
CREATE OR REPLACE VIEW latest_route_payload AS
SELECT r.*
FROM route_payload AS r
WHERE r.run_id = (SELECT run_id FROM latest_run);
