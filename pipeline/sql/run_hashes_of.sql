-- run_hashes_of: the airfield and aircraft-type hashes of one run.
SELECT kind, key, sha256 FROM run_hashes WHERE run_id = $run_id;
