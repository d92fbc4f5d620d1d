-- sumpbook schema, version 9, for a PostgreSQL server: what marking work done records beside
-- the event itself, as in version 9 of the shop file.
--
-- The hour meter read when the work was done (NULL when not read, the range of a check's),
-- the part number of the filter element fitted and the shop's work-order reference ('' when
-- not given). The edit history writes the whole row, so the three columns are in it as they
-- are; the restore puts back whichever columns a deletion held.

ALTER TABLE events ADD COLUMN hours DOUBLE PRECISION
    CONSTRAINT "hours: must be between 0 and 10000000 h" CHECK (hours BETWEEN 0 AND 10000000);
ALTER TABLE events ADD COLUMN filter_part TEXT COLLATE "C" NOT NULL DEFAULT '';
ALTER TABLE events ADD COLUMN work_order TEXT COLLATE "C" NOT NULL DEFAULT '';
