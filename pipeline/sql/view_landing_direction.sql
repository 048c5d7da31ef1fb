-- landing_direction: every run's destination landing limits per runway direction. Each row is
-- stored once, in landing_direction_stored under the run that computed it; a run whose whole
-- input was unchanged stores none and reads those of runs.route_results_from_run_id. run_id is
-- the reading run.
CREATE OR REPLACE VIEW landing_direction AS
SELECT s.* REPLACE (r.run_id AS run_id)
FROM runs AS r
JOIN landing_direction_stored AS s
  ON s.run_id = coalesce(r.route_results_from_run_id, r.run_id);
