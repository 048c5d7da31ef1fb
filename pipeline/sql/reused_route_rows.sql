-- reused_route_rows: a previous run's results_airfield rows for the reused airfield × type
-- pairs that routes depart from (registered frame route_pairs), relabelled with the new
-- run_id: the route step reads them; they are not stored again.
SELECT r.* REPLACE (CAST($new_run_id AS BIGINT) AS run_id)
FROM results_airfield AS r
JOIN route_pairs AS p
  ON p.airfield_id = r.airfield_id AND p.aircraft_type_id = r.aircraft_type_id
WHERE r.run_id = $prev_run_id;
