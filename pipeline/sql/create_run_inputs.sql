-- run_inputs: one row per run and input table: file, rows, SHA-256.
-- Generated from schemas/results.py by `python -m fieldlimits.pipeline.ddl --write`; edit that file, not this one.
CREATE TABLE IF NOT EXISTS run_inputs (
    run_id     BIGINT NOT NULL,  -- [-] run number
    table_name VARCHAR NOT NULL,  -- [text] input table (airfields, runways, ...)
    file_name  VARCHAR,  -- [text] file read for it (absolute path)
    row_count  BIGINT,  -- [count] rows in the table
    sha256     VARCHAR  -- [sha256] hash of the table's content
);
