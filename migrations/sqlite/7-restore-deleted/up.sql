-- sumpbook schema, version 7: a deleted reading can be restored, and the restore is an edit.
--
-- A check, sample or event that was deleted stays in edit_log with every column it held. An
-- engineer may put it back as it was, with its own id; the restore is written to edit_log
-- with who, when and why like any other edit, as the action 'restore' whose old and new values
-- are both the record put back. edit_log's rule on its action is a CHECK, which SQLite cannot
-- change in place: the table is made again with the same columns and every row copied across
-- (by way of a copy, so that no ALTER TABLE RENAME has to re-read the triggers of the other
-- tables, which write to edit_log by name). Dropping a table fires none of its triggers.

CREATE TABLE edit_log_before_v7 AS SELECT * FROM edit_log;
DROP TABLE edit_log;

CREATE TABLE edit_log (
    id         INTEGER PRIMARY KEY,
    table_name TEXT NOT NULL,
    row_id     INTEGER NOT NULL,
    action     TEXT NOT NULL CONSTRAINT "action: must be update, delete or restore"
               CHECK (action = 'update' OR action = 'delete' OR action = 'restore'),
    old_value  TEXT NOT NULL CHECK (json_valid(old_value)),
    new_value  TEXT CHECK (new_value IS NULL OR json_valid(new_value)),
    edited_by  TEXT NOT NULL CONSTRAINT "edited_by: an edit needs edit_context (who and why) in its transaction"
               CHECK (length(trim(edited_by)) > 0),
    reason     TEXT NOT NULL,
    edited_at  TEXT NOT NULL,
    CONSTRAINT "new_value: a restore holds the record put back" CHECK (action <> 'restore' OR new_value IS NOT NULL)
) STRICT;
INSERT INTO edit_log (id, table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT id, table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at
    FROM edit_log_before_v7 ORDER BY id;
DROP TABLE edit_log_before_v7;
CREATE INDEX edit_log_row ON edit_log (table_name, row_id);

CREATE TRIGGER edit_log_no_update BEFORE UPDATE ON edit_log
BEGIN SELECT RAISE(ABORT, 'edit_log is append-only'); END;
CREATE TRIGGER edit_log_no_delete BEFORE DELETE ON edit_log
BEGIN SELECT RAISE(ABORT, 'edit_log is append-only'); END;
CREATE TRIGGER edit_log_no_replace BEFORE INSERT ON edit_log
WHEN EXISTS (SELECT 1 FROM edit_log WHERE id = NEW.id)
BEGIN
    SELECT RAISE(ABORT, 'edit_log is append-only');
END;
