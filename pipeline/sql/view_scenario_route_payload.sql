-- scenario_route_payload: for each scenario (baseline, temperature +2 K, ...; its offset in
-- temperature_offset_k [K]) the route_payload rows of its last complete run, side by side.
CREATE OR REPLACE VIEW scenario_route_payload AS
SELECT s.scenario, s.temperature_offset_k, r.*
FROM route_payload AS r
JOIN latest_scenario_runs AS s USING (run_id);
