-- Rows for a shop at schema version 8 (each unit's evaluation kept), as sumpbook would hold
-- them before marking work done recorded the hour meter, the filter part and the work order (an
-- invented shop). tests/reliability.rs builds a version-8 file from migrations 1 to 8, adds
-- these rows and upgrades it with the current program; every row must come through unchanged,
-- and the events gain no hour meter, part or work order they did not have. Among them are a
-- questioned reading that was confirmed, a deleted sample, a corrected event, an
-- acknowledgement, a saved column mapping and an electricity price, so the edit history holds a
-- confirmation, a deletion and changes of the settings and of work done.
--
-- builds on data-v7.sql: its rows first (valid at version 8 too), then a top-up whose volume was
-- corrected, and the shop renamed for this version.

INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'setup', 'shop renamed', '2025-02-08T08:00:00Z');
UPDATE settings SET shop_name = 'Upgrade test shop v8' WHERE id = 1;
DELETE FROM edit_context;

INSERT INTO events (id, unit_id, done_at, kind, volume_l, fluid_id, done_by, note) VALUES
    (3, 2, '2024-11-18T10:00:00Z', 'top_up', 21.0, 2, 'AK', '');

-- Work done whose volume was corrected: the edit history holds the event as it was.
INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'AK', 'it was 12 L, not 21', '2024-11-18T12:00:00Z');
UPDATE events SET volume_l = 12.0, note = 'after the hose repair' WHERE id = 3;
DELETE FROM edit_context;
