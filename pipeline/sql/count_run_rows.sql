-- count_run_rows: rows a run wrote to each result table.
SELECT
    (SELECT count(*) FROM results_direction WHERE run_id = $run_id) AS rows_direction,
    (SELECT count(*) FROM results_airfield WHERE run_id = $run_id) AS rows_airfield;
