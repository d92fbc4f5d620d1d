-- Rows for a shop at schema version 6 (the shop's electricity price kept), as sumpbook would
-- hold them before a deleted reading could be restored (an invented shop). tests/reliability.rs
-- builds a version-6 file from migrations 1 to 6, adds these rows and upgrades it with the
-- current program; every row must come through unchanged (the edit history is made again by
-- the upgrade, so its rows are among them). Among them are a questioned reading that was
-- confirmed, a deleted sample, an acknowledgement, a saved column mapping and an electricity
-- price, so the edit history holds a confirmation, a deletion and changes of the settings.
--
-- builds on data-v5.sql: its rows first (valid at version 6 too), then the shop's electricity
-- price, and the shop renamed for this version.

INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'setup', 'shop renamed', '2025-02-06T08:00:00Z');
UPDATE settings SET shop_name = 'Upgrade test shop v6' WHERE id = 1;
DELETE FROM edit_context;

INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'setup', 'tariff of 2025', '2025-01-02T08:00:00Z');
UPDATE settings SET electricity_price = 0.14 WHERE id = 1;
DELETE FROM edit_context;
