-- report_aircraft_types: names and structural masses [kg] of the aircraft types a run used.
SELECT a.aircraft_type_id, a.name, a.mtow_kg, a.max_payload_kg
FROM input_aircraft_types AS a
JOIN run_inputs AS i ON i.sha256 = a.input_sha256 AND i.table_name = 'aircraft_types'
WHERE i.run_id = $run_id
ORDER BY a.aircraft_type_id;
