-- reusable_run: the last complete run computed with the same code and result-changing
-- parameters (reuse_key), whose per-airfield and per-type hashes are stored, with the hash
-- over its whole input.
SELECT run_id, input_hash
FROM runs
WHERE status = 'complete' AND reuse_key = $reuse_key
  AND run_id IN (SELECT run_id FROM run_hashes)
ORDER BY finished_at DESC, run_id DESC
LIMIT 1;
