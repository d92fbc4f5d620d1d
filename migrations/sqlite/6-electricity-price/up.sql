-- sumpbook schema, version 6: the shop's electricity price, for what lost flow costs a year.
--
-- The price of a kilowatt-hour in the shop's own currency (no currency is named: the figure is
-- the shop's). NULL while nobody has set it; then the cost of waiting is given in kW and kWh a
-- year only. Changing it is an UPDATE of settings, so the history trigger is made again with the
-- column in its JSON.

ALTER TABLE settings ADD COLUMN electricity_price REAL
    CONSTRAINT "electricity_price: must be between 0 and 100 per kWh"
    CHECK (electricity_price BETWEEN 0 AND 100);

DROP TRIGGER settings_log_update;
CREATE TRIGGER settings_log_update AFTER UPDATE ON settings
WHEN json_array(OLD.shop_name, OLD.unit_system, OLD.time_zone, OLD.electricity_price)
  IS NOT json_array(NEW.shop_name, NEW.unit_system, NEW.time_zone, NEW.electricity_price)
BEGIN
    INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at)
    SELECT 'settings', OLD.id, 'update',
        json_object('shop_name', OLD.shop_name, 'unit_system', OLD.unit_system, 'time_zone', OLD.time_zone,
            'electricity_price', OLD.electricity_price),
        json_object('shop_name', NEW.shop_name, 'unit_system', NEW.unit_system, 'time_zone', NEW.time_zone,
            'electricity_price', NEW.electricity_price),
        (SELECT edited_by FROM edit_context WHERE id = 1), ifnull((SELECT reason FROM edit_context WHERE id = 1), ''),
        ifnull((SELECT edited_at FROM edit_context WHERE id = 1), '');
END;
