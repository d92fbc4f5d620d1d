-- sumpbook schema, version 3: who confirmed a questioned reading, and when.
--
-- A reading that the screening questions (a slipped decimal point, a pressure above the relief
-- setting, ambient above oil) is kept but held out of baselines and drift detectors until a
-- person confirms it: at entry, when they are asked, or later from the unit page or the
-- command line. The confirmation is stored on the reading itself; both columns are NULL for a
-- reading nobody has confirmed. Confirming or lifting a confirmation is an UPDATE of the row,
-- so the edit-history triggers are made again with the two columns in their JSON: every
-- confirmation and every lifting is in edit_log with who and why.

ALTER TABLE checks ADD COLUMN confirmed_by TEXT
    CONSTRAINT "confirmed_by: must not be empty" CHECK (length(trim(confirmed_by)) > 0);
ALTER TABLE checks ADD COLUMN confirmed_at TEXT
    CONSTRAINT "confirmed_at: must be UTC 'YYYY-MM-DDTHH:MM:SSZ'"
    CHECK (strftime('%Y-%m-%dT%H:%M:%SZ', unixepoch(confirmed_at), 'unixepoch') IS confirmed_at)
    CONSTRAINT "confirmed_at: who confirmed and when go together"
    CHECK ((confirmed_by IS NULL) = (confirmed_at IS NULL));

ALTER TABLE samples ADD COLUMN confirmed_by TEXT
    CONSTRAINT "confirmed_by: must not be empty" CHECK (length(trim(confirmed_by)) > 0);
ALTER TABLE samples ADD COLUMN confirmed_at TEXT
    CONSTRAINT "confirmed_at: must be UTC 'YYYY-MM-DDTHH:MM:SSZ'"
    CHECK (strftime('%Y-%m-%dT%H:%M:%SZ', unixepoch(confirmed_at), 'unixepoch') IS confirmed_at)
    CONSTRAINT "confirmed_at: who confirmed and when go together"
    CHECK ((confirmed_by IS NULL) = (confirmed_at IS NULL));

DROP TRIGGER checks_log_update;
DROP TRIGGER checks_log_delete;
DROP TRIGGER samples_log_update;
DROP TRIGGER samples_log_delete;

CREATE TRIGGER checks_log_update AFTER UPDATE ON checks
WHEN json_array(OLD.id, OLD.unit_id, OLD.taken_at, OLD.reservoir_temp_c, OLD.ambient_temp_c, OLD.pressure_bar, OLD.stroke_time_s,
                OLD.cycle_time_s, OLD.oil_level, OLD.filter, OLD.hours, OLD.case_drain_lpm, OLD.taken_by, OLD.note,
                OLD.confirmed_by, OLD.confirmed_at)
  IS NOT json_array(NEW.id, NEW.unit_id, NEW.taken_at, NEW.reservoir_temp_c, NEW.ambient_temp_c, NEW.pressure_bar, NEW.stroke_time_s,
                NEW.cycle_time_s, NEW.oil_level, NEW.filter, NEW.hours, NEW.case_drain_lpm, NEW.taken_by, NEW.note,
                NEW.confirmed_by, NEW.confirmed_at)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'checks', OLD.id, 'update',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'taken_at', OLD.taken_at, 'reservoir_temp_c', OLD.reservoir_temp_c,
            'ambient_temp_c', OLD.ambient_temp_c, 'pressure_bar', OLD.pressure_bar, 'stroke_time_s', OLD.stroke_time_s,
            'cycle_time_s', OLD.cycle_time_s, 'oil_level', OLD.oil_level, 'filter', OLD.filter, 'hours', OLD.hours,
            'case_drain_lpm', OLD.case_drain_lpm, 'taken_by', OLD.taken_by, 'note', OLD.note,
            'confirmed_by', OLD.confirmed_by, 'confirmed_at', OLD.confirmed_at),
        json_object('id', NEW.id, 'unit_id', NEW.unit_id, 'taken_at', NEW.taken_at, 'reservoir_temp_c', NEW.reservoir_temp_c,
            'ambient_temp_c', NEW.ambient_temp_c, 'pressure_bar', NEW.pressure_bar, 'stroke_time_s', NEW.stroke_time_s,
            'cycle_time_s', NEW.cycle_time_s, 'oil_level', NEW.oil_level, 'filter', NEW.filter, 'hours', NEW.hours,
            'case_drain_lpm', NEW.case_drain_lpm, 'taken_by', NEW.taken_by, 'note', NEW.note,
            'confirmed_by', NEW.confirmed_by, 'confirmed_at', NEW.confirmed_at),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER checks_log_delete AFTER DELETE ON checks
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'checks', OLD.id, 'delete',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'taken_at', OLD.taken_at, 'reservoir_temp_c', OLD.reservoir_temp_c,
            'ambient_temp_c', OLD.ambient_temp_c, 'pressure_bar', OLD.pressure_bar, 'stroke_time_s', OLD.stroke_time_s,
            'cycle_time_s', OLD.cycle_time_s, 'oil_level', OLD.oil_level, 'filter', OLD.filter, 'hours', OLD.hours,
            'case_drain_lpm', OLD.case_drain_lpm, 'taken_by', OLD.taken_by, 'note', OLD.note,
            'confirmed_by', OLD.confirmed_by, 'confirmed_at', OLD.confirmed_at),
        NULL,
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER samples_log_update AFTER UPDATE ON samples
WHEN json_array(OLD.id, OLD.unit_id, OLD.sampled_at, OLD.kv40_cst, OLD.kv100_cst, OLD.visc_cst, OLD.visc_temp_c, OLD.count_4um_per_ml,
                OLD.count_6um_per_ml, OLD.count_14um_per_ml, OLD.iso4406, OLD.water_ppm, OLD.acid_mgkoh_g, OLD.lab_ref, OLD.note,
                OLD.confirmed_by, OLD.confirmed_at)
  IS NOT json_array(NEW.id, NEW.unit_id, NEW.sampled_at, NEW.kv40_cst, NEW.kv100_cst, NEW.visc_cst, NEW.visc_temp_c, NEW.count_4um_per_ml,
                NEW.count_6um_per_ml, NEW.count_14um_per_ml, NEW.iso4406, NEW.water_ppm, NEW.acid_mgkoh_g, NEW.lab_ref, NEW.note,
                NEW.confirmed_by, NEW.confirmed_at)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'samples', OLD.id, 'update',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'sampled_at', OLD.sampled_at, 'kv40_cst', OLD.kv40_cst, 'kv100_cst', OLD.kv100_cst,
            'visc_cst', OLD.visc_cst, 'visc_temp_c', OLD.visc_temp_c, 'count_4um_per_ml', OLD.count_4um_per_ml,
            'count_6um_per_ml', OLD.count_6um_per_ml, 'count_14um_per_ml', OLD.count_14um_per_ml, 'iso4406', OLD.iso4406,
            'water_ppm', OLD.water_ppm, 'acid_mgkoh_g', OLD.acid_mgkoh_g, 'lab_ref', OLD.lab_ref, 'note', OLD.note,
            'confirmed_by', OLD.confirmed_by, 'confirmed_at', OLD.confirmed_at),
        json_object('id', NEW.id, 'unit_id', NEW.unit_id, 'sampled_at', NEW.sampled_at, 'kv40_cst', NEW.kv40_cst, 'kv100_cst', NEW.kv100_cst,
            'visc_cst', NEW.visc_cst, 'visc_temp_c', NEW.visc_temp_c, 'count_4um_per_ml', NEW.count_4um_per_ml,
            'count_6um_per_ml', NEW.count_6um_per_ml, 'count_14um_per_ml', NEW.count_14um_per_ml, 'iso4406', NEW.iso4406,
            'water_ppm', NEW.water_ppm, 'acid_mgkoh_g', NEW.acid_mgkoh_g, 'lab_ref', NEW.lab_ref, 'note', NEW.note,
            'confirmed_by', NEW.confirmed_by, 'confirmed_at', NEW.confirmed_at),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER samples_log_delete AFTER DELETE ON samples
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'samples', OLD.id, 'delete',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'sampled_at', OLD.sampled_at, 'kv40_cst', OLD.kv40_cst, 'kv100_cst', OLD.kv100_cst,
            'visc_cst', OLD.visc_cst, 'visc_temp_c', OLD.visc_temp_c, 'count_4um_per_ml', OLD.count_4um_per_ml,
            'count_6um_per_ml', OLD.count_6um_per_ml, 'count_14um_per_ml', OLD.count_14um_per_ml, 'iso4406', OLD.iso4406,
            'water_ppm', OLD.water_ppm, 'acid_mgkoh_g', OLD.acid_mgkoh_g, 'lab_ref', OLD.lab_ref, 'note', OLD.note,
            'confirmed_by', OLD.confirmed_by, 'confirmed_at', OLD.confirmed_at),
        NULL,
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
