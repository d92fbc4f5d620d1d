-- sumpbook schema, version 4, for a PostgreSQL server: no stored row is replaced or removed
-- without the edit history, as in version 4 of the shop file.
--
-- The server has no REPLACE: an upsert (INSERT ... ON CONFLICT DO UPDATE) or a MERGE changes a
-- stored row through UPDATE, which fires the history triggers of version 1 like any other
-- update (and is refused without who and why), so the readings and the register need nothing
-- new here. Acknowledgements are evidence that someone saw a flag: like edit_log they are only
-- ever added, never changed or deleted (a later acknowledgement is a new row); an upsert that
-- meets a stored one is refused with them.

CREATE FUNCTION sumpbook_acknowledgements_kept() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    RAISE EXCEPTION 'acknowledgements are never changed or deleted; record a new acknowledgement instead';
END;
$$;
CREATE TRIGGER acknowledgements_no_change BEFORE UPDATE OR DELETE ON acknowledgements
    FOR EACH ROW EXECUTE FUNCTION sumpbook_acknowledgements_kept();
