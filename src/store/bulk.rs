//! Bulk writing in one transaction, for imports and the demo generator.
//!
//! A [`Bulk`] holds one write transaction and prepared statements that are reused for every
//! row, so a million rows cost a million statement steps and one commit. Dropping it without
//! [`Bulk::commit`] rolls everything back: imports are all-or-nothing. A row whose identifying
//! key (unit + time, + kind for events) is already stored is not written again: [`Put`] says
//! whether it was new or hands back the stored row, which is never overwritten. A shop file
//! refuses every insert that meets a stored key, `ON CONFLICT DO NOTHING` included (so that no
//! REPLACE can delete a row unseen; schema version 4), so there the key is looked up first (the
//! write lock held makes the look final); a server takes `DO NOTHING`, which also covers
//! another connection storing the key meanwhile, and is looked at after. In a shop file
//! a reading that breaks a schema rule fails alone (SQLite undoes just that statement), so a
//! caller may go on and collect every bad row before deciding. On a server a failed statement
//! aborts the whole transaction, and a savepoint around each reading (a subtransaction each)
//! made a million-row import crawl: there readings go in without one — the importer has
//! checked every value against the schema's bounds first — and a reading the server still
//! refuses ends the bulk write: every later call and the commit are refused, and nothing is
//! written. Machines, units and fluids keep a savepoint each (they are few).

use std::cell::RefCell;
use std::collections::HashMap;

use super::checks::{check_from_row, CheckRow, CHECK_COLS, INSERT_CHECK};
use super::db::params;
use super::events::{
    details_from_row, event_from_row, EventRow, DETAIL_COLS, EVENT_COLS, INSERT_EVENT,
};
use super::fluids::{FluidRow, INSERT_FLUID};
use super::machines_units::{check_machine, UnitRow, INSERT_MACHINE, INSERT_UNIT};
use super::samples::{sample_from_row, SampleRow, INSERT_SAMPLE, SAMPLE_COLS};
use super::{Store, StoreError, TxGuard};
use crate::model::{Check, Event, EventDetails, Fluid, Id, Machine, Sample, Unit};

/// What happened to one row written through [`Bulk`].
#[derive(Debug, Clone, PartialEq)]
pub enum Put<T> {
    /// Written; the new row id.
    Inserted(Id),
    /// A row with the same key is stored; nothing was written. The stored row, for the caller
    /// to tell a harmless repeat from a conflict.
    Exists(Box<T>),
}

/// The statements of a bulk write, built once per transaction.
struct BulkSql {
    ins_check: String,
    sel_check: String,
    ins_sample: String,
    sel_sample: String,
    ins_event: String,
    sel_event: String,
}

impl BulkSql {
    fn new(store: &Store) -> BulkSql {
        let ins = |sql: &str, table: &str| store.reading_insert(sql, table);
        BulkSql {
            ins_check: format!(
                "{} ON CONFLICT (unit_id, taken_at) DO NOTHING",
                ins(INSERT_CHECK, "checks")
            ),
            sel_check: format!(
                "SELECT {CHECK_COLS} FROM checks WHERE unit_id = ?1 AND taken_at = ?2"
            ),
            ins_sample: format!(
                "{} ON CONFLICT (unit_id, sampled_at) DO NOTHING",
                ins(INSERT_SAMPLE, "samples")
            ),
            sel_sample: format!(
                "SELECT {SAMPLE_COLS} FROM samples WHERE unit_id = ?1 AND sampled_at = ?2"
            ),
            ins_event: format!(
                "{} ON CONFLICT (unit_id, done_at, kind) DO NOTHING",
                ins(INSERT_EVENT, "events")
            ),
            sel_event: format!(
                "SELECT {EVENT_COLS}, {DETAIL_COLS} FROM events \
                 WHERE unit_id = ?1 AND done_at = ?2 AND kind = ?3"
            ),
        }
    }
}

/// One open bulk-write transaction. See the module documentation.
pub struct Bulk<'s> {
    store: &'s Store,
    machines: HashMap<String, Machine>,
    units: HashMap<String, Unit>,
    fluids: HashMap<String, Fluid>,
    sql: BulkSql,
    tx: TxGuard<'s>,
    /// On a server: why the server refused a reading, after which nothing more is written.
    refused: RefCell<Option<String>>,
}

impl Store {
    /// Opens a bulk-write transaction (it takes the write lock at once).
    pub fn bulk(&mut self) -> Result<Bulk<'_>, StoreError> {
        let store: &Store = self;
        // Take the write lock first: an import that waited behind another writer must see the
        // register as that writer left it, not as it was before the wait.
        let tx = store.begin_as(true)?;
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
            sql: BulkSql::new(store),
            refused: RefCell::new(None),
        })
    }
}

impl<'s> Bulk<'s> {
    /// Writes one reading (see the module documentation for how a refusal differs between a
    /// file and a server).
    fn insert_reading(
        &self,
        sql: &str,
        params: &[&dyn super::db::ToDb],
    ) -> Result<Option<Id>, StoreError> {
        if let Some(why) = self.refused.borrow().as_ref() {
            return Err(StoreError::Server(format!(
                "the server refused an earlier row ({why}); nothing was written"
            )));
        }
        let db = &self.store.db;
        if !self.store.is_server() {
            return db.statement_alone(|| db.insert(sql, params));
        }
        db.insert(sql, params).inspect_err(|e| {
            *self.refused.borrow_mut() = Some(e.to_string());
        })
    }

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
        let id = self.store.db.statement_alone(|| {
            self.store.insert_row(
                INSERT_MACHINE,
                params![
                    m.tag.trim(),
                    m.name,
                    m.kind,
                    m.route_order,
                    m.notes,
                    i64::from(m.archived)
                ],
            )
        })?;
        let mut stored = m.clone();
        stored.id = id;
        stored.tag = m.tag.trim().to_string();
        self.machines.insert(stored.tag.clone(), stored);
        Ok(id)
    }

    /// Adds a fluid (a name already present is a [`StoreError::Duplicate`]).
    pub fn insert_fluid(&mut self, f: &Fluid) -> Result<Id, StoreError> {
        let row = FluidRow::from_model(f)?;
        let id = self
            .store
            .db
            .statement_alone(|| self.store.insert_row(INSERT_FLUID, &row.params()[..]))?;
        let mut stored = f.clone();
        stored.id = id;
        stored.name = f.name.trim().to_string();
        self.fluids.insert(stored.name.clone(), stored);
        Ok(id)
    }

    /// Adds a hydraulic unit (a tag already present is a [`StoreError::Duplicate`]).
    pub fn insert_unit(&mut self, u: &Unit) -> Result<Id, StoreError> {
        let row = UnitRow::from_model(u)?;
        let id = self
            .store
            .db
            .statement_alone(|| self.store.insert_row(INSERT_UNIT, &row.params()[..]))?;
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
        let stored = || {
            store.query_opt(
                &self.sql.sel_check,
                params![row.unit_id, row.taken_at],
                check_from_row,
            )
        };
        // A shop file: look first (see the module documentation).
        if !store.is_server() {
            if let Some(existing) = stored()? {
                return Ok(Put::Exists(Box::new(existing)));
            }
        }
        let id = self.insert_reading(&self.sql.ins_check, &row.params()[..])?;
        if let Some(id) = id {
            return Ok(Put::Inserted(id));
        }
        let existing = stored()?
            .ok_or_else(|| StoreError::Refused("the check was neither written nor found".into()))?;
        Ok(Put::Exists(Box::new(existing)))
    }

    /// Writes a sample unless one of the same unit and time is stored.
    pub fn put_sample(&mut self, s: &Sample) -> Result<Put<Sample>, StoreError> {
        let row = SampleRow::from_model(s)?;
        let store = self.store;
        store.count();
        let stored = || {
            store.query_opt(
                &self.sql.sel_sample,
                params![row.unit_id, row.sampled_at],
                sample_from_row,
            )
        };
        // A shop file: look first (see the module documentation).
        if !store.is_server() {
            if let Some(existing) = stored()? {
                return Ok(Put::Exists(Box::new(existing)));
            }
        }
        let id = self.insert_reading(&self.sql.ins_sample, &row.params()[..])?;
        if let Some(id) = id {
            return Ok(Put::Inserted(id));
        }
        let existing = stored()?.ok_or_else(|| {
            StoreError::Refused("the sample was neither written nor found".into())
        })?;
        Ok(Put::Exists(Box::new(existing)))
    }

    /// Writes an event unless one of the same unit, time and kind is stored.
    pub fn put_event(&mut self, e: &Event) -> Result<Put<Event>, StoreError> {
        Ok(match self.put_event_with(e, &EventDetails::default())? {
            Put::Inserted(id) => Put::Inserted(id),
            Put::Exists(stored) => Put::Exists(Box::new(stored.0)),
        })
    }

    /// Writes an event with what was recorded beside it unless one of the same unit, time and
    /// kind is stored (then the stored one, with its details).
    pub fn put_event_with(
        &mut self,
        e: &Event,
        d: &EventDetails,
    ) -> Result<Put<(Event, EventDetails)>, StoreError> {
        let row = EventRow::from_model(e, d)?;
        let store = self.store;
        store.count();
        let stored = || {
            store.query_opt(
                &self.sql.sel_event,
                params![row.unit_id, row.done_at, row.kind],
                |r| Ok((event_from_row(r)?, details_from_row(r)?)),
            )
        };
        // A shop file: look first (see the module documentation).
        if !store.is_server() {
            if let Some(existing) = stored()? {
                return Ok(Put::Exists(Box::new(existing)));
            }
        }
        let id = self.insert_reading(&self.sql.ins_event, &row.insert_params()[..])?;
        if let Some(id) = id {
            return Ok(Put::Inserted(id));
        }
        let existing = stored()?
            .ok_or_else(|| StoreError::Refused("the event was neither written nor found".into()))?;
        Ok(Put::Exists(Box::new(existing)))
    }

    /// Makes everything written through this `Bulk` permanent.
    pub fn commit(self) -> Result<(), StoreError> {
        if let Some(why) = self.refused.borrow().as_ref() {
            // The server has aborted the transaction; its COMMIT would quietly roll back.
            return Err(StoreError::Server(format!(
                "the server refused a row ({why}); nothing was written"
            )));
        }
        self.store.count();
        self.tx.commit()
    }

    /// Throws away everything written through this `Bulk` (dropping it does the same).
    pub fn rollback(self) {
        drop(self);
    }
}
