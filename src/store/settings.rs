//! Shop-wide settings (the one row of `settings`) and the file's `sumpbook_meta` facts.

use super::db::params;

use super::{Store, StoreError};
use crate::model::Settings;
use crate::units::UnitSystem;

fn unit_system_text(u: UnitSystem) -> &'static str {
    match u {
        UnitSystem::Metric => "metric",
        UnitSystem::Us => "us",
    }
}

impl Store {
    pub fn settings(&self) -> Result<Settings, StoreError> {
        let (shop_name, system, time_zone, electricity_price): (String, String, String, Option<f64>) =
            self.query_one(
                "SELECT shop_name, unit_system, time_zone, electricity_price FROM settings WHERE id = 1",
                params![],
                |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?, r.get(3)?)),
            )?;
        let unit_system = match system.as_str() {
            "metric" => UnitSystem::Metric,
            "us" => UnitSystem::Us,
            other => return Err(StoreError::Corrupt(format!("unit system `{other}`"))),
        };
        Ok(Settings {
            shop_name,
            unit_system,
            time_zone,
            electricity_price,
        })
    }

    /// Changes the settings; the old values are kept in the edit history.
    pub fn set_settings(&self, s: &Settings, by: &str, reason: &str) -> Result<(), StoreError> {
        self.with_edit(by, reason, |st| {
            st.exec(
                "UPDATE settings SET shop_name = ?1, unit_system = ?2, time_zone = ?3, \
                 electricity_price = ?4 WHERE id = 1",
                params![
                    s.shop_name.trim(),
                    unit_system_text(s.unit_system),
                    s.time_zone.trim(),
                    s.electricity_price
                ],
            )?;
            Ok(())
        })
    }

    /// A fact about the file from `sumpbook_meta` (e.g. `application`, `created_with_schema`).
    pub fn meta(&self, key: &str) -> Result<Option<String>, StoreError> {
        self.query_opt(
            "SELECT value FROM sumpbook_meta WHERE key = ?1",
            params![key],
            |r| r.get(0),
        )
    }
}
