-- prune_results_airfield: stored results_airfield rows no run reads any more: rows of runs
-- that no longer exist (pruned now or before) that no remaining run's run_sources points at.
-- Rows a remaining run reuses stay, under the number of the run that computed them.
DELETE FROM results_airfield_stored AS s
WHERE s.run_id NOT IN (SELECT run_id FROM runs)
  AND NOT EXISTS (
      SELECT 1 FROM run_sources AS m
      WHERE m.source_run_id = s.run_id
        AND m.airfield_id = s.airfield_id
        AND m.aircraft_type_id = s.aircraft_type_id);
