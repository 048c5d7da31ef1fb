-- reuse_results_airfield: a previous run's per-airfield rows for the airfield × type pairs in
-- the registered frame reuse_pairs, relabelled with the new run_id.
SELECT * REPLACE (CAST($new_run_id AS BIGINT) AS run_id)
FROM results_airfield
WHERE run_id = $prev_run_id
  AND (airfield_id, aircraft_type_id) IN (SELECT (airfield_id, aircraft_type_id) FROM reuse_pairs);
