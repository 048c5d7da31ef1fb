-- summary_restrictions: per aircraft type and condition, how many airfield-months of a run
-- are restricted below MTOW (or impossible), and at how many airfields.
SELECT aircraft_type_id,
       condition,
       count(*) FILTER (WHERE limiting_factor <> 'structural') AS restricted_months,
       count(DISTINCT airfield_id) FILTER (WHERE limiting_factor <> 'structural') AS restricted_airfields,
       count(*) FILTER (WHERE tow_limit_kg IS NULL) AS no_takeoff_months,
       count(*) AS airfield_months
FROM results_airfield
WHERE run_id = $run_id AND basis = 'design_day'
GROUP BY aircraft_type_id, condition
ORDER BY aircraft_type_id, condition;
