-- Rows for a shop at schema version 9 (work marked done with its hour meter, filter part and
-- work order), as sumpbook would hold them before a server kept each login's evaluations apart
-- (an invented shop; a shop file's version 10 changes nothing). tests/reliability.rs builds a
-- version-9 file from migrations 1 to 9, adds these rows and upgrades it with the current
-- program; every row must come through unchanged, the work-done details included.
--
-- builds on data-v8.sql: its rows first (valid at version 9 too), then the work-done details
-- of two events, given as a correction so that the edit history holds them as well.

INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'RE', 'meter, part and order from the job cards', '2025-01-20T09:00:00Z');
UPDATE events SET hours = 8041.0, filter_part = 'RF-10-25', work_order = 'WO-2291' WHERE id = 1;
UPDATE events SET work_order = 'WO-2240' WHERE id = 2;
UPDATE settings SET shop_name = 'Upgrade test shop v9' WHERE id = 1;
DELETE FROM edit_context;
