-- count_route_payload: route payload rows a run reads.
SELECT count(*) AS rows FROM route_payload WHERE run_id = $run_id;
