-- Rows for a shop at schema version 5 (column-mapping profiles kept), as sumpbook would hold
-- them before the shop's electricity price was kept (an invented shop). tests/reliability.rs
-- builds a version-5 file from migrations 1 to 5, adds these rows and upgrades it with the
-- current program; every row must come through unchanged. Among them are a questioned reading
-- that was confirmed, a deleted sample, an acknowledgement and a saved column mapping, so the
-- edit history holds a confirmation, a deletion and a change of the settings.
--
-- builds on data-v4.sql: its rows first (valid at version 5 too), then a saved column mapping,
-- and the shop renamed for this version.

INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'setup', 'shop renamed', '2025-02-05T08:00:00Z');
UPDATE settings SET shop_name = 'Upgrade test shop v5' WHERE id = 1;
DELETE FROM edit_context;

INSERT INTO import_profiles (id, name, kind, header, columns, date_order, saved_at) VALUES
    (1, 'Hillside lab', 'samples', '["Equipment ID","Sample Date","Water (ppm)"]',
     '[["Equipment ID","unit_tag"],["Sample Date","sampled_at"],["Water (ppm)","water_ppm"]]',
     'month-first', '2025-01-10T09:00:00Z');
