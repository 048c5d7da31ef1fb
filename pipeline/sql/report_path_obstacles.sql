-- report_path_obstacles: the obstacles rows (user units) a run used, for some airfields ($airfield_ids),
-- to rebuild their cases for the flight-path charts.
SELECT a.* EXCLUDE (input_sha256)
FROM input_obstacles AS a
JOIN run_inputs AS i ON i.sha256 = a.input_sha256 AND i.table_name = 'obstacles'
WHERE i.run_id = $run_id AND list_contains($airfield_ids, a.airfield_id);
