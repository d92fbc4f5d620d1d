-- sumpbook schema, version 4: no stored row is replaced or removed without the edit history.
--
-- SQLite's conflict resolution REPLACE (REPLACE INTO, INSERT OR REPLACE, UPDATE OR REPLACE)
-- deletes the row in the way without firing DELETE triggers unless the connection has set
-- PRAGMA recursive_triggers, which the sqlite3 shell and other tools do not: the old row left
-- no trace in edit_log (on units it also left the unit's checks pointing at nothing). A
-- trigger cannot tell REPLACE from the other ways of meeting a stored key, so a row whose id
-- or identifying key is stored already is refused before any conflict resolution runs:
--  * BEFORE INSERT: an insert meeting a stored id or key is refused, whatever its conflict
--    clause (REPLACE, OR IGNORE, ON CONFLICT DO NOTHING or DO UPDATE). sumpbook looks a key up
--    before it writes, and a stored row is changed only by UPDATE, which edit_log records;
--  * BEFORE UPDATE of the id or key columns: an update that would meet another row's id or key
--    is refused, so UPDATE OR REPLACE cannot delete that row.
-- The refusal reads as SQLite's own for a unique key (`UNIQUE constraint failed: TABLE.COLUMNS`)
-- followed by why, so that a program sees an ordinary duplicate.
--
-- Acknowledgements are evidence that someone saw a flag: like edit_log they are only ever
-- added, never changed or deleted (a later acknowledgement is a new row). The tables without
-- a key of their own (manual_baselines, acknowledgements, settings, edit_log) are covered on
-- their id.

CREATE TRIGGER checks_no_replace BEFORE INSERT ON checks
BEGIN
    SELECT CASE
        WHEN EXISTS (SELECT 1 FROM checks WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: checks.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM checks WHERE unit_id = NEW.unit_id AND taken_at = NEW.taken_at)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: checks.unit_id, checks.taken_at; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;
CREATE TRIGGER checks_no_replace_by_update BEFORE UPDATE OF id, unit_id, taken_at ON checks
BEGIN
    SELECT CASE
        WHEN NEW.id IS NOT OLD.id AND EXISTS (SELECT 1 FROM checks WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: checks.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM checks WHERE unit_id = NEW.unit_id AND taken_at = NEW.taken_at AND id IS NOT OLD.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: checks.unit_id, checks.taken_at; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;

CREATE TRIGGER samples_no_replace BEFORE INSERT ON samples
BEGIN
    SELECT CASE
        WHEN EXISTS (SELECT 1 FROM samples WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: samples.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM samples WHERE unit_id = NEW.unit_id AND sampled_at = NEW.sampled_at)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: samples.unit_id, samples.sampled_at; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;
CREATE TRIGGER samples_no_replace_by_update BEFORE UPDATE OF id, unit_id, sampled_at ON samples
BEGIN
    SELECT CASE
        WHEN NEW.id IS NOT OLD.id AND EXISTS (SELECT 1 FROM samples WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: samples.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM samples WHERE unit_id = NEW.unit_id AND sampled_at = NEW.sampled_at AND id IS NOT OLD.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: samples.unit_id, samples.sampled_at; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;

CREATE TRIGGER events_no_replace BEFORE INSERT ON events
BEGIN
    SELECT CASE
        WHEN EXISTS (SELECT 1 FROM events WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: events.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM events WHERE unit_id = NEW.unit_id AND done_at = NEW.done_at AND kind = NEW.kind)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: events.unit_id, events.done_at, events.kind; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;
CREATE TRIGGER events_no_replace_by_update BEFORE UPDATE OF id, unit_id, done_at, kind ON events
BEGIN
    SELECT CASE
        WHEN NEW.id IS NOT OLD.id AND EXISTS (SELECT 1 FROM events WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: events.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM events WHERE unit_id = NEW.unit_id AND done_at = NEW.done_at AND kind = NEW.kind AND id IS NOT OLD.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: events.unit_id, events.done_at, events.kind; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;

CREATE TRIGGER units_no_replace BEFORE INSERT ON units
BEGIN
    SELECT CASE
        WHEN EXISTS (SELECT 1 FROM units WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: units.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM units WHERE tag = NEW.tag)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: units.tag; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;
CREATE TRIGGER units_no_replace_by_update BEFORE UPDATE OF id, tag ON units
BEGIN
    SELECT CASE
        WHEN NEW.id IS NOT OLD.id AND EXISTS (SELECT 1 FROM units WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: units.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM units WHERE tag = NEW.tag AND id IS NOT OLD.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: units.tag; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;

CREATE TRIGGER fluids_no_replace BEFORE INSERT ON fluids
BEGIN
    SELECT CASE
        WHEN EXISTS (SELECT 1 FROM fluids WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: fluids.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM fluids WHERE name = NEW.name)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: fluids.name; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;
CREATE TRIGGER fluids_no_replace_by_update BEFORE UPDATE OF id, name ON fluids
BEGIN
    SELECT CASE
        WHEN NEW.id IS NOT OLD.id AND EXISTS (SELECT 1 FROM fluids WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: fluids.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM fluids WHERE name = NEW.name AND id IS NOT OLD.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: fluids.name; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;

CREATE TRIGGER machines_no_replace BEFORE INSERT ON machines
BEGIN
    SELECT CASE
        WHEN EXISTS (SELECT 1 FROM machines WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: machines.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM machines WHERE tag = NEW.tag)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: machines.tag; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;
CREATE TRIGGER machines_no_replace_by_update BEFORE UPDATE OF id, tag ON machines
BEGIN
    SELECT CASE
        WHEN NEW.id IS NOT OLD.id AND EXISTS (SELECT 1 FROM machines WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: machines.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM machines WHERE tag = NEW.tag AND id IS NOT OLD.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: machines.tag; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;

CREATE TRIGGER limits_no_replace BEFORE INSERT ON limits
BEGIN
    SELECT CASE
        WHEN EXISTS (SELECT 1 FROM limits WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: limits.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM limits WHERE ifnull(unit_id, 0) = ifnull(NEW.unit_id, 0) AND key = NEW.key)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: index ''limits_scope_key''; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;
CREATE TRIGGER limits_no_replace_by_update BEFORE UPDATE OF id, unit_id, key ON limits
BEGIN
    SELECT CASE
        WHEN NEW.id IS NOT OLD.id AND EXISTS (SELECT 1 FROM limits WHERE id = NEW.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: limits.id; a stored row is changed only by UPDATE, which edit_log records, never replaced')
        WHEN EXISTS (SELECT 1 FROM limits WHERE ifnull(unit_id, 0) = ifnull(NEW.unit_id, 0) AND key = NEW.key AND id IS NOT OLD.id)
        THEN RAISE(ABORT, 'UNIQUE constraint failed: index ''limits_scope_key''; a stored row is changed only by UPDATE, which edit_log records, never replaced')
    END;
END;

CREATE TRIGGER manual_baselines_no_replace BEFORE INSERT ON manual_baselines
WHEN EXISTS (SELECT 1 FROM manual_baselines WHERE id = NEW.id)
BEGIN
    SELECT RAISE(ABORT, 'UNIQUE constraint failed: manual_baselines.id; a stored row is changed only by UPDATE, which edit_log records, never replaced');
END;
CREATE TRIGGER manual_baselines_no_replace_by_update BEFORE UPDATE OF id ON manual_baselines
WHEN NEW.id IS NOT OLD.id AND EXISTS (SELECT 1 FROM manual_baselines WHERE id = NEW.id)
BEGIN
    SELECT RAISE(ABORT, 'UNIQUE constraint failed: manual_baselines.id; a stored row is changed only by UPDATE, which edit_log records, never replaced');
END;

CREATE TRIGGER settings_no_replace BEFORE INSERT ON settings
WHEN EXISTS (SELECT 1 FROM settings WHERE id = NEW.id)
BEGIN
    SELECT RAISE(ABORT, 'UNIQUE constraint failed: settings.id; a stored row is changed only by UPDATE, which edit_log records, never replaced');
END;

CREATE TRIGGER edit_log_no_replace BEFORE INSERT ON edit_log
WHEN EXISTS (SELECT 1 FROM edit_log WHERE id = NEW.id)
BEGIN
    SELECT RAISE(ABORT, 'edit_log is append-only');
END;

CREATE TRIGGER acknowledgements_no_replace BEFORE INSERT ON acknowledgements
WHEN EXISTS (SELECT 1 FROM acknowledgements WHERE id = NEW.id)
BEGIN
    SELECT RAISE(ABORT, 'acknowledgements are never changed or deleted; record a new acknowledgement instead');
END;
CREATE TRIGGER acknowledgements_no_update BEFORE UPDATE ON acknowledgements
BEGIN
    SELECT RAISE(ABORT, 'acknowledgements are never changed or deleted; record a new acknowledgement instead');
END;
CREATE TRIGGER acknowledgements_no_delete BEFORE DELETE ON acknowledgements
BEGIN
    SELECT RAISE(ABORT, 'acknowledgements are never changed or deleted; record a new acknowledgement instead');
END;
