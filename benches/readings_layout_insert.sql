-- For benches/readings_layout.sh: the parsed CSV rows (plain table `p.checks_csv`, attached by
-- the script) put into the shop's checks table in one transaction, as
-- benches/import_schema_insert.sql does; the id is given (the plain table's row number), as a
-- table without row ids needs.
BEGIN;
INSERT INTO checks (id, unit_id, taken_at, reservoir_temp_c, ambient_temp_c, pressure_bar, stroke_time_s,
                    cycle_time_s, oil_level, filter, hours, case_drain_lpm, taken_by, note)
SELECT c.rowid, u.id, c.taken_at, nullif(c.reservoir_temp_c, ''), nullif(c.ambient_temp_c, ''), nullif(c.pressure_bar, ''),
       nullif(c.stroke_time_s, ''), nullif(c.cycle_time_s, ''), nullif(c.oil_level, ''), nullif(c.filter, ''),
       nullif(c.hours, ''), nullif(c.case_drain_lpm, ''), c.taken_by, c.note
FROM p.checks_csv AS c JOIN units AS u ON u.tag = c.unit_tag
WHERE NOT EXISTS (SELECT 1 FROM checks AS k WHERE k.unit_id = u.id AND k.taken_at = c.taken_at)
ORDER BY c.rowid;
COMMIT;
