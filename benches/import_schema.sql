-- The second import baseline, run by benches/run.sh: the same CSV put into the shop's own
-- `checks` table (its constraints, foreign key and both indexes) by the sqlite3 shell in the
-- fastest way it has: `.import` into a plain staging table, then one INSERT ... SELECT that maps
-- unit tags to ids and empty cells to NULL (and skips a row already stored, as the importer
-- does). Its time less the plain `.import` is what the schema itself costs per row. Run on a
-- copy of the register; the shell reads FILE from the .import line run.sh appends.
PRAGMA foreign_keys = ON;
CREATE TABLE checks_csv (
    unit_tag TEXT, taken_at TEXT, reservoir_temp_c REAL, ambient_temp_c REAL, pressure_bar REAL,
    stroke_time_s REAL, cycle_time_s REAL, oil_level TEXT, filter TEXT, hours REAL, case_drain_lpm REAL,
    taken_by TEXT, note TEXT
);
