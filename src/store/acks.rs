//! Acknowledgements of flags: the `acknowledgements` table. Insert and list only; an
//! acknowledgement is evidence that someone saw a flag and is never changed (the schema refuses
//! UPDATE, DELETE and a replacement of one since version 4).

use super::db::{params, Row};

use super::{fmt_time_stamp, time_col, Store, StoreError};
use crate::model::{Acknowledgement, Id};

pub(crate) const ACK_COLS: &str = "id, unit_id, kind, state, ack_by, note, acked_at";

pub(crate) fn ack_from_row(r: &Row<'_>) -> Result<Acknowledgement, StoreError> {
    Ok(Acknowledgement {
        id: r.get(0)?,
        unit_id: r.get(1)?,
        kind: r.get(2)?,
        state: r.get(3)?,
        by: r.get(4)?,
        note: r.get(5)?,
        at: time_col(r, 6)?,
    })
}

impl Store {
    /// Records an acknowledgement and returns its id. `state` is `watch` or `act`; `at` is kept
    /// to the second.
    pub fn insert_ack(&self, a: &Acknowledgement) -> Result<Id, StoreError> {
        self.insert_row("INSERT INTO acknowledgements (unit_id, kind, state, ack_by, note, acked_at) VALUES (?1, ?2, ?3, ?4, ?5, ?6)", params![a.unit_id, a.kind.trim(), a.state.trim(), a.by.trim(), a.note, fmt_time_stamp(&a.at)])
    }

    /// The acknowledgements of one unit, oldest first.
    pub fn acks(&self, unit_id: Id) -> Result<Vec<Acknowledgement>, StoreError> {
        let sql = format!(
            "SELECT {ACK_COLS} FROM acknowledgements WHERE unit_id = ?1 ORDER BY acked_at, id"
        );
        self.query(&sql, params![unit_id], ack_from_row)
    }
}
