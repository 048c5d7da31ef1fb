-- results_direction: every run's full results_direction rows. Each row is stored once, in
-- results_direction_stored under the run that computed it; run_sources says for each run,
-- airfield and aircraft type which run's stored rows hold the results (the run itself, or the
-- earlier run an unchanged rerun reuses). run_id is the reading run.
CREATE OR REPLACE VIEW results_direction AS
SELECT s.* REPLACE (m.run_id AS run_id)
FROM run_sources AS m
JOIN results_direction_stored AS s
  ON s.run_id = m.source_run_id
 AND s.airfield_id = m.airfield_id
 AND s.aircraft_type_id = m.aircraft_type_id;
