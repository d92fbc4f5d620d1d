-- sumpbook schema, version 8, for a PostgreSQL server: each unit's evaluation kept with what it
-- was computed from, as in version 8 of the shop file.
--
-- eval_revisions holds a counter per unit (unit_id 0: the shop-wide one for settings, shop-wide
-- limits and fluids) that one trigger function raises on every insert, update and delete of a
-- row that feeds a unit's evaluation, whoever writes it; it runs with the rights of the schema's
-- owner, so a signed-in role needs no right on the counters. kept_evaluations holds a unit's
-- evaluation with the counters it was computed at, the engine that computed it and the span of
-- instants it holds for; a kept evaluation is read only while all of these still match. Slot 0
-- keeps the evaluation of the present, slot 1 the latest replay of an earlier date. Both tables
-- are derived, not evidence: no edit history, no change signal (writing a kept evaluation is
-- not a change of the shop), and a copy of the shop leaves them out. Every shop role may write
-- kept evaluations, since any of them may be the first to evaluate a unit.

CREATE TABLE eval_revisions (
    unit_id BIGINT PRIMARY KEY,
    rev     BIGINT NOT NULL
);
INSERT INTO eval_revisions (unit_id, rev) VALUES (0, 1);
INSERT INTO eval_revisions (unit_id, rev) SELECT id, 1 FROM units;

CREATE TABLE kept_evaluations (
    unit_id      BIGINT NOT NULL,
    slot         BIGINT NOT NULL CHECK (slot IN (0, 1)),
    unit_rev     BIGINT NOT NULL,
    shop_rev     BIGINT NOT NULL,
    engine       TEXT COLLATE "C" NOT NULL,
    evaluated_at TEXT COLLATE "C" NOT NULL,
    holds_until  TEXT COLLATE "C" NOT NULL,
    body         TEXT COLLATE "C" NOT NULL,
    PRIMARY KEY (unit_id, slot)
);

-- A counter that is removed or lowered takes the evaluations kept against it along.
CREATE FUNCTION sumpbook_eval_forget() RETURNS trigger LANGUAGE plpgsql SECURITY DEFINER
SET search_path FROM CURRENT AS $$
BEGIN
    DELETE FROM kept_evaluations WHERE unit_id = OLD.unit_id OR OLD.unit_id = 0;
    RETURN NULL;
END;
$$;
CREATE TRIGGER eval_revisions_gone AFTER DELETE ON eval_revisions
    FOR EACH ROW EXECUTE FUNCTION sumpbook_eval_forget();
CREATE TRIGGER eval_revisions_lowered AFTER UPDATE OF rev ON eval_revisions
    FOR EACH ROW WHEN (NEW.rev <= OLD.rev) EXECUTE FUNCTION sumpbook_eval_forget();

-- Raises the counters of the units a written row feeds (the shop-wide one for settings,
-- fluids and shop-wide limits).
CREATE FUNCTION sumpbook_eval_touch() RETURNS trigger LANGUAGE plpgsql SECURITY DEFINER
SET search_path FROM CURRENT AS $$
DECLARE
    ids bigint[] := ARRAY[]::bigint[];
BEGIN
    IF TG_TABLE_NAME IN ('settings', 'fluids') THEN
        ids := ARRAY[0::bigint];
    ELSIF TG_TABLE_NAME = 'units' THEN
        IF TG_OP = 'INSERT' THEN
            INSERT INTO eval_revisions (unit_id, rev) VALUES (NEW.id, 1)
                ON CONFLICT (unit_id) DO UPDATE SET rev = eval_revisions.rev + 1;
            RETURN NULL;
        END IF;
        ids := ids || OLD.id;
        IF TG_OP = 'UPDATE' THEN
            ids := ids || NEW.id;
        END IF;
    ELSIF TG_TABLE_NAME = 'machines' THEN
        UPDATE eval_revisions SET rev = rev + 1
        WHERE unit_id IN (SELECT id FROM units WHERE machine_id = OLD.id OR machine_id = NEW.id);
        RETURN NULL;
    ELSIF TG_TABLE_NAME = 'limits' THEN
        IF TG_OP <> 'INSERT' THEN
            ids := ids || coalesce(OLD.unit_id, 0);
        END IF;
        IF TG_OP <> 'DELETE' THEN
            ids := ids || coalesce(NEW.unit_id, 0);
        END IF;
    ELSE
        IF TG_OP <> 'INSERT' THEN
            ids := ids || OLD.unit_id;
        END IF;
        IF TG_OP <> 'DELETE' THEN
            ids := ids || NEW.unit_id;
        END IF;
    END IF;
    UPDATE eval_revisions SET rev = rev + 1 WHERE unit_id = ANY (ids);
    RETURN NULL;
END;
$$;

CREATE TRIGGER units_eval AFTER INSERT OR UPDATE OR DELETE ON units
    FOR EACH ROW EXECUTE FUNCTION sumpbook_eval_touch();
CREATE TRIGGER machines_eval AFTER UPDATE ON machines
    FOR EACH ROW EXECUTE FUNCTION sumpbook_eval_touch();
CREATE TRIGGER checks_eval AFTER INSERT OR UPDATE OR DELETE ON checks
    FOR EACH ROW EXECUTE FUNCTION sumpbook_eval_touch();
CREATE TRIGGER samples_eval AFTER INSERT OR UPDATE OR DELETE ON samples
    FOR EACH ROW EXECUTE FUNCTION sumpbook_eval_touch();
CREATE TRIGGER events_eval AFTER INSERT OR UPDATE OR DELETE ON events
    FOR EACH ROW EXECUTE FUNCTION sumpbook_eval_touch();
CREATE TRIGGER manual_baselines_eval AFTER INSERT OR UPDATE OR DELETE ON manual_baselines
    FOR EACH ROW EXECUTE FUNCTION sumpbook_eval_touch();
CREATE TRIGGER acknowledgements_eval AFTER INSERT ON acknowledgements
    FOR EACH ROW EXECUTE FUNCTION sumpbook_eval_touch();
CREATE TRIGGER limits_eval AFTER INSERT OR UPDATE OR DELETE ON limits
    FOR EACH ROW EXECUTE FUNCTION sumpbook_eval_touch();
CREATE TRIGGER fluids_eval AFTER INSERT OR UPDATE OR DELETE ON fluids
    FOR EACH ROW EXECUTE FUNCTION sumpbook_eval_touch();
CREATE TRIGGER settings_eval AFTER UPDATE ON settings
    FOR EACH ROW EXECUTE FUNCTION sumpbook_eval_touch();

-- The shop roles made before this version may keep evaluations too (roles made later are
-- granted it with the rest of their rights).
DO $$
DECLARE
    r text;
BEGIN
    FOREACH r IN ARRAY ARRAY['sumpbook_technician', 'sumpbook_engineer', 'sumpbook_supervisor'] LOOP
        IF EXISTS (SELECT 1 FROM pg_roles WHERE rolname = r) THEN
            EXECUTE format('GRANT SELECT, INSERT, UPDATE, DELETE ON kept_evaluations TO %I', r);
        END IF;
    END LOOP;
END;
$$;
