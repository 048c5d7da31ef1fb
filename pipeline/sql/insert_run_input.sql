-- insert_run_input: one input table a run used.
INSERT INTO run_inputs (run_id, table_name, file_name, row_count, sha256)
VALUES ($run_id, $table_name, $file_name, $row_count, $sha256);
