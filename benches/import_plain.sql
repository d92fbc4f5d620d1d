-- The floor for `sumpbook import checks`: a table with the columns of the checks CSV, no
-- constraints, no index. benches/run.sh runs the sqlite3 shell's `.import` of the same CSV
-- into it.
CREATE TABLE checks_csv (
    unit_tag TEXT, taken_at TEXT, reservoir_temp_c REAL, ambient_temp_c REAL, pressure_bar REAL,
    stroke_time_s REAL, cycle_time_s REAL, oil_level TEXT, filter TEXT, hours REAL, case_drain_lpm REAL,
    taken_by TEXT, note TEXT
);
