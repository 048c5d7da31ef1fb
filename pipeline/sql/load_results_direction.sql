-- load_results_direction: bulk load the chunk part files of one run (the rows it computed;
-- reused rows are referenced through run_sources, not copied).
INSERT INTO results_direction_stored BY NAME
SELECT * FROM read_parquet($files, union_by_name = true);
