-- mark_interrupted: a run whose process has ended without finishing.
UPDATE runs
SET status = 'interrupted', finished_at = $finished_at,
    error = 'the run''s process ended before it finished (killed or crashed)'
WHERE run_id = $run_id AND status = 'running';
