-- runs: one row per run: status, times, parameters, input hashes, code version, row counts.
-- Generated from schemas/results.py by `python -m fieldlimits.pipeline.ddl --write`; edit that file, not this one.
CREATE TABLE IF NOT EXISTS runs (
    run_id                    BIGINT NOT NULL,  -- [-] run number, increasing
    status                    VARCHAR NOT NULL,  -- [text] running, complete, failed or interrupted
    started_at                TIMESTAMP NOT NULL,  -- [UTC] when the run was registered
    finished_at               TIMESTAMP,  -- [UTC] when the run completed or failed
    input_dir                 VARCHAR,  -- [text] input folder read (absolute path)
    parameters                VARCHAR,  -- [JSON] all run parameters as a JSON object
    temperature_offset_k      DOUBLE,  -- [K] climate scenario: uniform offset added to every monthly temperature
    input_hash                VARCHAR,  -- [sha256] hash over all input tables used
    input_hashes              VARCHAR,  -- [JSON] per table SHA-256 of the input files
    code_version              VARCHAR,  -- [text] package version + hash of the source code
    airfields                 BIGINT,  -- [count] airfields computed
    cases                     BIGINT,  -- [count] design-day cases computed (directions × months × types × conditions)
    chunks                    BIGINT,  -- [count] chunk tasks the cases were split into
    reused_cases              BIGINT,  -- [count] design-day cases reused from an earlier run instead of recomputed
    reused_from_run_id        BIGINT,  -- [-] the run whose results were reused (NULL: all computed)
    reuse_key                 VARCHAR,  -- [sha256] code version + result-changing parameters; runs with equal keys can share results
    rows_direction            BIGINT,  -- [count] rows written to results_direction
    rows_airfield             BIGINT,  -- [count] rows written to results_airfield
    rows_route_payload        BIGINT,  -- [count] rows written to route_payload
    error                     VARCHAR,  -- [text] why the run failed (NULL when complete)
    host                      VARCHAR,  -- [text] machine that ran it
    pid                       BIGINT,  -- [-] process id of the run (detects interrupted runs)
    route_results_from_run_id BIGINT  -- [-] run whose stored route payloads and destination landing limits this run reads, its whole input being unchanged (NULL: its own)
);
