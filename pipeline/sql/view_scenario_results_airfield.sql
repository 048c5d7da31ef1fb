-- scenario_results_airfield: for each climate scenario (temperature_offset_k [K]) the
-- results_airfield rows of its last complete run, side by side for comparison.
CREATE OR REPLACE VIEW scenario_results_airfield AS
WITH last_per_scenario AS (
    SELECT temperature_offset_k, run_id
    FROM runs
    WHERE status = 'complete'
    QUALIFY row_number() OVER (
        PARTITION BY temperature_offset_k ORDER BY finished_at DESC, run_id DESC) = 1
)
SELECT s.temperature_offset_k, r.*
FROM results_airfield AS r
JOIN last_per_scenario AS s USING (run_id);
