-- run_info: one run with its scenario and the options that chose its rows (run_scenarios).
SELECT r.run_id, r.status, s.scenario, s.temperature_offset_k, s.conditions,
       s.reliability_levels, s.reliability_conditions, r.started_at, r.finished_at,
       r.input_dir, r.airfields, r.rows_airfield, r.rows_route_payload
FROM runs AS r
JOIN run_scenarios AS s USING (run_id)
WHERE r.run_id = $run_id;
