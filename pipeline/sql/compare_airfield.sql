-- compare_airfield: the takeoff-weight limits of two runs side by side, per airfield x type x
-- month x condition x level (best runway direction), where the limit moved by at least
-- $min_change_kg [kg], became possible or impossible, or the row is in one run only.
-- before_kg / after_kg / change_kg [kg], change_pct [%] of the earlier limit.
WITH b AS (SELECT * FROM results_airfield WHERE run_id = $before),
     a AS (SELECT * FROM results_airfield WHERE run_id = $after)
SELECT coalesce(a.airfield_id, b.airfield_id) AS airfield_id,
       coalesce(a.aircraft_type_id, b.aircraft_type_id) AS aircraft_type_id,
       coalesce(a.month, b.month) AS month,
       coalesce(a.condition, b.condition) AS condition,
       coalesce(a.basis, b.basis) AS basis,
       coalesce(a.reliability, b.reliability) AS reliability,
       b.tow_limit_kg AS before_kg,
       a.tow_limit_kg AS after_kg,
       a.tow_limit_kg - b.tow_limit_kg AS change_kg,
       100.0 * (a.tow_limit_kg - b.tow_limit_kg) / b.tow_limit_kg AS change_pct,
       CASE WHEN b.airfield_id IS NULL THEN 'added'
            WHEN a.airfield_id IS NULL THEN 'removed'
            WHEN b.tow_limit_kg IS NOT NULL AND a.tow_limit_kg IS NULL THEN 'no longer possible'
            WHEN b.tow_limit_kg IS NULL AND a.tow_limit_kg IS NOT NULL THEN 'now possible'
            WHEN a.tow_limit_kg < b.tow_limit_kg THEN 'lower'
            ELSE 'higher' END AS change,
       b.limiting_factor AS limiting_factor_before,
       a.limiting_factor AS limiting_factor_after,
       b.runway_id AS runway_before,
       a.runway_id AS runway_after
FROM b
FULL OUTER JOIN a
  ON a.airfield_id = b.airfield_id AND a.aircraft_type_id = b.aircraft_type_id
 AND a.month = b.month AND a.condition = b.condition AND a.basis = b.basis
 AND a.reliability IS NOT DISTINCT FROM b.reliability
WHERE b.airfield_id IS NULL OR a.airfield_id IS NULL
   OR (a.tow_limit_kg IS NULL) <> (b.tow_limit_kg IS NULL)
   OR abs(a.tow_limit_kg - b.tow_limit_kg) >= $min_change_kg
ORDER BY airfield_id, aircraft_type_id, month, condition, basis, reliability NULLS FIRST;
