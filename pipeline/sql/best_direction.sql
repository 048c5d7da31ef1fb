-- best_direction: per airfield × month × aircraft type × condition × basis × reliability,
-- the runway direction with the highest takeoff-weight limit (directions with no takeoff
-- possible last, ties to the first runway_id). Run on one chunk's direction rows (the Arrow
-- table registered as direction_rows; a chunk holds whole airfields); bases that a row
-- producer supplied at airfield level are skipped.
SELECT *
FROM direction_rows
WHERE NOT list_contains($airfield_level_bases, basis)
QUALIFY row_number() OVER (
    PARTITION BY airfield_id, aircraft_type_id, month, condition, basis, reliability
    ORDER BY tow_limit_kg DESC NULLS LAST, runway_id) = 1
ORDER BY airfield_id, aircraft_type_id, month, condition, basis, reliability;
