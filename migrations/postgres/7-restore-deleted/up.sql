-- sumpbook schema, version 7, for a PostgreSQL server: a deleted reading can be restored, and
-- the restore is an edit, as in version 7 of the shop file.
--
-- edit_log takes the action 'restore', whose old and new values are both the record put back.
-- No role may write edit_log, so the restore is this schema's function: it runs with the
-- rights of the schema's owner, puts the check, sample or event back from the deletion's JSON
-- (the columns it held; a column added later takes its default) with its own id, and writes
-- the restore with who, why and when from the edit's settings. Whoever may delete readings of
-- that table (the engineer) may restore them; anyone else is refused as the server refuses a
-- right it lacks.

ALTER TABLE edit_log DROP CONSTRAINT edit_log_action_check;
ALTER TABLE edit_log ADD CONSTRAINT "action: must be update, delete or restore"
    CHECK (action = 'update' OR action = 'delete' OR action = 'restore');
ALTER TABLE edit_log ADD CONSTRAINT "new_value: a restore holds the record put back"
    CHECK (action <> 'restore' OR new_value IS NOT NULL);

CREATE FUNCTION sumpbook_restore(deletion bigint) RETURNS bigint LANGUAGE plpgsql SECURITY DEFINER
SET search_path FROM CURRENT AS $$
DECLARE
    d edit_log%ROWTYPE;
    cols text;
BEGIN
    SELECT * INTO d FROM edit_log WHERE id = deletion;
    IF NOT FOUND OR d.action <> 'delete' OR d.table_name NOT IN ('checks', 'samples', 'events') THEN
        RAISE EXCEPTION 'edit % is not the deletion of a check, sample or event', deletion;
    END IF;
    IF NOT has_table_privilege(session_user, d.table_name, 'DELETE') THEN
        RAISE EXCEPTION 'permission denied to restore a deleted reading of %: that needs the right to delete one', d.table_name
            USING ERRCODE = 'insufficient_privilege';
    END IF;
    IF EXISTS (SELECT 1 FROM edit_log WHERE table_name = d.table_name AND row_id = d.row_id AND id > d.id) THEN
        RAISE EXCEPTION 'edit % is not the latest edit of that reading: it was put back already', deletion;
    END IF;
    SELECT string_agg(quote_ident(c.column_name::text), ', ' ORDER BY c.ordinal_position) INTO cols
    FROM information_schema.columns c
    WHERE c.table_schema = current_schema() AND c.table_name = d.table_name
      AND (d.old_value::json -> c.column_name::text) IS NOT NULL;
    EXECUTE format('INSERT INTO %I (%s) SELECT %s FROM json_populate_record(NULL::%I, $1::json)',
                   d.table_name, cols, cols, d.table_name)
        USING d.old_value;
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    VALUES (d.table_name, d.row_id, 'restore', d.old_value, d.old_value,
            nullif(current_setting('sumpbook.edited_by', true), ''),
            coalesce(current_setting('sumpbook.reason', true), ''),
            coalesce(current_setting('sumpbook.edited_at', true), ''));
    RETURN d.row_id;
END;
$$;
