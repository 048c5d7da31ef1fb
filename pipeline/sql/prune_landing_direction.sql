-- prune_landing_direction: stored destination landing limits per runway direction no run reads
-- any more: rows of runs that no longer exist (pruned now or before) that no remaining run
-- points at.
DELETE FROM landing_direction_stored AS s
WHERE s.run_id NOT IN (SELECT run_id FROM runs)
  AND s.run_id NOT IN (SELECT route_results_from_run_id FROM runs
                       WHERE route_results_from_run_id IS NOT NULL);
