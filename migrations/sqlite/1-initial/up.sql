-- sumpbook schema, version 1: one SQLite file is one shop.
--
-- Conventions (the file must stay readable in any SQLite tool):
--  * rules on the columns of checks, the table that bulk imports fill, avoid IN lists of three or
--    more values, for which SQLite builds a temporary index on every row;
--  * the unit of every stored quantity is in its column name (temp_c, pressure_bar, flow_lpm,
--    bore_mm, kv40_cst, volume_l, stroke_time_s, ...); manual baselines hold SI values (_si);
--  * timestamps are ISO 8601 text in UTC, to the second: 'YYYY-MM-DDTHH:MM:SSZ', so that text
--    order is time order; the shop's display time zone is in settings;
--  * every CHECK constraint is named '<column>: <rule>' so that the program can tell the user
--    which field was refused and why;
--  * UPDATE and DELETE of stored readings and the register are copied to edit_log by triggers.
--    The writer states who and why in edit_context inside the same transaction; an edit without
--    it is refused (edited_by is NOT NULL), so nothing bypasses the history.

PRAGMA application_id = 1398099280; -- 'SUMP'

CREATE TABLE sumpbook_meta (
    key   TEXT PRIMARY KEY NOT NULL,
    value TEXT NOT NULL
) STRICT;
INSERT INTO sumpbook_meta (key, value) VALUES ('application', 'sumpbook'), ('created_with_schema', '1');

CREATE TABLE settings (
    id          INTEGER PRIMARY KEY CONSTRAINT "id: settings has one row" CHECK (id = 1),
    shop_name   TEXT NOT NULL CONSTRAINT "shop_name: must not be empty" CHECK (length(trim(shop_name)) > 0),
    unit_system TEXT NOT NULL CONSTRAINT "unit_system: must be metric or us" CHECK (unit_system IN ('metric', 'us')),
    time_zone   TEXT NOT NULL CONSTRAINT "time_zone: must not be empty" CHECK (length(trim(time_zone)) > 0)
) STRICT;
INSERT INTO settings (id, shop_name, unit_system, time_zone) VALUES (1, 'New shop', 'metric', 'UTC');

CREATE TABLE machines (
    id          INTEGER PRIMARY KEY,
    tag         TEXT NOT NULL UNIQUE CONSTRAINT "tag: must not be empty" CHECK (length(trim(tag)) > 0),
    name        TEXT NOT NULL DEFAULT '',
    kind        TEXT NOT NULL DEFAULT '',
    route_order INTEGER NOT NULL DEFAULT 0,
    notes       TEXT NOT NULL DEFAULT '',
    archived    INTEGER NOT NULL DEFAULT 0 CONSTRAINT "archived: must be 0 or 1" CHECK (archived IN (0, 1))
) STRICT;

CREATE TABLE fluids (
    id               INTEGER PRIMARY KEY,
    name             TEXT NOT NULL UNIQUE CONSTRAINT "name: must not be empty" CHECK (length(trim(name)) > 0),
    iso_vg           INTEGER CONSTRAINT "iso_vg: must be an ISO 3448 viscosity grade"
                     CHECK (iso_vg IN (2, 3, 5, 7, 10, 15, 22, 32, 46, 68, 100, 150, 220, 320, 460, 680, 1000, 1500, 2200, 3200)),
    kv40_new_cst     REAL CONSTRAINT "kv40_new_cst: must be above 0 and at most 100000 cSt" CHECK (kv40_new_cst > 0 AND kv40_new_cst <= 100000),
    kv100_new_cst    REAL CONSTRAINT "kv100_new_cst: must be above 0 and at most 10000 cSt" CHECK (kv100_new_cst > 0 AND kv100_new_cst <= 10000),
    acid_new_mgkoh_g REAL CONSTRAINT "acid_new_mgkoh_g: must be between 0 and 50 mg KOH/g" CHECK (acid_new_mgkoh_g BETWEEN 0 AND 50),
    base_type        TEXT NOT NULL DEFAULT '',
    CONSTRAINT "kv100_new_cst: must be below kv40_new_cst" CHECK (kv100_new_cst < kv40_new_cst)
) STRICT;

CREATE TABLE units (
    id                  INTEGER PRIMARY KEY,
    machine_id          INTEGER NOT NULL REFERENCES machines (id) ON DELETE RESTRICT,
    tag                 TEXT NOT NULL UNIQUE CONSTRAINT "tag: must not be empty" CHECK (length(trim(tag)) > 0),
    pump_kind           TEXT NOT NULL CONSTRAINT "pump_kind: must be gear, vane, piston_fixed or piston_variable"
                        CHECK (pump_kind IN ('gear', 'vane', 'piston_fixed', 'piston_variable')),
    rated_flow_lpm      REAL CONSTRAINT "rated_flow_lpm: must be above 0 and at most 10000 L/min" CHECK (rated_flow_lpm > 0 AND rated_flow_lpm <= 10000),
    relief_bar          REAL CONSTRAINT "relief_bar: must be above 0 and at most 1000 bar" CHECK (relief_bar > 0 AND relief_bar <= 1000),
    reservoir_l         REAL CONSTRAINT "reservoir_l: must be above 0 and at most 100000 L" CHECK (reservoir_l > 0 AND reservoir_l <= 100000),
    sensitive_component TEXT NOT NULL CONSTRAINT "sensitive_component: not a known component"
                        CHECK (sensitive_component IN ('servo_valve', 'proportional_valve', 'piston_pump_variable',
                                                       'piston_pump_fixed', 'vane_pump', 'gear_pump', 'cylinder')),
    fluid_id            INTEGER REFERENCES fluids (id) ON DELETE RESTRICT,
    stroke_bore_mm      REAL CONSTRAINT "stroke_bore_mm: must be above 0 and at most 5000 mm" CHECK (stroke_bore_mm > 0 AND stroke_bore_mm <= 5000),
    stroke_rod_mm       REAL CONSTRAINT "stroke_rod_mm: must be above 0 and at most 5000 mm" CHECK (stroke_rod_mm > 0 AND stroke_rod_mm <= 5000),
    stroke_length_mm    REAL CONSTRAINT "stroke_length_mm: must be above 0 and at most 50000 mm" CHECK (stroke_length_mm > 0 AND stroke_length_mm <= 50000),
    stroke_direction    TEXT CONSTRAINT "stroke_direction: must be extend or retract" CHECK (stroke_direction IN ('extend', 'retract')),
    route_order         INTEGER NOT NULL DEFAULT 0,
    archived            INTEGER NOT NULL DEFAULT 0 CONSTRAINT "archived: must be 0 or 1" CHECK (archived IN (0, 1)),
    CONSTRAINT "stroke_rod_mm: must be smaller than the bore" CHECK (stroke_rod_mm < stroke_bore_mm),
    CONSTRAINT "stroke_bore_mm: bore, length and direction of the timed stroke go together"
        CHECK ((stroke_bore_mm IS NULL) = (stroke_length_mm IS NULL) AND (stroke_bore_mm IS NULL) = (stroke_direction IS NULL)),
    CONSTRAINT "stroke_rod_mm: a retracting timed stroke needs the rod diameter"
        CHECK (stroke_direction IS NOT 'retract' OR stroke_rod_mm IS NOT NULL)
) STRICT;
CREATE INDEX units_machine ON units (machine_id);

CREATE TABLE checks (
    id               INTEGER PRIMARY KEY,
    unit_id          INTEGER NOT NULL REFERENCES units (id) ON DELETE RESTRICT,
    taken_at         TEXT NOT NULL CONSTRAINT "taken_at: must be UTC 'YYYY-MM-DDTHH:MM:SSZ'"
                     CHECK (strftime('%Y-%m-%dT%H:%M:%SZ', unixepoch(taken_at), 'unixepoch') IS taken_at),
    reservoir_temp_c REAL CONSTRAINT "reservoir_temp_c: must be between -40 and 150 °C" CHECK (reservoir_temp_c BETWEEN -40 AND 150),
    ambient_temp_c   REAL CONSTRAINT "ambient_temp_c: must be between -40 and 150 °C" CHECK (ambient_temp_c BETWEEN -40 AND 150),
    pressure_bar     REAL CONSTRAINT "pressure_bar: must be between 0 and 1000 bar" CHECK (pressure_bar BETWEEN 0 AND 1000),
    stroke_time_s    REAL CONSTRAINT "stroke_time_s: must be above 0 and at most 3600 s" CHECK (stroke_time_s > 0 AND stroke_time_s <= 3600),
    cycle_time_s     REAL CONSTRAINT "cycle_time_s: must be above 0 and at most 86400 s" CHECK (cycle_time_s > 0 AND cycle_time_s <= 86400),
    oil_level        TEXT CONSTRAINT "oil_level: must be ok or low" CHECK (oil_level IN ('ok', 'low')),
    filter           TEXT CONSTRAINT "filter: must be ok, alert or bypass" CHECK (filter = 'ok' OR filter = 'alert' OR filter = 'bypass'),
    hours            REAL CONSTRAINT "hours: must be between 0 and 10000000 h" CHECK (hours BETWEEN 0 AND 10000000),
    case_drain_lpm   REAL CONSTRAINT "case_drain_lpm: must be between 0 and 10000 L/min" CHECK (case_drain_lpm BETWEEN 0 AND 10000),
    taken_by         TEXT NOT NULL DEFAULT '',
    note             TEXT NOT NULL DEFAULT '',
    UNIQUE (unit_id, taken_at)
) STRICT;
CREATE INDEX checks_taken_at ON checks (taken_at);

CREATE TABLE samples (
    id                INTEGER PRIMARY KEY,
    unit_id           INTEGER NOT NULL REFERENCES units (id) ON DELETE RESTRICT,
    sampled_at        TEXT NOT NULL CONSTRAINT "sampled_at: must be UTC 'YYYY-MM-DDTHH:MM:SSZ'"
                      CHECK (strftime('%Y-%m-%dT%H:%M:%SZ', unixepoch(sampled_at), 'unixepoch') IS sampled_at),
    kv40_cst          REAL CONSTRAINT "kv40_cst: must be above 0 and at most 100000 cSt" CHECK (kv40_cst > 0 AND kv40_cst <= 100000),
    kv100_cst         REAL CONSTRAINT "kv100_cst: must be above 0 and at most 10000 cSt" CHECK (kv100_cst > 0 AND kv100_cst <= 10000),
    visc_cst          REAL CONSTRAINT "visc_cst: must be above 0 and at most 100000 cSt" CHECK (visc_cst > 0 AND visc_cst <= 100000),
    visc_temp_c       REAL CONSTRAINT "visc_temp_c: must be between -40 and 150 °C" CHECK (visc_temp_c BETWEEN -40 AND 150),
    count_4um_per_ml  REAL CONSTRAINT "count_4um_per_ml: must be between 0 and 1e9 per mL" CHECK (count_4um_per_ml BETWEEN 0 AND 1e9),
    count_6um_per_ml  REAL CONSTRAINT "count_6um_per_ml: must be between 0 and 1e9 per mL" CHECK (count_6um_per_ml BETWEEN 0 AND 1e9),
    count_14um_per_ml REAL CONSTRAINT "count_14um_per_ml: must be between 0 and 1e9 per mL" CHECK (count_14um_per_ml BETWEEN 0 AND 1e9),
    iso4406           TEXT CONSTRAINT "iso4406: must look like 18/16/13" CHECK (length(iso4406) BETWEEN 5 AND 24 AND iso4406 GLOB '*/*/*'),
    water_ppm         REAL CONSTRAINT "water_ppm: must be between 0 and 1000000 ppm" CHECK (water_ppm BETWEEN 0 AND 1000000),
    acid_mgkoh_g      REAL CONSTRAINT "acid_mgkoh_g: must be between 0 and 50 mg KOH/g" CHECK (acid_mgkoh_g BETWEEN 0 AND 50),
    lab_ref           TEXT NOT NULL DEFAULT '',
    note              TEXT NOT NULL DEFAULT '',
    CONSTRAINT "kv100_cst: must be below kv40_cst" CHECK (kv100_cst < kv40_cst),
    CONSTRAINT "visc_temp_c: a viscosity reading needs its temperature, and a temperature its reading"
        CHECK ((visc_cst IS NULL) = (visc_temp_c IS NULL)),
    CONSTRAINT "count_6um_per_ml: must not exceed count_4um_per_ml" CHECK (count_6um_per_ml <= count_4um_per_ml),
    CONSTRAINT "count_14um_per_ml: must not exceed count_6um_per_ml" CHECK (count_14um_per_ml <= count_6um_per_ml),
    CONSTRAINT "count_14um_per_ml: must not exceed count_4um_per_ml" CHECK (count_14um_per_ml <= count_4um_per_ml),
    UNIQUE (unit_id, sampled_at)
) STRICT;

CREATE TABLE events (
    id       INTEGER PRIMARY KEY,
    unit_id  INTEGER NOT NULL REFERENCES units (id) ON DELETE RESTRICT,
    done_at  TEXT NOT NULL CONSTRAINT "done_at: must be UTC 'YYYY-MM-DDTHH:MM:SSZ'"
             CHECK (strftime('%Y-%m-%dT%H:%M:%SZ', unixepoch(done_at), 'unixepoch') IS done_at),
    kind     TEXT NOT NULL CONSTRAINT "kind: must be fluid_change, top_up, filter_change, rebuild, repair, cooler_clean or note"
             CHECK (kind IN ('fluid_change', 'top_up', 'filter_change', 'rebuild', 'repair', 'cooler_clean', 'note')),
    volume_l REAL CONSTRAINT "volume_l: must be above 0 and at most 100000 L" CHECK (volume_l > 0 AND volume_l <= 100000),
    fluid_id INTEGER REFERENCES fluids (id) ON DELETE RESTRICT,
    done_by  TEXT NOT NULL DEFAULT '',
    note     TEXT NOT NULL DEFAULT '',
    UNIQUE (unit_id, done_at, kind)
) STRICT;

CREATE TABLE manual_baselines (
    id         INTEGER PRIMARY KEY,
    unit_id    INTEGER NOT NULL REFERENCES units (id) ON DELETE RESTRICT,
    era_start  TEXT NOT NULL CONSTRAINT "era_start: must be UTC 'YYYY-MM-DDTHH:MM:SSZ'"
               CHECK (strftime('%Y-%m-%dT%H:%M:%SZ', unixepoch(era_start), 'unixepoch') IS era_start),
    indicator  TEXT NOT NULL CONSTRAINT "indicator: must not be empty" CHECK (length(trim(indicator)) > 0),
    value_si   REAL NOT NULL,
    spread_si  REAL NOT NULL CONSTRAINT "spread_si: must not be negative" CHECK (spread_si >= 0),
    entered_by TEXT NOT NULL CONSTRAINT "entered_by: must not be empty" CHECK (length(trim(entered_by)) > 0),
    entered_at TEXT NOT NULL CONSTRAINT "entered_at: must be UTC 'YYYY-MM-DDTHH:MM:SSZ'"
               CHECK (strftime('%Y-%m-%dT%H:%M:%SZ', unixepoch(entered_at), 'unixepoch') IS entered_at)
) STRICT;
CREATE INDEX manual_baselines_unit ON manual_baselines (unit_id, era_start);

-- Shop defaults have unit_id NULL; a row with a unit_id overrides the default for that unit.
CREATE TABLE limits (
    id      INTEGER PRIMARY KEY,
    unit_id INTEGER REFERENCES units (id) ON DELETE RESTRICT,
    key     TEXT NOT NULL CONSTRAINT "key: must not be empty" CHECK (length(trim(key)) > 0),
    watch   REAL,
    act     REAL
) STRICT;
CREATE UNIQUE INDEX limits_scope_key ON limits (ifnull(unit_id, 0), key);

CREATE TABLE acknowledgements (
    id       INTEGER PRIMARY KEY,
    unit_id  INTEGER NOT NULL REFERENCES units (id) ON DELETE RESTRICT,
    kind     TEXT NOT NULL CONSTRAINT "kind: must not be empty" CHECK (length(trim(kind)) > 0),
    state    TEXT NOT NULL CONSTRAINT "state: must be watch or act" CHECK (state IN ('watch', 'act')),
    ack_by   TEXT NOT NULL CONSTRAINT "ack_by: must not be empty" CHECK (length(trim(ack_by)) > 0),
    note     TEXT NOT NULL DEFAULT '',
    acked_at TEXT NOT NULL CONSTRAINT "acked_at: must be UTC 'YYYY-MM-DDTHH:MM:SSZ'"
             CHECK (strftime('%Y-%m-%dT%H:%M:%SZ', unixepoch(acked_at), 'unixepoch') IS acked_at)
) STRICT;
CREATE INDEX acknowledgements_unit ON acknowledgements (unit_id, acked_at);

-- Who is editing and why; filled and emptied by the writer inside the edit's own transaction.
CREATE TABLE edit_context (
    id        INTEGER PRIMARY KEY CHECK (id = 1),
    edited_by TEXT NOT NULL CONSTRAINT "edited_by: must not be empty" CHECK (length(trim(edited_by)) > 0),
    reason    TEXT NOT NULL,
    edited_at TEXT NOT NULL CONSTRAINT "edited_at: must be UTC 'YYYY-MM-DDTHH:MM:SSZ'"
              CHECK (strftime('%Y-%m-%dT%H:%M:%SZ', unixepoch(edited_at), 'unixepoch') IS edited_at)
) STRICT;

CREATE TABLE edit_log (
    id         INTEGER PRIMARY KEY,
    table_name TEXT NOT NULL,
    row_id     INTEGER NOT NULL,
    action     TEXT NOT NULL CHECK (action IN ('update', 'delete')),
    old_value  TEXT NOT NULL CHECK (json_valid(old_value)),
    new_value  TEXT CHECK (new_value IS NULL OR json_valid(new_value)),
    edited_by  TEXT NOT NULL CONSTRAINT "edited_by: an edit needs edit_context (who and why) in its transaction"
               CHECK (length(trim(edited_by)) > 0),
    reason     TEXT NOT NULL,
    edited_at  TEXT NOT NULL
) STRICT;
CREATE INDEX edit_log_row ON edit_log (table_name, row_id);

CREATE TRIGGER edit_log_no_update BEFORE UPDATE ON edit_log
BEGIN SELECT RAISE(ABORT, 'edit_log is append-only'); END;
CREATE TRIGGER edit_log_no_delete BEFORE DELETE ON edit_log
BEGIN SELECT RAISE(ABORT, 'edit_log is append-only'); END;

-- One UPDATE and one DELETE trigger per table that holds evidence or the register.
-- The JSON objects list every column, so the log reads on its own.

CREATE TRIGGER checks_log_update AFTER UPDATE ON checks
WHEN json_array(OLD.id, OLD.unit_id, OLD.taken_at, OLD.reservoir_temp_c, OLD.ambient_temp_c, OLD.pressure_bar, OLD.stroke_time_s,
                OLD.cycle_time_s, OLD.oil_level, OLD.filter, OLD.hours, OLD.case_drain_lpm, OLD.taken_by, OLD.note)
  IS NOT json_array(NEW.id, NEW.unit_id, NEW.taken_at, NEW.reservoir_temp_c, NEW.ambient_temp_c, NEW.pressure_bar, NEW.stroke_time_s,
                NEW.cycle_time_s, NEW.oil_level, NEW.filter, NEW.hours, NEW.case_drain_lpm, NEW.taken_by, NEW.note)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'checks', OLD.id, 'update',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'taken_at', OLD.taken_at, 'reservoir_temp_c', OLD.reservoir_temp_c,
            'ambient_temp_c', OLD.ambient_temp_c, 'pressure_bar', OLD.pressure_bar, 'stroke_time_s', OLD.stroke_time_s,
            'cycle_time_s', OLD.cycle_time_s, 'oil_level', OLD.oil_level, 'filter', OLD.filter, 'hours', OLD.hours,
            'case_drain_lpm', OLD.case_drain_lpm, 'taken_by', OLD.taken_by, 'note', OLD.note),
        json_object('id', NEW.id, 'unit_id', NEW.unit_id, 'taken_at', NEW.taken_at, 'reservoir_temp_c', NEW.reservoir_temp_c,
            'ambient_temp_c', NEW.ambient_temp_c, 'pressure_bar', NEW.pressure_bar, 'stroke_time_s', NEW.stroke_time_s,
            'cycle_time_s', NEW.cycle_time_s, 'oil_level', NEW.oil_level, 'filter', NEW.filter, 'hours', NEW.hours,
            'case_drain_lpm', NEW.case_drain_lpm, 'taken_by', NEW.taken_by, 'note', NEW.note),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER checks_log_delete AFTER DELETE ON checks
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'checks', OLD.id, 'delete',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'taken_at', OLD.taken_at, 'reservoir_temp_c', OLD.reservoir_temp_c,
            'ambient_temp_c', OLD.ambient_temp_c, 'pressure_bar', OLD.pressure_bar, 'stroke_time_s', OLD.stroke_time_s,
            'cycle_time_s', OLD.cycle_time_s, 'oil_level', OLD.oil_level, 'filter', OLD.filter, 'hours', OLD.hours,
            'case_drain_lpm', OLD.case_drain_lpm, 'taken_by', OLD.taken_by, 'note', OLD.note),
        NULL,
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;

CREATE TRIGGER samples_log_update AFTER UPDATE ON samples
WHEN json_array(OLD.id, OLD.unit_id, OLD.sampled_at, OLD.kv40_cst, OLD.kv100_cst, OLD.visc_cst, OLD.visc_temp_c, OLD.count_4um_per_ml,
                OLD.count_6um_per_ml, OLD.count_14um_per_ml, OLD.iso4406, OLD.water_ppm, OLD.acid_mgkoh_g, OLD.lab_ref, OLD.note)
  IS NOT json_array(NEW.id, NEW.unit_id, NEW.sampled_at, NEW.kv40_cst, NEW.kv100_cst, NEW.visc_cst, NEW.visc_temp_c, NEW.count_4um_per_ml,
                NEW.count_6um_per_ml, NEW.count_14um_per_ml, NEW.iso4406, NEW.water_ppm, NEW.acid_mgkoh_g, NEW.lab_ref, NEW.note)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'samples', OLD.id, 'update',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'sampled_at', OLD.sampled_at, 'kv40_cst', OLD.kv40_cst, 'kv100_cst', OLD.kv100_cst,
            'visc_cst', OLD.visc_cst, 'visc_temp_c', OLD.visc_temp_c, 'count_4um_per_ml', OLD.count_4um_per_ml,
            'count_6um_per_ml', OLD.count_6um_per_ml, 'count_14um_per_ml', OLD.count_14um_per_ml, 'iso4406', OLD.iso4406,
            'water_ppm', OLD.water_ppm, 'acid_mgkoh_g', OLD.acid_mgkoh_g, 'lab_ref', OLD.lab_ref, 'note', OLD.note),
        json_object('id', NEW.id, 'unit_id', NEW.unit_id, 'sampled_at', NEW.sampled_at, 'kv40_cst', NEW.kv40_cst, 'kv100_cst', NEW.kv100_cst,
            'visc_cst', NEW.visc_cst, 'visc_temp_c', NEW.visc_temp_c, 'count_4um_per_ml', NEW.count_4um_per_ml,
            'count_6um_per_ml', NEW.count_6um_per_ml, 'count_14um_per_ml', NEW.count_14um_per_ml, 'iso4406', NEW.iso4406,
            'water_ppm', NEW.water_ppm, 'acid_mgkoh_g', NEW.acid_mgkoh_g, 'lab_ref', NEW.lab_ref, 'note', NEW.note),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER samples_log_delete AFTER DELETE ON samples
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'samples', OLD.id, 'delete',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'sampled_at', OLD.sampled_at, 'kv40_cst', OLD.kv40_cst, 'kv100_cst', OLD.kv100_cst,
            'visc_cst', OLD.visc_cst, 'visc_temp_c', OLD.visc_temp_c, 'count_4um_per_ml', OLD.count_4um_per_ml,
            'count_6um_per_ml', OLD.count_6um_per_ml, 'count_14um_per_ml', OLD.count_14um_per_ml, 'iso4406', OLD.iso4406,
            'water_ppm', OLD.water_ppm, 'acid_mgkoh_g', OLD.acid_mgkoh_g, 'lab_ref', OLD.lab_ref, 'note', OLD.note),
        NULL,
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;

CREATE TRIGGER events_log_update AFTER UPDATE ON events
WHEN json_array(OLD.id, OLD.unit_id, OLD.done_at, OLD.kind, OLD.volume_l, OLD.fluid_id, OLD.done_by, OLD.note)
  IS NOT json_array(NEW.id, NEW.unit_id, NEW.done_at, NEW.kind, NEW.volume_l, NEW.fluid_id, NEW.done_by, NEW.note)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'events', OLD.id, 'update',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'done_at', OLD.done_at, 'kind', OLD.kind, 'volume_l', OLD.volume_l,
            'fluid_id', OLD.fluid_id, 'done_by', OLD.done_by, 'note', OLD.note),
        json_object('id', NEW.id, 'unit_id', NEW.unit_id, 'done_at', NEW.done_at, 'kind', NEW.kind, 'volume_l', NEW.volume_l,
            'fluid_id', NEW.fluid_id, 'done_by', NEW.done_by, 'note', NEW.note),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER events_log_delete AFTER DELETE ON events
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'events', OLD.id, 'delete',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'done_at', OLD.done_at, 'kind', OLD.kind, 'volume_l', OLD.volume_l,
            'fluid_id', OLD.fluid_id, 'done_by', OLD.done_by, 'note', OLD.note),
        NULL,
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;

CREATE TRIGGER units_log_update AFTER UPDATE ON units
WHEN json_array(OLD.id, OLD.machine_id, OLD.tag, OLD.pump_kind, OLD.rated_flow_lpm, OLD.relief_bar, OLD.reservoir_l, OLD.sensitive_component,
                OLD.fluid_id, OLD.stroke_bore_mm, OLD.stroke_rod_mm, OLD.stroke_length_mm, OLD.stroke_direction, OLD.route_order, OLD.archived)
  IS NOT json_array(NEW.id, NEW.machine_id, NEW.tag, NEW.pump_kind, NEW.rated_flow_lpm, NEW.relief_bar, NEW.reservoir_l, NEW.sensitive_component,
                NEW.fluid_id, NEW.stroke_bore_mm, NEW.stroke_rod_mm, NEW.stroke_length_mm, NEW.stroke_direction, NEW.route_order, NEW.archived)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'units', OLD.id, 'update',
        json_object('id', OLD.id, 'machine_id', OLD.machine_id, 'tag', OLD.tag, 'pump_kind', OLD.pump_kind, 'rated_flow_lpm', OLD.rated_flow_lpm,
            'relief_bar', OLD.relief_bar, 'reservoir_l', OLD.reservoir_l, 'sensitive_component', OLD.sensitive_component,
            'fluid_id', OLD.fluid_id, 'stroke_bore_mm', OLD.stroke_bore_mm, 'stroke_rod_mm', OLD.stroke_rod_mm,
            'stroke_length_mm', OLD.stroke_length_mm, 'stroke_direction', OLD.stroke_direction, 'route_order', OLD.route_order,
            'archived', OLD.archived),
        json_object('id', NEW.id, 'machine_id', NEW.machine_id, 'tag', NEW.tag, 'pump_kind', NEW.pump_kind, 'rated_flow_lpm', NEW.rated_flow_lpm,
            'relief_bar', NEW.relief_bar, 'reservoir_l', NEW.reservoir_l, 'sensitive_component', NEW.sensitive_component,
            'fluid_id', NEW.fluid_id, 'stroke_bore_mm', NEW.stroke_bore_mm, 'stroke_rod_mm', NEW.stroke_rod_mm,
            'stroke_length_mm', NEW.stroke_length_mm, 'stroke_direction', NEW.stroke_direction, 'route_order', NEW.route_order,
            'archived', NEW.archived),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER units_log_delete AFTER DELETE ON units
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'units', OLD.id, 'delete',
        json_object('id', OLD.id, 'machine_id', OLD.machine_id, 'tag', OLD.tag, 'pump_kind', OLD.pump_kind, 'rated_flow_lpm', OLD.rated_flow_lpm,
            'relief_bar', OLD.relief_bar, 'reservoir_l', OLD.reservoir_l, 'sensitive_component', OLD.sensitive_component,
            'fluid_id', OLD.fluid_id, 'stroke_bore_mm', OLD.stroke_bore_mm, 'stroke_rod_mm', OLD.stroke_rod_mm,
            'stroke_length_mm', OLD.stroke_length_mm, 'stroke_direction', OLD.stroke_direction, 'route_order', OLD.route_order,
            'archived', OLD.archived),
        NULL,
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;

CREATE TRIGGER machines_log_update AFTER UPDATE ON machines
WHEN json_array(OLD.id, OLD.tag, OLD.name, OLD.kind, OLD.route_order, OLD.notes, OLD.archived)
  IS NOT json_array(NEW.id, NEW.tag, NEW.name, NEW.kind, NEW.route_order, NEW.notes, NEW.archived)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'machines', OLD.id, 'update',
        json_object('id', OLD.id, 'tag', OLD.tag, 'name', OLD.name, 'kind', OLD.kind, 'route_order', OLD.route_order,
            'notes', OLD.notes, 'archived', OLD.archived),
        json_object('id', NEW.id, 'tag', NEW.tag, 'name', NEW.name, 'kind', NEW.kind, 'route_order', NEW.route_order,
            'notes', NEW.notes, 'archived', NEW.archived),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER machines_log_delete AFTER DELETE ON machines
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'machines', OLD.id, 'delete',
        json_object('id', OLD.id, 'tag', OLD.tag, 'name', OLD.name, 'kind', OLD.kind, 'route_order', OLD.route_order,
            'notes', OLD.notes, 'archived', OLD.archived),
        NULL,
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;

CREATE TRIGGER fluids_log_update AFTER UPDATE ON fluids
WHEN json_array(OLD.id, OLD.name, OLD.iso_vg, OLD.kv40_new_cst, OLD.kv100_new_cst, OLD.acid_new_mgkoh_g, OLD.base_type)
  IS NOT json_array(NEW.id, NEW.name, NEW.iso_vg, NEW.kv40_new_cst, NEW.kv100_new_cst, NEW.acid_new_mgkoh_g, NEW.base_type)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'fluids', OLD.id, 'update',
        json_object('id', OLD.id, 'name', OLD.name, 'iso_vg', OLD.iso_vg, 'kv40_new_cst', OLD.kv40_new_cst,
            'kv100_new_cst', OLD.kv100_new_cst, 'acid_new_mgkoh_g', OLD.acid_new_mgkoh_g, 'base_type', OLD.base_type),
        json_object('id', NEW.id, 'name', NEW.name, 'iso_vg', NEW.iso_vg, 'kv40_new_cst', NEW.kv40_new_cst,
            'kv100_new_cst', NEW.kv100_new_cst, 'acid_new_mgkoh_g', NEW.acid_new_mgkoh_g, 'base_type', NEW.base_type),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER fluids_log_delete AFTER DELETE ON fluids
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'fluids', OLD.id, 'delete',
        json_object('id', OLD.id, 'name', OLD.name, 'iso_vg', OLD.iso_vg, 'kv40_new_cst', OLD.kv40_new_cst,
            'kv100_new_cst', OLD.kv100_new_cst, 'acid_new_mgkoh_g', OLD.acid_new_mgkoh_g, 'base_type', OLD.base_type),
        NULL,
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;

CREATE TRIGGER limits_log_update AFTER UPDATE ON limits
WHEN json_array(OLD.id, OLD.unit_id, OLD.key, OLD.watch, OLD.act) IS NOT json_array(NEW.id, NEW.unit_id, NEW.key, NEW.watch, NEW.act)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'limits', OLD.id, 'update',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'key', OLD.key, 'watch', OLD.watch, 'act', OLD.act),
        json_object('id', NEW.id, 'unit_id', NEW.unit_id, 'key', NEW.key, 'watch', NEW.watch, 'act', NEW.act),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER limits_log_delete AFTER DELETE ON limits
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'limits', OLD.id, 'delete',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'key', OLD.key, 'watch', OLD.watch, 'act', OLD.act),
        NULL,
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;

CREATE TRIGGER manual_baselines_log_update AFTER UPDATE ON manual_baselines
WHEN json_array(OLD.id, OLD.unit_id, OLD.era_start, OLD.indicator, OLD.value_si, OLD.spread_si, OLD.entered_by, OLD.entered_at)
  IS NOT json_array(NEW.id, NEW.unit_id, NEW.era_start, NEW.indicator, NEW.value_si, NEW.spread_si, NEW.entered_by, NEW.entered_at)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'manual_baselines', OLD.id, 'update',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'era_start', OLD.era_start, 'indicator', OLD.indicator,
            'value_si', OLD.value_si, 'spread_si', OLD.spread_si, 'entered_by', OLD.entered_by, 'entered_at', OLD.entered_at),
        json_object('id', NEW.id, 'unit_id', NEW.unit_id, 'era_start', NEW.era_start, 'indicator', NEW.indicator,
            'value_si', NEW.value_si, 'spread_si', NEW.spread_si, 'entered_by', NEW.entered_by, 'entered_at', NEW.entered_at),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER manual_baselines_log_delete AFTER DELETE ON manual_baselines
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'manual_baselines', OLD.id, 'delete',
        json_object('id', OLD.id, 'unit_id', OLD.unit_id, 'era_start', OLD.era_start, 'indicator', OLD.indicator,
            'value_si', OLD.value_si, 'spread_si', OLD.spread_si, 'entered_by', OLD.entered_by, 'entered_at', OLD.entered_at),
        NULL,
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;

CREATE TRIGGER settings_log_update AFTER UPDATE ON settings
WHEN json_array(OLD.shop_name, OLD.unit_system, OLD.time_zone) IS NOT json_array(NEW.shop_name, NEW.unit_system, NEW.time_zone)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'settings', OLD.id, 'update',
        json_object('shop_name', OLD.shop_name, 'unit_system', OLD.unit_system, 'time_zone', OLD.time_zone),
        json_object('shop_name', NEW.shop_name, 'unit_system', NEW.unit_system, 'time_zone', NEW.time_zone),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
CREATE TRIGGER settings_no_delete BEFORE DELETE ON settings
BEGIN SELECT RAISE(ABORT, 'settings cannot be deleted'); END;
