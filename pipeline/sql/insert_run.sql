-- insert_run: register a run as running before its cases are computed.
INSERT INTO runs (run_id, status, started_at, input_dir, parameters, temperature_offset_k,
                  input_hash, input_hashes, code_version, airfields, cases, chunks,
                  reused_cases, reused_from_run_id, reuse_key, host, pid)
VALUES ($run_id, 'running', $started_at, $input_dir, $parameters, $temperature_offset_k,
        $input_hash, $input_hashes, $code_version, $airfields, $cases, $chunks,
        $reused_cases, $reused_from_run_id, $reuse_key, $host, $pid);
