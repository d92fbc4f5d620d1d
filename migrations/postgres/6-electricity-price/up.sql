-- sumpbook schema, version 6, for a PostgreSQL server: the shop's electricity price, as in
-- version 6 of the shop file.
--
-- The price of a kilowatt-hour in the shop's own currency; NULL while nobody has set it. Changing
-- it is an UPDATE of settings: the history function writes the column into its JSON and the
-- trigger fires when it changes.

ALTER TABLE settings ADD COLUMN electricity_price DOUBLE PRECISION
    CONSTRAINT "electricity_price: must be between 0 and 100 per kWh"
    CHECK (electricity_price BETWEEN 0 AND 100);

CREATE OR REPLACE FUNCTION sumpbook_log_edit() RETURNS trigger LANGUAGE plpgsql SECURITY DEFINER
SET search_path FROM CURRENT AS $$
DECLARE
    old_json text;
    new_json text;
BEGIN
    IF TG_TABLE_NAME = 'settings' THEN
        old_json := json_build_object('shop_name', OLD.shop_name, 'unit_system', OLD.unit_system, 'time_zone', OLD.time_zone,
            'electricity_price', OLD.electricity_price)::text;
        IF TG_OP = 'UPDATE' THEN
            new_json := json_build_object('shop_name', NEW.shop_name, 'unit_system', NEW.unit_system, 'time_zone', NEW.time_zone,
                'electricity_price', NEW.electricity_price)::text;
        END IF;
    ELSE
        old_json := row_to_json(OLD)::text;
        IF TG_OP = 'UPDATE' THEN
            new_json := row_to_json(NEW)::text;
        END IF;
    END IF;
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    VALUES (TG_TABLE_NAME, OLD.id, lower(TG_OP), old_json, new_json,
            nullif(current_setting('sumpbook.edited_by', true), ''),
            coalesce(current_setting('sumpbook.reason', true), ''),
            coalesce(current_setting('sumpbook.edited_at', true), ''));
    RETURN NULL;
END;
$$;

DROP TRIGGER settings_log_update ON settings;
CREATE TRIGGER settings_log_update AFTER UPDATE ON settings FOR EACH ROW
    WHEN ((OLD.shop_name, OLD.unit_system, OLD.time_zone, OLD.electricity_price)
        IS DISTINCT FROM (NEW.shop_name, NEW.unit_system, NEW.time_zone, NEW.electricity_price))
    EXECUTE FUNCTION sumpbook_log_edit();
