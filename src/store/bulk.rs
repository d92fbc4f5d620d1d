//! Bulk writing in one transaction, for imports and the demo generator.
//!
//! A [`Bulk`] holds one write transaction and prepared statements that are reused for every
//! row, so a million rows cost a million statement steps and one commit. Dropping it without
//! [`Bulk::commit`] rolls everything back: imports are all-or-nothing. A row whose identifying
//! key (unit + time, + kind for events) is already stored is not written again: [`Put`] says
//! whether it was new or hands back the stored row, which is never overwritten. A row that
//! breaks a schema rule fails alone (SQLite undoes just that statement), so a caller may go on
//! and collect every bad row before deciding.

use std::collections::HashMap;

use rusqlite::{params, OptionalExtension, Statement};

use super::checks::{check_from_row, CheckRow, CHECK_COLS, INSERT_CHECK};
use super::events::{event_from_row, EventRow, EVENT_COLS, INSERT_EVENT};
use super::fluids::{FluidRow, INSERT_FLUID};
use super::machines_units::{check_machine, UnitRow, INSERT_MACHINE, INSERT_UNIT};
use super::samples::{sample_from_row, SampleRow, INSERT_SAMPLE, SAMPLE_COLS};
use super::{Store, StoreError, TxGuard};
use crate::model::{Check, Event, Fluid, Id, Machine, Sample, Unit};

/// What happened to one row written through [`Bulk`].
#[derive(Debug, Clone, PartialEq)]
pub enum Put<T> {
    /// Written; the new row id.
    Inserted(Id),
    /// A row with the same key is stored; nothing was written. The stored row, for the caller
    /// to tell a harmless repeat from a conflict.
    Exists(Box<T>),
}

/// One open bulk-write transaction. See the module documentation.
pub struct Bulk<'s> {
    store: &'s Store,
    machines: HashMap<String, Machine>,
    units: HashMap<String, Unit>,
    fluids: HashMap<String, Fluid>,
    ins_check: Option<Statement<'s>>,
    sel_check: Option<Statement<'s>>,
    ins_sample: Option<Statement<'s>>,
    sel_sample: Option<Statement<'s>>,
    ins_event: Option<Statement<'s>>,
    sel_event: Option<Statement<'s>>,
    // Last, so that on drop the statements are finalized before the rollback.
    tx: TxGuard<'s>,
}

fn prepared<'s, 'a>(
    slot: &'a mut Option<Statement<'s>>,
    store: &'s Store,
    sql: impl FnOnce() -> String,
) -> Result<&'a mut Statement<'s>, StoreError> {
    // Prepared once per bulk transaction; the SQL text is only built then.
    if slot.is_none() {
        *slot = Some(store.conn.prepare(&sql())?);
    }
    slot.as_mut()
        .ok_or_else(|| StoreError::Corrupt("statement not prepared".into()))
}

impl Store {
    /// Opens a bulk-write transaction (it takes the write lock at once).
    pub fn bulk(&mut self) -> Result<Bulk<'_>, StoreError> {
        let store: &Store = self;
        // Take the write lock first: an import that waited behind another writer must see the
        // register as that writer left it, not as it was before the wait.
        let tx = store.begin()?;
        let machines = store
            .machines()?
            .into_iter()
            .map(|m| (m.tag.clone(), m))
            .collect();
        let units = store
            .units()?
            .into_iter()
            .map(|u| (u.tag.clone(), u))
            .collect();
        let fluids = store
            .fluids()?
            .into_iter()
            .map(|f| (f.name.clone(), f))
            .collect();
        Ok(Bulk {
            store,
            tx,
            machines,
            units,
            fluids,
            ins_check: None,
            sel_check: None,
            ins_sample: None,
            sel_sample: None,
            ins_event: None,
            sel_event: None,
        })
    }
}

impl<'s> Bulk<'s> {
    pub fn machine_by_tag(&self, tag: &str) -> Option<&Machine> {
        self.machines.get(tag.trim())
    }

    pub fn unit_by_tag(&self, tag: &str) -> Option<&Unit> {
        self.units.get(tag.trim())
    }

    pub fn fluid_by_name(&self, name: &str) -> Option<&Fluid> {
        self.fluids.get(name.trim())
    }

    /// The fluid with this id, if known in this transaction.
    pub fn fluid_by_id(&self, id: Id) -> Option<&Fluid> {
        self.fluids.values().find(|f| f.id == id)
    }

    /// The machine with this id, if known in this transaction.
    pub fn machine_by_id(&self, id: Id) -> Option<&Machine> {
        self.machines.values().find(|m| m.id == id)
    }

    /// Adds a machine (a tag already present is a [`StoreError::Duplicate`]).
    pub fn insert_machine(&mut self, m: &Machine) -> Result<Id, StoreError> {
        check_machine(m)?;
        self.store.stmt(INSERT_MACHINE)?.execute(params![
            m.tag.trim(),
            m.name,
            m.kind,
            m.route_order,
            m.notes,
            i64::from(m.archived)
        ])?;
        let id = self.store.conn.last_insert_rowid();
        let mut stored = m.clone();
        stored.id = id;
        stored.tag = m.tag.trim().to_string();
        self.machines.insert(stored.tag.clone(), stored);
        Ok(id)
    }

    /// Adds a fluid (a name already present is a [`StoreError::Duplicate`]).
    pub fn insert_fluid(&mut self, f: &Fluid) -> Result<Id, StoreError> {
        let row = FluidRow::from_model(f)?;
        self.store.stmt(INSERT_FLUID)?.execute(&row.params()[..])?;
        let id = self.store.conn.last_insert_rowid();
        let mut stored = f.clone();
        stored.id = id;
        stored.name = f.name.trim().to_string();
        self.fluids.insert(stored.name.clone(), stored);
        Ok(id)
    }

    /// Adds a hydraulic unit (a tag already present is a [`StoreError::Duplicate`]).
    pub fn insert_unit(&mut self, u: &Unit) -> Result<Id, StoreError> {
        let row = UnitRow::from_model(u)?;
        self.store.stmt(INSERT_UNIT)?.execute(&row.params()[..])?;
        let id = self.store.conn.last_insert_rowid();
        let mut stored = u.clone();
        stored.id = id;
        stored.tag = u.tag.trim().to_string();
        self.units.insert(stored.tag.clone(), stored);
        Ok(id)
    }

    /// Writes a check unless one of the same unit and time is stored.
    pub fn put_check(&mut self, c: &Check) -> Result<Put<Check>, StoreError> {
        let row = CheckRow::from_model(c)?;
        let store = self.store;
        store.count();
        let n = prepared(&mut self.ins_check, store, || {
            format!("{INSERT_CHECK} ON CONFLICT (unit_id, taken_at) DO NOTHING")
        })?
        .execute(&row.params()[..])?;
        if n == 1 {
            return Ok(Put::Inserted(store.conn.last_insert_rowid()));
        }
        store.count();
        let existing = prepared(&mut self.sel_check, store, || {
            format!("SELECT {CHECK_COLS} FROM checks WHERE unit_id = ?1 AND taken_at = ?2")
        })?
        .query_row(params![row.unit_id, row.taken_at], check_from_row)
        .optional()?
        .ok_or_else(|| StoreError::Refused("the check was neither written nor found".into()))?;
        Ok(Put::Exists(Box::new(existing)))
    }

    /// Writes a sample unless one of the same unit and time is stored.
    pub fn put_sample(&mut self, s: &Sample) -> Result<Put<Sample>, StoreError> {
        let row = SampleRow::from_model(s)?;
        let store = self.store;
        store.count();
        let n = prepared(&mut self.ins_sample, store, || {
            format!("{INSERT_SAMPLE} ON CONFLICT (unit_id, sampled_at) DO NOTHING")
        })?
        .execute(&row.params()[..])?;
        if n == 1 {
            return Ok(Put::Inserted(store.conn.last_insert_rowid()));
        }
        store.count();
        let existing = prepared(&mut self.sel_sample, store, || {
            format!("SELECT {SAMPLE_COLS} FROM samples WHERE unit_id = ?1 AND sampled_at = ?2")
        })?
        .query_row(params![row.unit_id, row.sampled_at], sample_from_row)
        .optional()?
        .ok_or_else(|| StoreError::Refused("the sample was neither written nor found".into()))?;
        Ok(Put::Exists(Box::new(existing)))
    }

    /// Writes an event unless one of the same unit, time and kind is stored.
    pub fn put_event(&mut self, e: &Event) -> Result<Put<Event>, StoreError> {
        let row = EventRow::from_model(e)?;
        let store = self.store;
        store.count();
        let n = prepared(&mut self.ins_event, store, || {
            format!("{INSERT_EVENT} ON CONFLICT (unit_id, done_at, kind) DO NOTHING")
        })?
        .execute(&row.params()[..])?;
        if n == 1 {
            return Ok(Put::Inserted(store.conn.last_insert_rowid()));
        }
        store.count();
        let existing = prepared(&mut self.sel_event, store, || {
            format!(
                "SELECT {EVENT_COLS} FROM events WHERE unit_id = ?1 AND done_at = ?2 AND kind = ?3"
            )
        })?
        .query_row(params![row.unit_id, row.done_at, row.kind], event_from_row)
        .optional()?
        .ok_or_else(|| StoreError::Refused("the event was neither written nor found".into()))?;
        Ok(Put::Exists(Box::new(existing)))
    }

    /// Makes everything written through this `Bulk` permanent.
    pub fn commit(self) -> Result<(), StoreError> {
        let Bulk {
            store,
            tx,
            ins_check,
            sel_check,
            ins_sample,
            sel_sample,
            ins_event,
            sel_event,
            ..
        } = self;
        // Statements must be finished before COMMIT.
        drop((
            ins_check, sel_check, ins_sample, sel_sample, ins_event, sel_event,
        ));
        store.count();
        tx.commit()
    }

    /// Throws away everything written through this `Bulk` (dropping it does the same).
    pub fn rollback(self) {
        drop(self);
    }
}
