-- route_payload: every run's route payloads. Each row is stored once, in route_payload_stored
-- under the run that computed it; a run whose whole input was unchanged stores none and reads
-- those of runs.route_results_from_run_id. run_id is the reading run.
CREATE OR REPLACE VIEW route_payload AS
SELECT s.* REPLACE (r.run_id AS run_id)
FROM runs AS r
JOIN route_payload_stored AS s
  ON s.run_id = coalesce(r.route_results_from_run_id, r.run_id);
