-- run_ids: the numbers of all stored runs, in order.
SELECT run_id
FROM runs
ORDER BY run_id;
