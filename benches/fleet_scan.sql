-- The floor for `sumpbook status`: one full-scan aggregate query over every column of the two
-- tables the fleet status reads row by row (checks and samples), in the sqlite3 shell.
-- benches/run.sh times it against `sumpbook status` on the same file. Both tables are read
-- once in storage order; nothing is sorted or grouped, so no plan can be cheaper.
SELECT c.*, s.*
FROM (SELECT count(*), sum(id), sum(unit_id), max(taken_at), avg(reservoir_temp_c), avg(ambient_temp_c),
             avg(pressure_bar), avg(stroke_time_s), avg(cycle_time_s), max(hours), avg(case_drain_lpm),
             sum(length(oil_level) + length(filter) + length(taken_by) + length(note))
      FROM checks) AS c,
     (SELECT count(*), sum(id), sum(unit_id), max(sampled_at), avg(kv40_cst), avg(kv100_cst), avg(visc_cst),
             avg(visc_temp_c), avg(count_4um_per_ml), avg(count_6um_per_ml), avg(count_14um_per_ml),
             avg(water_ppm), avg(acid_mgkoh_g), sum(length(iso4406) + length(lab_ref) + length(note))
      FROM samples) AS s;
