-- Rows for a shop at schema version 7 (a deleted reading can be restored), as sumpbook would
-- hold them before units' evaluations were kept (an invented shop). tests/reliability.rs builds
-- a version-7 file from migrations 1 to 7, adds these rows and upgrades it with the current
-- program; every row must come through unchanged, and every unit gets its evaluation counter.
-- Among them are a questioned reading that was confirmed, a deleted sample, an
-- acknowledgement, a saved column mapping and an electricity price, so the edit history holds
-- a confirmation, a deletion and changes of the settings.
--
-- builds on data-v6.sql: its rows first (valid at version 7 too), then nothing but the shop's
-- name (version 7 only added the means to restore), and the shop renamed for this version.

INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'setup', 'shop renamed', '2025-02-07T08:00:00Z');
UPDATE settings SET shop_name = 'Upgrade test shop v7' WHERE id = 1;
DELETE FROM edit_context;
