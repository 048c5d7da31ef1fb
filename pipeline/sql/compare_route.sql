-- compare_route: the payload of two runs side by side, per route x type x month x origin
-- condition x level, where the payload moved by at least $min_change_kg [kg], the route became
-- possible or impossible, or the row is in one run only; with what limited the payload and the
-- origin's takeoff-weight limit before and after (the why).
WITH b AS (SELECT * FROM route_payload WHERE run_id = $before),
     a AS (SELECT * FROM route_payload WHERE run_id = $after)
SELECT coalesce(a.route_id, b.route_id) AS route_id,
       coalesce(a.origin_id, b.origin_id) AS origin_id,
       coalesce(a.destination_id, b.destination_id) AS destination_id,
       coalesce(a.aircraft_type_id, b.aircraft_type_id) AS aircraft_type_id,
       coalesce(a.month, b.month) AS month,
       coalesce(a.condition, b.condition) AS condition,
       coalesce(a.basis, b.basis) AS basis,
       coalesce(a.reliability, b.reliability) AS reliability,
       b.payload_kg AS before_kg,
       a.payload_kg AS after_kg,
       a.payload_kg - b.payload_kg AS change_kg,
       100.0 * (a.payload_kg - b.payload_kg) / nullif(b.payload_kg, 0) AS change_pct,
       CASE WHEN b.route_id IS NULL THEN 'added'
            WHEN a.route_id IS NULL THEN 'removed'
            WHEN b.possible AND NOT a.possible THEN 'no longer possible'
            WHEN a.possible AND NOT b.possible THEN 'now possible'
            WHEN a.payload_kg < b.payload_kg THEN 'lower'
            ELSE 'higher' END AS change,
       b.payload_limiting_factor AS limiting_factor_before,
       a.payload_limiting_factor AS limiting_factor_after,
       b.origin_limiting_factor AS origin_limiting_factor_before,
       a.origin_limiting_factor AS origin_limiting_factor_after,
       b.origin_tow_limit_kg AS origin_tow_limit_before_kg,
       a.origin_tow_limit_kg AS origin_tow_limit_after_kg
FROM b
FULL OUTER JOIN a
  ON a.route_id = b.route_id AND a.aircraft_type_id = b.aircraft_type_id
 AND a.month = b.month AND a.condition = b.condition AND a.basis = b.basis
 AND a.reliability IS NOT DISTINCT FROM b.reliability
WHERE b.route_id IS NULL OR a.route_id IS NULL
   OR a.possible <> b.possible
   OR abs(a.payload_kg - b.payload_kg) >= $min_change_kg
ORDER BY route_id, aircraft_type_id, month, condition, basis, reliability NULLS FIRST;
