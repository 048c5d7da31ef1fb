-- reuse_sources: for the airfield × type pairs in the registered frame reuse_pairs, the run
-- whose stored rows the previous run read them from: a rerun points at the same rows.
SELECT m.airfield_id, m.aircraft_type_id, m.source_run_id
FROM run_sources AS m
JOIN reuse_pairs AS p
  ON p.airfield_id = m.airfield_id AND p.aircraft_type_id = m.aircraft_type_id
WHERE m.run_id = $prev_run_id;
