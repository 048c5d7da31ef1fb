-- prune_runs_rows: the runs rows of the pruned runs (registered frame prune_ids), last.
DELETE FROM runs WHERE run_id IN (SELECT run_id FROM prune_ids);
