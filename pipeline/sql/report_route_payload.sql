-- report_route_payload: route payloads of one run, for the report charts and planning CSV.
SELECT *
FROM route_payload
WHERE run_id = $run_id
ORDER BY route_id, aircraft_type_id, month, condition, basis, reliability NULLS FIRST;
