-- load_results_direction: bulk load the chunk part files of one run.
INSERT INTO results_direction BY NAME
SELECT * FROM read_parquet($files, union_by_name = true);
