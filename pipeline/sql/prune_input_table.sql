-- prune_input_table: rows of one stored input table ({table}: input_<name>, a checked plain
-- identifier filled in by pipeline.prune) whose content no remaining run read.
DELETE FROM {table} AS t
WHERE NOT EXISTS (
    SELECT 1 FROM run_inputs AS r
    WHERE r.table_name = $name AND r.sha256 = t.input_sha256);
