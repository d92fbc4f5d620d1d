-- For the record only: the aggregate of fleet_scan.sql over the rows as the fleet status reads
-- them (every check and sample up to a time, in time order through the time indexes, as
-- `store::history::fleet_*_sql` do), in the sqlite3 shell: what the index-order read costs
-- SQLite itself before a row reaches the program.
SELECT c.*, s.*
FROM (SELECT count(*), sum(id), sum(unit_id), max(taken_at), avg(reservoir_temp_c), avg(ambient_temp_c),
             avg(pressure_bar), avg(stroke_time_s), avg(cycle_time_s), max(hours), avg(case_drain_lpm),
             sum(length(oil_level) + length(filter) + length(taken_by) + length(note))
      FROM (SELECT * FROM checks WHERE taken_at <= '9999-12-31T23:59:59Z' ORDER BY taken_at, unit_id)) AS c,
     (SELECT count(*), sum(id), sum(unit_id), max(sampled_at), avg(kv40_cst), avg(kv100_cst), avg(visc_cst),
             avg(visc_temp_c), avg(count_4um_per_ml), avg(count_6um_per_ml), avg(count_14um_per_ml),
             avg(water_ppm), avg(acid_mgkoh_g), sum(length(iso4406) + length(lab_ref) + length(note))
      FROM (SELECT * FROM samples WHERE sampled_at <= '9999-12-31T23:59:59Z' ORDER BY sampled_at, unit_id)) AS s;
