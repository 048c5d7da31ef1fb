-- load_results_airfield: bulk load the airfield-level part files of one run (the best
-- direction per airfield from best_direction.sql, and rows producers wrote directly; reused
-- rows are referenced through run_sources, not copied).
INSERT INTO results_airfield_stored BY NAME
SELECT * FROM read_parquet($files, union_by_name = true);
