-- prune_run_inputs: which input tables the pruned runs (registered frame prune_ids) read.
DELETE FROM run_inputs WHERE run_id IN (SELECT run_id FROM prune_ids);
