-- mark_interrupted: a run whose process has ended without finishing ($error says how we know).
UPDATE runs
SET status = 'interrupted', finished_at = $finished_at, error = $error
WHERE run_id = $run_id AND status = 'running';
