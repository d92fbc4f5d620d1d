//! Walk-round checks: typed reads and writes of the `checks` table.
//!
//! One row per unit and time (the pair is unique). Values go in as SI model records and are
//! stored in the units of the column names. Edits and deletions are kept in the edit history.
//! No CSV, no health.

use super::db::{params, Row, ToDb};
use chrono::{DateTime, Utc};

use super::columns::{bar, lpm, secs, temp_c, tidy};
use super::{
    confirmation_cols, confirmation_time, fmt_time, fmt_time_stamp, opt_enum_col, time_col, Store,
    StoreError,
};
use crate::model::{Check, Confirmation, Id};
use crate::units::{Flow, Pressure, Seconds, Temperature};

pub(crate) const CHECK_COLS: &str =
    "id, unit_id, taken_at, reservoir_temp_c, ambient_temp_c, pressure_bar, \
     stroke_time_s, cycle_time_s, oil_level, filter, hours, case_drain_lpm, taken_by, note, \
     confirmed_by, confirmed_at";

pub(crate) fn check_from_row(r: &Row<'_>) -> Result<Check, StoreError> {
    Ok(Check {
        id: r.get(0)?,
        unit_id: r.get(1)?,
        taken_at: time_col(r, 2)?,
        reservoir_temp: r.get::<Option<f64>>(3)?.map(Temperature::from_c),
        ambient_temp: r.get::<Option<f64>>(4)?.map(Temperature::from_c),
        pressure: r.get::<Option<f64>>(5)?.map(Pressure::from_bar),
        stroke_time: r.get::<Option<f64>>(6)?.map(Seconds),
        cycle_time: r.get::<Option<f64>>(7)?.map(Seconds),
        oil_level: opt_enum_col(r, 8)?,
        filter: opt_enum_col(r, 9)?,
        hours: r.get(10)?,
        case_drain: r.get::<Option<f64>>(11)?.map(Flow::from_lpm),
        by: r.get(12)?,
        note: r.get(13)?,
        confirmed: confirmation_cols(r, 14)?,
    })
}

/// A check in column units, ready to bind (`CHECK_COLS` order after `id`).
#[derive(Debug, PartialEq)]
pub(crate) struct CheckRow<'a> {
    pub unit_id: Id,
    pub taken_at: String,
    pub reservoir_temp_c: Option<f64>,
    pub ambient_temp_c: Option<f64>,
    pub pressure_bar: Option<f64>,
    pub stroke_time_s: Option<f64>,
    pub cycle_time_s: Option<f64>,
    pub oil_level: Option<&'static str>,
    pub filter: Option<&'static str>,
    pub hours: Option<f64>,
    pub case_drain_lpm: Option<f64>,
    pub taken_by: &'a str,
    pub note: &'a str,
    pub confirmed_by: Option<&'a str>,
    pub confirmed_at: Option<String>,
}

impl<'a> CheckRow<'a> {
    pub fn from_model(c: &'a Check) -> Result<Self, StoreError> {
        Ok(CheckRow {
            unit_id: c.unit_id,
            taken_at: fmt_time("taken_at", &c.taken_at)?,
            reservoir_temp_c: c.reservoir_temp.map(temp_c),
            ambient_temp_c: c.ambient_temp.map(temp_c),
            pressure_bar: c.pressure.map(bar),
            stroke_time_s: c.stroke_time.map(secs),
            cycle_time_s: c.cycle_time.map(secs),
            oil_level: c.oil_level.map(|v| v.as_str()),
            filter: c.filter.map(|v| v.as_str()),
            hours: c.hours.map(tidy),
            case_drain_lpm: c.case_drain.map(lpm),
            taken_by: &c.by,
            note: &c.note,
            confirmed_by: c.confirmed.as_ref().map(|k| k.by.as_str()),
            confirmed_at: confirmation_time(&c.confirmed)?,
        })
    }

    pub fn params(&self) -> [&dyn ToDb; 15] {
        [
            &self.unit_id,
            &self.taken_at,
            &self.reservoir_temp_c,
            &self.ambient_temp_c,
            &self.pressure_bar,
            &self.stroke_time_s,
            &self.cycle_time_s,
            &self.oil_level,
            &self.filter,
            &self.hours,
            &self.case_drain_lpm,
            &self.taken_by,
            &self.note,
            &self.confirmed_by,
            &self.confirmed_at,
        ]
    }
}

/// The checks of one unit up to a time (`?1` unit, `?2` time), oldest first.
pub(crate) fn unit_checks_sql() -> String {
    format!(
        "SELECT {CHECK_COLS} FROM checks WHERE unit_id = ?1 AND taken_at <= ?2 ORDER BY taken_at"
    )
}

pub(crate) const INSERT_CHECK: &str = "INSERT INTO checks (unit_id, taken_at, reservoir_temp_c, ambient_temp_c, \
     pressure_bar, stroke_time_s, cycle_time_s, oil_level, filter, hours, case_drain_lpm, taken_by, note, \
     confirmed_by, confirmed_at) \
     VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15)";

impl Store {
    /// Adds one check and returns its id. A check of the same unit at the same time is refused.
    pub fn insert_check(&self, c: &Check) -> Result<Id, StoreError> {
        let row = CheckRow::from_model(c)?;
        self.insert_row(
            &self.reading_insert(INSERT_CHECK, "checks"),
            &row.params()[..],
        )
    }

    /// Adds many checks in one transaction: all or none.
    pub fn insert_checks(&self, checks: &[Check]) -> Result<Vec<Id>, StoreError> {
        let tx = self.begin()?;
        let mut ids = Vec::with_capacity(checks.len());
        let insert = self.reading_insert(INSERT_CHECK, "checks");
        for c in checks {
            let row = CheckRow::from_model(c)?;
            ids.push(self.insert_row(&insert, &row.params()[..])?);
        }
        tx.commit()?;
        Ok(ids)
    }

    pub fn check(&self, id: Id) -> Result<Option<Check>, StoreError> {
        let sql = format!("SELECT {CHECK_COLS} FROM checks WHERE id = ?1");
        self.query_opt(&sql, params![id], check_from_row)
    }

    /// The checks of one unit, oldest first; with `at`, only those taken at or before it.
    pub fn checks_for_unit(
        &self,
        unit_id: Id,
        at: Option<DateTime<Utc>>,
    ) -> Result<Vec<Check>, StoreError> {
        let until = super::history::until_text(at);
        self.query(&unit_checks_sql(), params![unit_id, until], check_from_row)
    }

    /// The latest check of every unit that has one, ordered by unit id.
    pub fn latest_checks(&self) -> Result<Vec<Check>, StoreError> {
        // (unit, time) is unique, so each unit's latest time names one row.
        let sql = format!(
            "SELECT {CHECK_COLS} FROM checks WHERE (unit_id, taken_at) IN \
             (SELECT unit_id, max(taken_at) FROM checks GROUP BY unit_id) ORDER BY unit_id"
        );
        self.query(&sql, params![], check_from_row)
    }

    /// Changes a stored check (found by `c.id`); the old and new values go to the edit history
    /// with `by` and `reason`.
    pub fn update_check(&self, c: &Check, by: &str, reason: &str) -> Result<(), StoreError> {
        let row = CheckRow::from_model(c)?;
        self.with_edit(by, reason, |s| {
            let mut p: Vec<&dyn ToDb> = row.params().to_vec();
            p.push(&c.id);
            let n = s.exec(
                    "UPDATE checks SET unit_id = ?1, taken_at = ?2, reservoir_temp_c = ?3, ambient_temp_c = ?4, \
                     pressure_bar = ?5, stroke_time_s = ?6, cycle_time_s = ?7, oil_level = ?8, filter = ?9, hours = ?10, \
                     case_drain_lpm = ?11, taken_by = ?12, note = ?13, confirmed_by = ?14, confirmed_at = ?15 \
                     WHERE id = ?16",
                &p[..])?;
            if n == 0 {
                return Err(StoreError::NotFound(format!("check {}", c.id)));
            }
            Ok(())
        })
    }

    /// The check of unit `unit_id` taken at exactly `at`, if there is one.
    pub fn check_at(&self, unit_id: Id, at: &DateTime<Utc>) -> Result<Option<Check>, StoreError> {
        let sql = format!("SELECT {CHECK_COLS} FROM checks WHERE unit_id = ?1 AND taken_at = ?2");
        self.query_opt(&sql, params![unit_id, fmt_time_stamp(at)], check_from_row)
    }

    /// Whether any stored check is confirmed (an export then carries the confirmation columns).
    pub fn any_confirmed_check(&self) -> Result<bool, StoreError> {
        self.query_one(
            "SELECT EXISTS (SELECT 1 FROM checks WHERE confirmed_by IS NOT NULL)",
            params![],
            |r| r.get(0),
        )
    }

    /// Marks a stored check as confirmed by a person (`Some`), or lifts its confirmation
    /// (`None`). Only the confirmation changes; the edit history keeps the row as it was with
    /// `by` and `reason`. An unknown id is [`StoreError::NotFound`].
    pub fn set_check_confirmation(
        &self,
        id: Id,
        confirmed: Option<&Confirmation>,
        by: &str,
        reason: &str,
    ) -> Result<(), StoreError> {
        let at = confirmation_time(&confirmed.cloned())?;
        let who = confirmed.map(|k| k.by.trim());
        self.with_edit(by, reason, |s| {
            let n = s.exec(
                "UPDATE checks SET confirmed_by = ?1, confirmed_at = ?2 WHERE id = ?3",
                params![who, at, id],
            )?;
            if n == 0 {
                return Err(StoreError::NotFound(format!("check {id}")));
            }
            Ok(())
        })
    }

    /// Deletes a stored check; its values stay in the edit history with `by` and `reason`.
    pub fn delete_check(&self, id: Id, by: &str, reason: &str) -> Result<(), StoreError> {
        self.with_edit(by, reason, |s| {
            let n = s.exec("DELETE FROM checks WHERE id = ?1", params![id])?;
            if n == 0 {
                return Err(StoreError::NotFound(format!("check {id}")));
            }
            Ok(())
        })
    }
}

impl Store {
    /// Every check of the shop in time order (then by unit), handed to `f` one at a time so that
    /// an export of millions of rows needs no more memory than one row.
    pub fn each_check<E: From<StoreError>>(
        &self,
        mut f: impl FnMut(Check) -> Result<(), E>,
    ) -> Result<(), E> {
        let sql = format!("SELECT {CHECK_COLS} FROM checks ORDER BY taken_at, unit_id");
        self.query_each(&sql, params![], |r| f(check_from_row(r)?))
    }
}
