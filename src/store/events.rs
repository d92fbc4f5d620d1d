//! Maintenance events (fluid change, top-up, filter change, rebuild, repair, cooler clean,
//! note): typed reads and writes of the `events` table, with what marking work done records
//! beside an event (hour meter, filter part, work order: [`EventDetails`]).
//!
//! One row per unit, time and kind. No CSV, no health.

use super::db::{params, Row, ToDb};
use chrono::{DateTime, SubsecRound, Utc};

use super::columns::litres;
use super::{enum_col, fmt_time, time_col, Store, StoreError};
use crate::model::{Event, EventDetails, Id};
use crate::units::Volume;

pub(crate) const EVENT_COLS: &str = "id, unit_id, done_at, kind, volume_l, fluid_id, done_by, note";

/// The columns of [`EventDetails`], read after [`EVENT_COLS`].
pub(crate) const DETAIL_COLS: &str = "hours, filter_part, work_order";

/// The details of an event row read as `EVENT_COLS, DETAIL_COLS`.
pub(crate) fn details_from_row(r: &Row<'_>) -> Result<EventDetails, StoreError> {
    Ok(EventDetails {
        hours: r.get(8)?,
        filter_part: r.get(9)?,
        work_order: r.get(10)?,
    })
}

fn event_and_details(r: &Row<'_>) -> Result<(Event, EventDetails), StoreError> {
    Ok((event_from_row(r)?, details_from_row(r)?))
}

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
    pub hours: Option<f64>,
    pub filter_part: &'a str,
    pub work_order: &'a str,
}

impl<'a> EventRow<'a> {
    pub fn from_model(e: &'a Event, d: &'a EventDetails) -> Result<Self, StoreError> {
        Ok(EventRow {
            unit_id: e.unit_id,
            done_at: fmt_time("done_at", &e.done_at)?,
            kind: e.kind.as_str(),
            volume_l: e.volume.map(litres),
            fluid_id: e.fluid_id,
            done_by: &e.by,
            note: &e.note,
            hours: d.hours,
            filter_part: &d.filter_part,
            work_order: &d.work_order,
        })
    }

    /// The event's columns (`EVENT_COLS` after `id`), as [`Store::update_event`] binds them.
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

    /// Every column of a new row, as [`INSERT_EVENT`] binds them: the event's, then its
    /// details'.
    pub fn insert_params(&self) -> Vec<&dyn ToDb> {
        let mut p = self.params().to_vec();
        p.extend([
            &self.hours as &dyn ToDb,
            &self.filter_part,
            &self.work_order,
        ]);
        p
    }
}

/// The events of one unit up to a time (`?1` unit, `?2` time), oldest first.
pub(crate) fn unit_events_sql() -> String {
    format!("SELECT {EVENT_COLS} FROM events WHERE unit_id = ?1 AND done_at <= ?2 ORDER BY done_at, kind")
}

pub(crate) const INSERT_EVENT: &str =
    "INSERT INTO events (unit_id, done_at, kind, volume_l, fluid_id, done_by, note, hours, \
     filter_part, work_order) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10)";

impl Store {
    /// Records one event and returns its id.
    pub fn insert_event(&self, e: &Event) -> Result<Id, StoreError> {
        self.insert_event_with(e, &EventDetails::default())
    }

    /// Records one event with what marking it done recorded beside it; returns its id.
    pub fn insert_event_with(&self, e: &Event, d: &EventDetails) -> Result<Id, StoreError> {
        let row = EventRow::from_model(e, d)?;
        self.insert_row(
            &self.reading_insert(INSERT_EVENT, "events"),
            &row.insert_params()[..],
        )
    }

    pub fn event(&self, id: Id) -> Result<Option<Event>, StoreError> {
        let sql = format!("SELECT {EVENT_COLS} FROM events WHERE id = ?1");
        self.query_opt(&sql, params![id], event_from_row)
    }

    /// What marking work done recorded beside each event of one unit, by event id, oldest
    /// first; events with nothing recorded beside them are left out.
    pub fn event_details_of_unit(
        &self,
        unit_id: Id,
    ) -> Result<Vec<(Id, EventDetails)>, StoreError> {
        let sql = format!(
            "SELECT id, {DETAIL_COLS} FROM events WHERE unit_id = ?1 \
             AND (hours IS NOT NULL OR filter_part <> '' OR work_order <> '') ORDER BY done_at, kind"
        );
        self.query(&sql, params![unit_id], |r| {
            Ok((
                r.get(0)?,
                EventDetails {
                    hours: r.get(1)?,
                    filter_part: r.get(2)?,
                    work_order: r.get(3)?,
                },
            ))
        })
    }

    /// The latest hour meter read on a unit at or before `at` (checks and work done), and the
    /// earliest read after it, each with when it was read: a new reading at `at` is judged
    /// against its neighbours in time (a meter replaced since the last reading reads lower, and
    /// is asked about once, not at every reading after). `except` leaves out the reading being
    /// corrected.
    pub fn hour_meter_around(
        &self,
        unit_id: Id,
        at: DateTime<Utc>,
        except: Option<OwnReading>,
    ) -> Result<HourMeterAround, StoreError> {
        // Ids are positive, so -1 leaves nothing out.
        let (except_check, except_event) = match except {
            Some(OwnReading::Check(id)) => (id, -1),
            Some(OwnReading::Event(id)) => (-1, id),
            None => (-1, -1),
        };
        // Readings are stored to the second, so the moment's fraction changes nothing.
        let at = fmt_time("at", &at.trunc_subsecs(0))?;
        let read = |sql: &str| -> Result<Option<(f64, DateTime<Utc>)>, StoreError> {
            self.query_opt(sql, params![unit_id, at, except_event, except_check], |r| {
                Ok((r.get::<f64>(0)?, time_col(r, 1)?))
            })
        };
        let readings = "SELECT hours, taken_at AS read_at FROM checks WHERE unit_id = ?1 \
             AND hours IS NOT NULL AND id <> ?4 \
             UNION ALL SELECT hours, done_at AS read_at FROM events WHERE unit_id = ?1 \
             AND hours IS NOT NULL AND id <> ?3";
        // Two readings at one moment: the higher one before, the lower one after.
        Ok(HourMeterAround {
            before: read(&format!(
                "SELECT hours, read_at FROM ({readings}) r WHERE read_at <= ?2 \
                 ORDER BY read_at DESC, hours DESC LIMIT 1"
            ))?,
            after: read(&format!(
                "SELECT hours, read_at FROM ({readings}) r WHERE read_at > ?2 \
                 ORDER BY read_at, hours LIMIT 1"
            ))?,
        })
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
    /// What was recorded beside it (hour meter, filter part, work order) stays as stored.
    pub fn update_event(&self, e: &Event, by: &str, reason: &str) -> Result<(), StoreError> {
        let kept = EventDetails::default();
        let row = EventRow::from_model(e, &kept)?;
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

    /// What was recorded beside a stored event (nothing recorded: all blank).
    pub fn event_details(&self, id: Id) -> Result<Option<EventDetails>, StoreError> {
        let sql = format!("SELECT {EVENT_COLS}, {DETAIL_COLS} FROM events WHERE id = ?1");
        self.query_opt(&sql, params![id], details_from_row)
    }

    /// Changes a stored event (found by `e.id`) and what was recorded beside it, keeping the
    /// old values in the edit history.
    pub fn update_event_with(
        &self,
        e: &Event,
        d: &EventDetails,
        by: &str,
        reason: &str,
    ) -> Result<(), StoreError> {
        let row = EventRow::from_model(e, d)?;
        self.with_edit(by, reason, |s| {
            let mut p = row.insert_params();
            p.push(&e.id);
            let n = s.exec(
                "UPDATE events SET unit_id = ?1, done_at = ?2, kind = ?3, volume_l = ?4, \
                 fluid_id = ?5, done_by = ?6, note = ?7, hours = ?8, filter_part = ?9, \
                 work_order = ?10 WHERE id = ?11",
                &p[..],
            )?;
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

/// The hour meter read on a unit around a moment; see [`Store::hour_meter_around`].
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct HourMeterAround {
    /// The latest reading at or before the moment, and when it was read.
    pub before: Option<(f64, DateTime<Utc>)>,
    /// The earliest reading after the moment, and when it was read.
    pub after: Option<(f64, DateTime<Utc>)>,
}

/// A stored reading left out of [`Store::hour_meter_around`]: the one being corrected.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum OwnReading {
    Check(Id),
    Event(Id),
}

impl Store {
    /// Every event of the shop in time order (then by unit and kind), one at a time, with
    /// what was recorded beside it.
    pub fn each_event<E: From<StoreError>>(
        &self,
        mut f: impl FnMut(Event, EventDetails) -> Result<(), E>,
    ) -> Result<(), E> {
        let sql = format!(
            "SELECT {EVENT_COLS}, {DETAIL_COLS} FROM events ORDER BY done_at, unit_id, kind"
        );
        self.query_each(&sql, params![], |r| {
            let (e, d) = event_and_details(r)?;
            f(e, d)
        })
    }
}
