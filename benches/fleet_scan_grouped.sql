-- For comparison only: the same columns aggregated per unit (as the fleet status groups them),
-- one full scan of each table sorted into groups, in the sqlite3 shell.
SELECT u.tag, c.*, s.*
FROM units u
LEFT JOIN (SELECT unit_id, count(*), max(taken_at), avg(reservoir_temp_c), avg(ambient_temp_c), avg(pressure_bar),
                  avg(stroke_time_s), avg(cycle_time_s), max(hours), avg(case_drain_lpm),
                  sum(length(oil_level) + length(filter) + length(taken_by) + length(note))
           FROM checks NOT INDEXED GROUP BY unit_id) AS c ON c.unit_id = u.id
LEFT JOIN (SELECT unit_id, count(*), max(sampled_at), avg(kv40_cst), avg(kv100_cst), avg(visc_cst), avg(visc_temp_c),
                  avg(count_4um_per_ml), avg(count_6um_per_ml), avg(count_14um_per_ml), avg(water_ppm),
                  avg(acid_mgkoh_g), sum(length(iso4406) + length(lab_ref) + length(note))
           FROM samples NOT INDEXED GROUP BY unit_id) AS s ON s.unit_id = u.id
ORDER BY u.route_order;
