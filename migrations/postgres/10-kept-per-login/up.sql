-- sumpbook schema, version 10, for a PostgreSQL server: each login keeps its own evaluations.
--
-- Every shop role may write kept evaluations (whoever evaluates a unit first keeps it), and up
-- to version 9 a kept evaluation was read by everyone. A signed-in role could therefore write,
-- with plain SQL, a kept row that shows a unit at act as steady on every other login's fleet
-- board until the unit's next record; no edit history would show it. From this version a kept
-- row names the login that wrote it (kept_by, the session's user: SET ROLE does not change it),
-- and row-level security lets a login read, write and delete its own rows only; sumpbook also
-- reads its own login's rows only, so a schema owner, to whom the policy does not apply, reads
-- no other login's either. A kept row only saves time: the rows kept so far are dropped, and
-- each login evaluates afresh once. The counters' triggers run as the schema's owner and still
-- forget every login's rows.

DELETE FROM kept_evaluations;
ALTER TABLE kept_evaluations ADD COLUMN kept_by TEXT COLLATE "C" NOT NULL DEFAULT session_user;
ALTER TABLE kept_evaluations DROP CONSTRAINT kept_evaluations_pkey;
ALTER TABLE kept_evaluations ADD PRIMARY KEY (unit_id, slot, kept_by);
ALTER TABLE kept_evaluations ENABLE ROW LEVEL SECURITY;
CREATE POLICY kept_by_its_login ON kept_evaluations
    USING (kept_by = session_user) WITH CHECK (kept_by = session_user);
