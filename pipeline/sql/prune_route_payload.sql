-- prune_route_payload: stored route payloads no run reads any more: rows of runs that no
-- longer exist (pruned now or before) that no remaining run points at.
DELETE FROM route_payload_stored AS s
WHERE s.run_id NOT IN (SELECT run_id FROM runs)
  AND s.run_id NOT IN (SELECT route_results_from_run_id FROM runs
                       WHERE route_results_from_run_id IS NOT NULL);
