-- report_airfields: names and elevations [m] of the airfields a run used.
SELECT a.airfield_id, a.name, a.elevation_m
FROM input_airfields AS a
JOIN run_inputs AS i ON i.sha256 = a.input_sha256 AND i.table_name = 'airfields'
WHERE i.run_id = $run_id
ORDER BY a.airfield_id;
