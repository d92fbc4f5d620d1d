-- sumpbook schema, version 3, for a PostgreSQL server: who confirmed a questioned reading, and
-- when, as in version 3 of the shop file.
--
-- A reading that the screening questions is kept but held out of baselines and drift detectors
-- until a person confirms it. The confirmation is stored on the reading itself; both columns are
-- NULL for a reading nobody has confirmed. Confirming or lifting a confirmation is an UPDATE of
-- the row: the history trigger writes every column of the row, these two included, so nothing
-- else changes here. The rule that the two go together holds only when each is valid on its own,
-- so that a bad value is named by its own rule, as in the shop file.

ALTER TABLE checks ADD COLUMN confirmed_by TEXT COLLATE "C"
    CONSTRAINT "confirmed_by: must not be empty" CHECK (length(trim(confirmed_by)) > 0);
ALTER TABLE checks ADD COLUMN confirmed_at TEXT COLLATE "C"
    CONSTRAINT "confirmed_at: must be UTC 'YYYY-MM-DDTHH:MM:SSZ'" CHECK (sumpbook_is_time(confirmed_at));
ALTER TABLE checks ADD CONSTRAINT "confirmed_at: who confirmed and when go together"
    CHECK ((confirmed_by IS NOT NULL AND length(trim(confirmed_by)) = 0)
        OR (confirmed_at IS NOT NULL AND NOT sumpbook_is_time(confirmed_at))
        OR ((confirmed_by IS NULL) = (confirmed_at IS NULL)));

ALTER TABLE samples ADD COLUMN confirmed_by TEXT COLLATE "C"
    CONSTRAINT "confirmed_by: must not be empty" CHECK (length(trim(confirmed_by)) > 0);
ALTER TABLE samples ADD COLUMN confirmed_at TEXT COLLATE "C"
    CONSTRAINT "confirmed_at: must be UTC 'YYYY-MM-DDTHH:MM:SSZ'" CHECK (sumpbook_is_time(confirmed_at));
ALTER TABLE samples ADD CONSTRAINT "confirmed_at: who confirmed and when go together"
    CHECK ((confirmed_by IS NOT NULL AND length(trim(confirmed_by)) = 0)
        OR (confirmed_at IS NOT NULL AND NOT sumpbook_is_time(confirmed_at))
        OR ((confirmed_by IS NULL) = (confirmed_at IS NULL)));
