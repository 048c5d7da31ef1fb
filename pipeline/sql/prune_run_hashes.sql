-- prune_run_hashes: the airfield and aircraft-type hashes of the pruned runs (frame prune_ids).
DELETE FROM run_hashes WHERE run_id IN (SELECT run_id FROM prune_ids);
