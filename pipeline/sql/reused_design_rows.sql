-- reused_design_rows: design-day results_direction rows a run reads from earlier runs' stored
-- rows; the load checks them against the reused cases it planned.
SELECT count(*) AS rows
FROM run_sources AS m
JOIN results_direction_stored AS s
  ON s.run_id = m.source_run_id
 AND s.airfield_id = m.airfield_id
 AND s.aircraft_type_id = m.aircraft_type_id
WHERE m.run_id = $run_id AND m.source_run_id <> $run_id AND s.basis = 'design_day';
