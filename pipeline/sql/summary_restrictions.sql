-- summary_restrictions: per aircraft type and condition, how many airfield-months of a run
-- are restricted below MTOW (or impossible), at how many airfields, and the three airfields
-- with the most restricted months.
WITH per_airfield AS (
    SELECT aircraft_type_id, condition, airfield_id,
           count(*) FILTER (WHERE limiting_factor <> 'structural') AS restricted,
           count(*) FILTER (WHERE tow_limit_kg IS NULL) AS impossible,
           count(*) AS months
    FROM results_airfield
    WHERE run_id = $run_id AND basis = 'design_day'
    GROUP BY aircraft_type_id, condition, airfield_id
),
top3 AS (
    SELECT aircraft_type_id, condition, airfield_id, restricted
    FROM per_airfield
    WHERE restricted > 0
    QUALIFY row_number() OVER (PARTITION BY aircraft_type_id, condition
                               ORDER BY restricted DESC, airfield_id) <= 3
),
worst AS (
    SELECT aircraft_type_id, condition,
           string_agg(airfield_id || ' ' || restricted, ', ' ORDER BY restricted DESC, airfield_id) AS worst_airfields
    FROM top3
    GROUP BY aircraft_type_id, condition
)
SELECT p.aircraft_type_id,
       p.condition,
       CAST(sum(p.restricted) AS BIGINT) AS restricted_months,
       count(*) FILTER (WHERE p.restricted > 0) AS restricted_airfields,
       CAST(sum(p.impossible) AS BIGINT) AS no_takeoff_months,
       CAST(sum(p.months) AS BIGINT) AS airfield_months,
       any_value(w.worst_airfields) AS worst_airfields
FROM per_airfield AS p
LEFT JOIN worst AS w USING (aircraft_type_id, condition)
GROUP BY p.aircraft_type_id, p.condition
ORDER BY p.aircraft_type_id, p.condition;
