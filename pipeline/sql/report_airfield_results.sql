-- report_airfield_results: best-direction takeoff limits of one run, for the report charts.
SELECT airfield_id, runway_id, aircraft_type_id, month, condition, basis, reliability,
       tow_limit_kg, limiting_factor
FROM results_airfield
WHERE run_id = $run_id
ORDER BY airfield_id, aircraft_type_id, month, condition, basis, reliability NULLS FIRST;
