-- running_runs: runs still marked running (to detect ones whose process has gone).
SELECT run_id, host, pid FROM runs WHERE status = 'running';
