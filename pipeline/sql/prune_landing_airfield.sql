-- prune_landing_airfield: stored destination landing limits (best direction per airfield) no
-- run reads any more: rows of runs that no longer exist (pruned now or before) that no
-- remaining run points at.
DELETE FROM landing_airfield_stored AS s
WHERE s.run_id NOT IN (SELECT run_id FROM runs)
  AND s.run_id NOT IN (SELECT route_results_from_run_id FROM runs
                       WHERE route_results_from_run_id IS NOT NULL);
