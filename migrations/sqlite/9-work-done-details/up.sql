-- sumpbook schema, version 9: what marking work done records beside the event itself.
--
-- A fluid or filter change marked done carries the hour meter read at the time (so the next
-- change can be planned on running hours as well as on the calendar), the part number of the
-- filter element fitted and the shop's work-order reference it was done under. The fluid put
-- in is the event's fluid already. Each is optional: a blank part or work order is '' as the
-- other free text of an event, an hour meter not read is NULL. The hour meter has the range
-- of a check's. The edit-history triggers are made again with the three columns in their
-- JSON, so a correction or deletion of any of them is kept with who and why.

ALTER TABLE events ADD COLUMN hours REAL
    CONSTRAINT "hours: must be between 0 and 10000000 h" CHECK (hours BETWEEN 0 AND 10000000);
ALTER TABLE events ADD COLUMN filter_part TEXT NOT NULL DEFAULT '';
ALTER TABLE events ADD COLUMN work_order TEXT NOT NULL DEFAULT '';

DROP TRIGGER events_log_update;
DROP TRIGGER events_log_delete;

CREATE TRIGGER events_log_update AFTER UPDATE ON events
WHEN json_array(OLD.id, OLD.unit_id, OLD.done_at, OLD.kind, OLD.volume_l, OLD.fluid_id, OLD.done_by, OLD.note,
                OLD.hours, OLD.filter_part, OLD.work_order)
  IS NOT json_array(NEW.id, NEW.unit_id, NEW.done_at, NEW.kind, NEW.volume_l, NEW.fluid_id, NEW.done_by, NEW.note,
                NEW.hours, NEW.filter_part, NEW.work_order)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'events', OLD.id, 'update',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'done_at', OLD.done_at, 'kind', OLD.kind, 'volume_l', OLD.volume_l,
            'fluid_id', OLD.fluid_id, 'done_by', OLD.done_by, 'note', OLD.note,
            'hours', OLD.hours, 'filter_part', OLD.filter_part, 'work_order', OLD.work_order),
        json_object('id', NEW.id, 'unit_id', NEW.unit_id, 'done_at', NEW.done_at, 'kind', NEW.kind, 'volume_l', NEW.volume_l,
            'fluid_id', NEW.fluid_id, 'done_by', NEW.done_by, 'note', NEW.note,
            'hours', NEW.hours, 'filter_part', NEW.filter_part, 'work_order', NEW.work_order),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER events_log_delete AFTER DELETE ON events
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'events', OLD.id, 'delete',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'done_at', OLD.done_at, 'kind', OLD.kind, 'volume_l', OLD.volume_l,
            'fluid_id', OLD.fluid_id, 'done_by', OLD.done_by, 'note', OLD.note,
            'hours', OLD.hours, 'filter_part', OLD.filter_part, 'work_order', OLD.work_order),
        NULL,
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
