-- prune_run_sources: forget which rows the pruned runs (registered frame prune_ids) read.
DELETE FROM run_sources WHERE run_id IN (SELECT run_id FROM prune_ids);
