-- For the record only: the aggregate of fleet_scan.sql over the rows as the streaming fleet
-- read takes them (`store::unit_batches`: a run of units at a time, each unit's rows in its
-- own time order through the (unit, time) keys), all units in one range here, in the sqlite3
-- shell: what the per-unit read costs SQLite itself before a row reaches the program. The
-- plans read each table through its (unit, time) key, in the order the fleet read asks for.
SELECT c.*, s.*
FROM (SELECT count(*), sum(id), sum(unit_id), max(taken_at), avg(reservoir_temp_c), avg(ambient_temp_c),
             avg(pressure_bar), avg(stroke_time_s), avg(cycle_time_s), max(hours), avg(case_drain_lpm),
             sum(length(oil_level) + length(filter) + length(taken_by) + length(note))
      FROM checks WHERE unit_id BETWEEN 0 AND 9223372036854775807 AND taken_at <= '9999-12-31T23:59:59Z') AS c,
     (SELECT count(*), sum(id), sum(unit_id), max(sampled_at), avg(kv40_cst), avg(kv100_cst), avg(visc_cst),
             avg(visc_temp_c), avg(count_4um_per_ml), avg(count_6um_per_ml), avg(count_14um_per_ml),
             avg(water_ppm), avg(acid_mgkoh_g), sum(length(iso4406) + length(lab_ref) + length(note))
      FROM samples WHERE unit_id BETWEEN 0 AND 9223372036854775807 AND sampled_at <= '9999-12-31T23:59:59Z') AS s;
