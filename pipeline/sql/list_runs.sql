-- list_runs: the most recent runs, newest first ($limit NULL: all), for `fieldlimits runs`.
-- Whether a 'running' run is live or dead is not in the file: the command adds it from the
-- process table and the heartbeat files (pipeline.store.run_liveness).
SELECT run_id,
       status,
       started_at,
       finished_at,
       CASE WHEN finished_at IS NOT NULL
            THEN date_diff('millisecond', started_at, finished_at) / 1000.0
       END AS duration_s,  -- [s] registration to completion or failure
       temperature_offset_k,
       parameters,
       airfields,
       cases,
       reused_cases,
       reused_from_run_id,
       rows_direction,
       rows_airfield,
       rows_route_payload,
       host,
       pid,
       error
FROM runs
ORDER BY run_id DESC
LIMIT $limit;
