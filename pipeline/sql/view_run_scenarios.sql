-- run_scenarios: the scenario of every run. scenario is 'baseline' (no temperature offset) or
-- 'temperature +2 K' (temperature_offset_k [K] added to every monthly temperature); the
-- scenario sets the numbers. conditions, reliability_levels [-] and reliability_conditions
-- (comma separated) choose which rows a run has; they do not change any number.
CREATE OR REPLACE VIEW run_scenarios AS
SELECT run_id,
       status,
       CASE WHEN coalesce(temperature_offset_k, 0) = 0 THEN 'baseline'
            ELSE printf('temperature %+g K', temperature_offset_k) END AS scenario,
       coalesce(temperature_offset_k, 0) AS temperature_offset_k,
       array_to_string(from_json(CAST(parameters AS JSON) -> '$.conditions', '["VARCHAR"]'), ',') AS conditions,
       array_to_string(from_json(CAST(parameters AS JSON) -> '$.reliability_levels', '["DOUBLE"]'), ',') AS reliability_levels,
       array_to_string(from_json(CAST(parameters AS JSON) -> '$.reliability_conditions', '["VARCHAR"]'), ',') AS reliability_conditions
FROM runs;
