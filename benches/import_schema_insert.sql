-- Second half of the schema baseline (see import_schema.sql).
BEGIN;
INSERT INTO checks (unit_id, taken_at, reservoir_temp_c, ambient_temp_c, pressure_bar, stroke_time_s,
                    cycle_time_s, oil_level, filter, hours, case_drain_lpm, taken_by, note)
SELECT u.id, c.taken_at, nullif(c.reservoir_temp_c, ''), nullif(c.ambient_temp_c, ''), nullif(c.pressure_bar, ''),
       nullif(c.stroke_time_s, ''), nullif(c.cycle_time_s, ''), nullif(c.oil_level, ''), nullif(c.filter, ''),
       nullif(c.hours, ''), nullif(c.case_drain_lpm, ''), c.taken_by, c.note
FROM checks_csv AS c JOIN units AS u ON u.tag = c.unit_tag
WHERE true
ON CONFLICT (unit_id, taken_at) DO NOTHING;
DROP TABLE checks_csv;
COMMIT;
