-- Rows for a shop at schema version 9 (work marked done with its hour meter, filter part and
-- work order), as sumpbook would hold them before a server kept each login's evaluations apart
-- (an invented shop; a shop file's version 10 changes nothing). tests/reliability.rs builds a
-- version-9 file from migrations 1 to 9, adds these rows and upgrades it with the current
-- program; every row must come through unchanged, the work-done details included. Among them
-- are a questioned reading that was confirmed, a deleted sample, a corrected event, an
-- acknowledgement, a saved column mapping and an electricity price, so the edit history holds a
-- confirmation, a deletion and changes of the settings and of work done.

INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'setup', 'shop named', '2024-11-01T08:00:00Z');
UPDATE settings SET shop_name = 'Upgrade test shop v9', unit_system = 'us', time_zone = 'America/Chicago' WHERE id = 1;
DELETE FROM edit_context;

INSERT INTO machines (id, tag, name, kind, route_order, notes, archived) VALUES
    (1, 'PR-07', 'Forming press 7', 'press', 1, 'bay 2', 0),
    (2, 'BR-02', 'Press brake 2', 'press brake', 2, '', 0),
    (3, 'SH-01', 'Shear 1', 'shear', 3, 'sold', 1);

INSERT INTO fluids (id, name, iso_vg, kv40_new_cst, kv100_new_cst, acid_new_mgkoh_g, base_type) VALUES
    (1, 'Shop HM 46', 46, 46.0, 6.8, 0.5, 'mineral'),
    (2, 'Shop HM 32', 32, 32.0, 5.4, NULL, 'mineral');

INSERT INTO units (id, machine_id, tag, pump_kind, rated_flow_lpm, relief_bar, reservoir_l, sensitive_component, fluid_id,
                   stroke_bore_mm, stroke_rod_mm, stroke_length_mm, stroke_direction, route_order, archived) VALUES
    (1, 1, 'PR-07-HPU', 'piston_variable', 120.0, 210.0, 400.0, 'proportional_valve', 1, 160.0, 110.0, 300.0, 'extend', 1, 0),
    (2, 2, 'BR-02-HPU', 'gear', 40.0, 180.0, 150.0, 'cylinder', 2, 100.0, 56.0, 200.0, 'retract', 2, 0),
    (3, 3, 'SH-01-HPU', 'vane', 60.0, 160.0, 200.0, 'vane_pump', NULL, NULL, NULL, NULL, NULL, 3, 1);

INSERT INTO checks (id, unit_id, taken_at, reservoir_temp_c, ambient_temp_c, pressure_bar, stroke_time_s, cycle_time_s,
                    oil_level, filter, hours, case_drain_lpm, taken_by, note) VALUES
    (1, 1, '2024-11-04T07:30:00Z', 44.5, 19.0, 172.0, 3.90, 12.5, 'ok', 'ok', 10040.0, 1.1, 'AK', ''),
    (2, 1, '2024-11-11T07:30:00Z', 45.0, 20.0, 171.5, 3.92, NULL, 'ok', 'ok', 10080.0, 1.2, 'AK', 'hose weep'),
    (3, 1, '2024-11-18T07:31:00Z', 4.65, 21.0, 172.5, 3.95, NULL, 'low', 'alert', 10121.0, NULL, 'JT', '=not a formula'),
    (4, 2, '2024-11-04T07:45:00Z', 40.0, 19.0, 150.0, 2.10, NULL, 'ok', 'ok', 8000.0, NULL, 'AK', ''),
    (5, 2, '2024-11-11T07:45:00Z', 41.0, 20.0, 151.0, 2.12, NULL, 'ok', 'bypass', 8040.5, NULL, 'AK', 'filter in bypass, changed'),
    (6, 3, '2024-06-03T07:00:00Z', -12.5, -20.0, 0.0, NULL, NULL, NULL, NULL, 300.0, NULL, 'JT', 'cold start, idle');

INSERT INTO samples (id, unit_id, sampled_at, kv40_cst, kv100_cst, visc_cst, visc_temp_c, count_4um_per_ml, count_6um_per_ml,
                     count_14um_per_ml, iso4406, water_ppm, acid_mgkoh_g, lab_ref, note) VALUES
    (1, 1, '2024-11-05T00:00:00Z', 45.1, 6.7, NULL, NULL, 1800.0, 420.0, 30.0, '18/16/12', 120.0, 0.55, 'L-1001', ''),
    (2, 2, '2024-11-12T00:00:00Z', NULL, NULL, 31.5, 55.0, NULL, NULL, NULL, '≥19/17/-', 380.0, NULL, '', 'bench counter');

INSERT INTO events (id, unit_id, done_at, kind, volume_l, fluid_id, done_by, note, hours, filter_part, work_order) VALUES
    (1, 2, '2024-11-11T10:00:00Z', 'filter_change', NULL, NULL, 'AK', 'return filter', 8041.0, 'RF-10-25', 'WO-2291'),
    (2, 1, '2024-10-01T09:00:00Z', 'fluid_change', 380.0, 1, 'JT', 'flushed', NULL, '', 'WO-2240'),
    (3, 2, '2024-11-18T10:00:00Z', 'top_up', 21.0, 2, 'AK', '', NULL, '', '');

-- Work done whose volume was corrected: the edit history holds the event as it was.
INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'AK', 'it was 12 L, not 21', '2024-11-18T12:00:00Z');
UPDATE events SET volume_l = 12.0, note = 'after the hose repair' WHERE id = 3;
DELETE FROM edit_context;

INSERT INTO manual_baselines (id, unit_id, era_start, indicator, value_si, spread_si, entered_by, entered_at) VALUES
    (1, 1, '2024-10-01T09:00:00Z', 'effective_flow', 0.00155, 0.00002, 'RE', '2024-10-20T12:00:00Z');

INSERT INTO limits (id, unit_id, key, watch, act) VALUES
    (1, NULL, 'water_ppm', 150.0, 400.0),
    (2, 1, 'lost_flow_pct', 6.0, 12.0);

INSERT INTO acknowledgements (id, unit_id, kind, state, ack_by, note, acked_at) VALUES
    (1, 2, 'filter', 'act', 'RE', 'changed the same day', '2024-11-11T11:00:00Z');

-- A corrected reading: the edit history holds the old value.
INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'JT', 'typo in the note', '2024-11-19T09:00:00Z');
UPDATE checks SET note = 'hose weep at the pump' WHERE id = 2;
DELETE FROM edit_context;

-- A sample entered twice by mistake and deleted: the edit history keeps it.
INSERT INTO samples (id, unit_id, sampled_at, kv40_cst, water_ppm, lab_ref, note) VALUES
    (3, 1, '2024-11-05T00:00:01Z', 45.1, 120.0, 'L-1001', 'entered twice');
INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'RE', 'entered twice', '2024-11-20T10:00:00Z');
DELETE FROM samples WHERE id = 3;
DELETE FROM edit_context;

-- The questioned reading confirmed by the engineer: an UPDATE of the row, in the edit history.
INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'RE', 'confirmed: the oil was cold after a weekend', '2024-11-21T08:00:00Z');
UPDATE checks SET confirmed_by = 'RE', confirmed_at = '2024-11-21T08:00:00Z' WHERE id = 3;
DELETE FROM edit_context;

INSERT INTO import_profiles (id, name, kind, header, columns, date_order, saved_at) VALUES
    (1, 'Hillside lab', 'samples', '["Equipment ID","Sample Date","Water (ppm)"]',
     '[["Equipment ID","unit_tag"],["Sample Date","sampled_at"],["Water (ppm)","water_ppm"]]',
     'month-first', '2025-01-10T09:00:00Z');

INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 'setup', 'tariff of 2025', '2025-01-02T08:00:00Z');
UPDATE settings SET electricity_price = 0.14 WHERE id = 1;
DELETE FROM edit_context;
