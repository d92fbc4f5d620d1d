-- Rows for a shop at schema version 4 (no stored row replaced unseen), as sumpbook would hold
-- them before column-mapping profiles were kept (an invented shop). tests/reliability.rs builds
-- a version-4 file from migrations 1 to 4, adds these rows and upgrades it with the current
-- program; every row must come through unchanged. Among them are a questioned reading that was
-- confirmed (oil 4.65 °C typed for 46.5, check 3), a deleted sample and an acknowledgement, so
-- the edit history holds a confirmation and a deletion.
--
-- builds on data-v3.sql: its rows first (valid at version 4 too), then nothing but the shop's
-- name (version 4 only added a rule), and the shop renamed for this version.

INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'setup', 'shop renamed', '2025-02-04T08:00:00Z');
UPDATE settings SET shop_name = 'Upgrade test shop v4' WHERE id = 1;
DELETE FROM edit_context;
