-- Rows for a shop at schema version 3 (who confirmed a questioned reading, and when), as
-- sumpbook would hold them before the schema refused replacing a stored row (an invented shop).
-- tests/reliability.rs builds a version-3 file from migrations 1 to 3, adds these rows and
-- upgrades it with the current program; every row must come through unchanged. Among them are
-- a questioned reading that was confirmed (oil 4.65 °C typed for 46.5, check 3), a deleted
-- sample and an acknowledgement, so the edit history holds a confirmation and a deletion.
--
-- builds on data-v2.sql: its rows first (valid at version 3 too), then the confirmation of the
-- questioned reading, and the shop renamed for this version.

INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'setup', 'shop renamed', '2025-02-03T08:00:00Z');
UPDATE settings SET shop_name = 'Upgrade test shop v3' WHERE id = 1;
DELETE FROM edit_context;

-- The questioned reading confirmed by the engineer: an UPDATE of the row, in the edit history.
INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'RE', 'confirmed: the oil was cold after a weekend', '2024-11-21T08:00:00Z');
UPDATE checks SET confirmed_by = 'RE', confirmed_at = '2024-11-21T08:00:00Z' WHERE id = 3;
DELETE FROM edit_context;
