//! Hand-entered baselines and stored limits: the `manual_baselines` and `limits` tables.
//!
//! Baseline values are kept in SI (`value_si`, `spread_si`) because an indicator's unit depends
//! on the indicator. Limits are keyed by text keys; a row without a unit is the shop default, a
//! row with one overrides it for that unit. No health rules here: the engine decides what a key
//! means and what the defaults are.

use super::db::{params, Row};

use super::{fmt_time, fmt_time_stamp, time_col, Store, StoreError};
use crate::model::{Id, LimitSetting, ManualBaseline};

const BASELINE_COLS: &str =
    "id, unit_id, era_start, indicator, value_si, spread_si, entered_by, entered_at";

pub(crate) fn baseline_from_row(r: &Row<'_>) -> Result<ManualBaseline, StoreError> {
    Ok(ManualBaseline {
        id: r.get(0)?,
        unit_id: r.get(1)?,
        era_start: time_col(r, 2)?,
        indicator: r.get(3)?,
        value: r.get(4)?,
        spread: r.get(5)?,
        entered_by: r.get(6)?,
        entered_at: time_col(r, 7)?,
    })
}

pub(crate) fn baseline_sql() -> String {
    format!("SELECT {BASELINE_COLS} FROM manual_baselines")
}

fn finite(field: &str, v: Option<f64>) -> Result<(), StoreError> {
    match v {
        Some(x) if !x.is_finite() => Err(StoreError::Invalid {
            field: field.into(),
            reason: "must be a finite number".into(),
        }),
        _ => Ok(()),
    }
}

impl Store {
    /// Stores a hand-entered baseline value and returns its id. `entered_at` is kept to the second.
    pub fn insert_manual_baseline(&self, b: &ManualBaseline) -> Result<Id, StoreError> {
        finite("value_si", Some(b.value))?;
        finite("spread_si", Some(b.spread))?;
        self.insert_row(
            "INSERT INTO manual_baselines (unit_id, era_start, indicator, value_si, spread_si, entered_by, entered_at) \
             VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7)",
        params![
            b.unit_id,
            fmt_time("era_start", &b.era_start)?,
            b.indicator.trim(),
            b.value,
            b.spread,
            b.entered_by.trim(),
            fmt_time_stamp(&b.entered_at)
        ])
    }

    /// The hand-entered baselines of one unit, oldest era first, latest entry last.
    pub fn manual_baselines(&self, unit_id: Id) -> Result<Vec<ManualBaseline>, StoreError> {
        let sql = format!(
            "{} WHERE unit_id = ?1 ORDER BY era_start, entered_at, id",
            baseline_sql()
        );
        self.query(&sql, params![unit_id], baseline_from_row)
    }

    /// Withdraws a hand-entered baseline; the value stays in the edit history.
    pub fn delete_manual_baseline(&self, id: Id, by: &str, reason: &str) -> Result<(), StoreError> {
        self.with_edit(by, reason, |s| {
            let n = s.exec("DELETE FROM manual_baselines WHERE id = ?1", params![id])?;
            if n == 0 {
                return Err(StoreError::NotFound(format!("manual baseline {id}")));
            }
            Ok(())
        })
    }

    /// Every stored limit: shop defaults (`unit_id` None) first, then overrides by unit.
    pub fn limits(&self) -> Result<Vec<LimitSetting>, StoreError> {
        self.query("SELECT unit_id, key, watch, act FROM limits ORDER BY unit_id IS NOT NULL, unit_id, key", params![], |r| {
            Ok(LimitSetting {
                unit_id: r.get(0)?,
                key: r.get(1)?,
                watch: r.get(2)?,
                act: r.get(3)?,
            })
        })
    }

    /// Sets a shop default (`unit_id` None) or a unit's override; a changed value is kept in the
    /// edit history.
    pub fn set_limit(&self, l: &LimitSetting, by: &str, reason: &str) -> Result<(), StoreError> {
        if l.key.trim().is_empty() {
            return Err(StoreError::Invalid {
                field: "key".into(),
                reason: "must not be empty".into(),
            });
        }
        finite("watch", l.watch)?;
        finite("act", l.act)?;
        self.with_edit(by, reason, |s| {
            let n = s.exec("UPDATE limits SET watch = ?3, act = ?4 WHERE unit_id IS NOT DISTINCT FROM ?1 AND key = ?2", params![l.unit_id, l.key.trim(), l.watch, l.act])?;
            if n == 0 {
                s.exec("INSERT INTO limits (unit_id, key, watch, act) VALUES (?1, ?2, ?3, ?4)", params![l.unit_id, l.key.trim(), l.watch, l.act])?;
            }
            Ok(())
        })
    }

    /// Removes a stored limit (the unit falls back to the shop default, the shop to the
    /// program's default); the old value is kept in the edit history. Returns whether one existed.
    pub fn remove_limit(
        &self,
        unit_id: Option<Id>,
        key: &str,
        by: &str,
        reason: &str,
    ) -> Result<bool, StoreError> {
        self.with_edit(by, reason, |s| {
            let n = s.exec(
                "DELETE FROM limits WHERE unit_id IS NOT DISTINCT FROM ?1 AND key = ?2",
                params![unit_id, key.trim()],
            )?;
            Ok(n > 0)
        })
    }
}
