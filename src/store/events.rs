//! Maintenance events (fluid change, top-up, filter change, rebuild, repair, cooler clean,
//! note): typed reads and writes of the `events` table.
//!
//! One row per unit, time and kind. No CSV, no health.

use super::db::{params, Row, ToDb};
use chrono::{DateTime, Utc};

use super::columns::litres;
use super::{enum_col, fmt_time, time_col, Store, StoreError};
use crate::model::{Event, Id};
use crate::units::Volume;

pub(crate) const EVENT_COLS: &str = "id, unit_id, done_at, kind, volume_l, fluid_id, done_by, note";

pub(crate) fn event_from_row(r: &Row<'_>) -> Result<Event, StoreError> {
    Ok(Event {
        id: r.get(0)?,
        unit_id: r.get(1)?,
        done_at: time_col(r, 2)?,
        kind: enum_col(r, 3)?,
        volume: r.get::<Option<f64>>(4)?.map(Volume::from_l),
        fluid_id: r.get(5)?,
        by: r.get(6)?,
        note: r.get(7)?,
    })
}

/// An event in column units, ready to bind (`EVENT_COLS` order after `id`).
#[derive(Debug, PartialEq)]
pub(crate) struct EventRow<'a> {
    pub unit_id: Id,
    pub done_at: String,
    pub kind: &'static str,
    pub volume_l: Option<f64>,
    pub fluid_id: Option<Id>,
    pub done_by: &'a str,
    pub note: &'a str,
}

impl<'a> EventRow<'a> {
    pub fn from_model(e: &'a Event) -> Result<Self, StoreError> {
        Ok(EventRow {
            unit_id: e.unit_id,
            done_at: fmt_time("done_at", &e.done_at)?,
            kind: e.kind.as_str(),
            volume_l: e.volume.map(litres),
            fluid_id: e.fluid_id,
            done_by: &e.by,
            note: &e.note,
        })
    }

    pub fn params(&self) -> [&dyn ToDb; 7] {
        [
            &self.unit_id,
            &self.done_at,
            &self.kind,
            &self.volume_l,
            &self.fluid_id,
            &self.done_by,
            &self.note,
        ]
    }
}

/// The events of one unit up to a time (`?1` unit, `?2` time), oldest first.
pub(crate) fn unit_events_sql() -> String {
    format!("SELECT {EVENT_COLS} FROM events WHERE unit_id = ?1 AND done_at <= ?2 ORDER BY done_at, kind")
}

pub(crate) const INSERT_EVENT: &str =
    "INSERT INTO events (unit_id, done_at, kind, volume_l, fluid_id, done_by, note) \
     VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7)";

impl Store {
    /// Records one event and returns its id.
    pub fn insert_event(&self, e: &Event) -> Result<Id, StoreError> {
        let row = EventRow::from_model(e)?;
        self.insert_row(INSERT_EVENT, &row.params()[..])
    }

    pub fn event(&self, id: Id) -> Result<Option<Event>, StoreError> {
        let sql = format!("SELECT {EVENT_COLS} FROM events WHERE id = ?1");
        self.query_opt(&sql, params![id], event_from_row)
    }

    /// The events of one unit, oldest first; with `at`, only those done at or before it.
    pub fn events_for_unit(
        &self,
        unit_id: Id,
        at: Option<DateTime<Utc>>,
    ) -> Result<Vec<Event>, StoreError> {
        let until = super::history::until_text(at);
        self.query(&unit_events_sql(), params![unit_id, until], event_from_row)
    }

    /// Changes a stored event (found by `e.id`), keeping the old values in the edit history.
    pub fn update_event(&self, e: &Event, by: &str, reason: &str) -> Result<(), StoreError> {
        let row = EventRow::from_model(e)?;
        self.with_edit(by, reason, |s| {
            let mut p: Vec<&dyn ToDb> = row.params().to_vec();
            p.push(&e.id);
            let n = s.exec(
                    "UPDATE events SET unit_id = ?1, done_at = ?2, kind = ?3, volume_l = ?4, fluid_id = ?5, \
                     done_by = ?6, note = ?7 WHERE id = ?8",
                &p[..])?;
            if n == 0 {
                return Err(StoreError::NotFound(format!("event {}", e.id)));
            }
            Ok(())
        })
    }

    /// Deletes a stored event; its values stay in the edit history.
    pub fn delete_event(&self, id: Id, by: &str, reason: &str) -> Result<(), StoreError> {
        self.with_edit(by, reason, |s| {
            let n = s.exec("DELETE FROM events WHERE id = ?1", params![id])?;
            if n == 0 {
                return Err(StoreError::NotFound(format!("event {id}")));
            }
            Ok(())
        })
    }
}

impl Store {
    /// Every event of the shop in time order (then by unit and kind), one at a time.
    pub fn each_event<E: From<StoreError>>(
        &self,
        mut f: impl FnMut(Event) -> Result<(), E>,
    ) -> Result<(), E> {
        let sql = format!("SELECT {EVENT_COLS} FROM events ORDER BY done_at, unit_id, kind");
        self.query_each(&sql, params![], |r| f(event_from_row(r)?))
    }
}
