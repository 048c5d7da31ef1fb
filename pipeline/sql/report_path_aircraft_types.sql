-- report_path_aircraft_types: the aircraft_types rows (user units, class defaults filled) a run
-- used, for some types ($type_ids), to rebuild their cases for the flight-path charts.
SELECT a.* EXCLUDE (input_sha256)
FROM input_aircraft_types AS a
JOIN run_inputs AS i ON i.sha256 = a.input_sha256 AND i.table_name = 'aircraft_types'
WHERE i.run_id = $run_id AND list_contains($type_ids, a.aircraft_type_id);
