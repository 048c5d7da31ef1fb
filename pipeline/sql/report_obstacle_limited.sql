-- report_obstacle_limited: best-direction rows of one run (design day, dry runway) whose limit an
-- obstacle sets, with the run's climate scenario offset [K]; the report draws their flight paths.
SELECT r.airfield_id, r.runway_id, r.aircraft_type_id, r.month, r.tow_limit_kg, u.temperature_offset_k
FROM results_airfield AS r
JOIN runs AS u ON u.run_id = r.run_id
WHERE r.run_id = $run_id AND r.basis = 'design_day' AND r.condition = 'dry'
  AND r.limiting_factor = 'obstacle_clearance'
ORDER BY r.airfield_id, r.runway_id, r.aircraft_type_id, r.month;
