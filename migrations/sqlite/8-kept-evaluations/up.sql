-- sumpbook schema, version 8: each unit's evaluation kept with what it was computed from.
--
-- A unit's evaluation (state, flags, tiles, planned work) depends only on its own rows, on the
-- shop's settings, shop-wide limits and fluids, on the program's engine and on the date judged.
-- eval_revisions holds a counter per unit (unit_id 0: the shop-wide one) that the triggers
-- below raise on every insert, update and delete of a row that feeds the evaluation, whoever
-- writes it (sumpbook, another program, the sqlite3 shell). kept_evaluations holds a unit's
-- evaluation with the counters it was computed at, the engine that computed it and the span
-- of instants it holds for; the program reads a kept evaluation only while all of these still
-- match, so none is ever read stale. Slot 0 keeps the evaluation of the present, slot 1 the
-- latest replay of an earlier date. Both tables are derived, not evidence: they have no edit
-- history, a copy of the shop leaves them out, and emptying kept_evaluations only costs time.

CREATE TABLE eval_revisions (
    unit_id INTEGER PRIMARY KEY,
    rev     INTEGER NOT NULL
) STRICT;
INSERT INTO eval_revisions (unit_id, rev) VALUES (0, 1);
INSERT INTO eval_revisions (unit_id, rev) SELECT id, 1 FROM units;

CREATE TABLE kept_evaluations (
    unit_id      INTEGER NOT NULL,
    slot         INTEGER NOT NULL CHECK (slot IN (0, 1)),
    unit_rev     INTEGER NOT NULL,
    shop_rev     INTEGER NOT NULL,
    engine       TEXT NOT NULL,
    evaluated_at TEXT NOT NULL,
    holds_until  TEXT NOT NULL,
    body         TEXT NOT NULL,
    PRIMARY KEY (unit_id, slot)
) STRICT;

-- A counter that is removed takes the evaluations kept against it along (a counter made again
-- starts low and could meet an old one).
CREATE TRIGGER eval_revisions_gone AFTER DELETE ON eval_revisions
BEGIN
    DELETE FROM kept_evaluations WHERE unit_id = OLD.unit_id OR OLD.unit_id = 0;
END;
CREATE TRIGGER eval_revisions_lowered AFTER UPDATE OF rev ON eval_revisions WHEN NEW.rev <= OLD.rev
BEGIN
    DELETE FROM kept_evaluations WHERE unit_id = OLD.unit_id OR OLD.unit_id = 0;
END;

CREATE TRIGGER units_eval_insert AFTER INSERT ON units
BEGIN
    INSERT INTO eval_revisions (unit_id, rev) VALUES (NEW.id, 1)
        ON CONFLICT (unit_id) DO UPDATE SET rev = rev + 1;
END;
CREATE TRIGGER units_eval_update AFTER UPDATE ON units
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = OLD.id OR unit_id = NEW.id;
END;
CREATE TRIGGER units_eval_delete AFTER DELETE ON units
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = OLD.id;
END;

CREATE TRIGGER machines_eval_update AFTER UPDATE ON machines
BEGIN
    UPDATE eval_revisions SET rev = rev + 1
    WHERE unit_id IN (SELECT id FROM units WHERE machine_id = OLD.id OR machine_id = NEW.id);
END;

CREATE TRIGGER checks_eval_insert AFTER INSERT ON checks
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = NEW.unit_id;
END;
CREATE TRIGGER checks_eval_update AFTER UPDATE ON checks
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = OLD.unit_id OR unit_id = NEW.unit_id;
END;
CREATE TRIGGER checks_eval_delete AFTER DELETE ON checks
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = OLD.unit_id;
END;

CREATE TRIGGER samples_eval_insert AFTER INSERT ON samples
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = NEW.unit_id;
END;
CREATE TRIGGER samples_eval_update AFTER UPDATE ON samples
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = OLD.unit_id OR unit_id = NEW.unit_id;
END;
CREATE TRIGGER samples_eval_delete AFTER DELETE ON samples
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = OLD.unit_id;
END;

CREATE TRIGGER events_eval_insert AFTER INSERT ON events
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = NEW.unit_id;
END;
CREATE TRIGGER events_eval_update AFTER UPDATE ON events
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = OLD.unit_id OR unit_id = NEW.unit_id;
END;
CREATE TRIGGER events_eval_delete AFTER DELETE ON events
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = OLD.unit_id;
END;

CREATE TRIGGER manual_baselines_eval_insert AFTER INSERT ON manual_baselines
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = NEW.unit_id;
END;
CREATE TRIGGER manual_baselines_eval_update AFTER UPDATE ON manual_baselines
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = OLD.unit_id OR unit_id = NEW.unit_id;
END;
CREATE TRIGGER manual_baselines_eval_delete AFTER DELETE ON manual_baselines
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = OLD.unit_id;
END;

-- Acknowledgements are only ever added (version 4 refuses changing or deleting one).
CREATE TRIGGER acknowledgements_eval_insert AFTER INSERT ON acknowledgements
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = NEW.unit_id;
END;

-- A shop-wide limit (unit_id NULL) moves the shop-wide counter, a unit's own that unit's.
CREATE TRIGGER limits_eval_insert AFTER INSERT ON limits
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = ifnull(NEW.unit_id, 0);
END;
CREATE TRIGGER limits_eval_update AFTER UPDATE ON limits
BEGIN
    UPDATE eval_revisions SET rev = rev + 1
    WHERE unit_id = ifnull(OLD.unit_id, 0) OR unit_id = ifnull(NEW.unit_id, 0);
END;
CREATE TRIGGER limits_eval_delete AFTER DELETE ON limits
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = ifnull(OLD.unit_id, 0);
END;

CREATE TRIGGER fluids_eval_insert AFTER INSERT ON fluids
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = 0;
END;
CREATE TRIGGER fluids_eval_update AFTER UPDATE ON fluids
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = 0;
END;
CREATE TRIGGER fluids_eval_delete AFTER DELETE ON fluids
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = 0;
END;

CREATE TRIGGER settings_eval_update AFTER UPDATE ON settings
BEGIN
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = 0;
END;
