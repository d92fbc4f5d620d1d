//! Reading the edit history (`edit_log`): every changed or deleted stored value with who, when
//! and why. Writing happens only through the schema's triggers (see `Store::with_edit`); the
//! table itself refuses UPDATE and DELETE.

use super::db::{params, Row};

use super::{time_col, Store, StoreError};
use crate::model::{EditRecord, Id};

const EDIT_COLS: &str =
    "id, table_name, row_id, action, old_value, new_value, edited_by, reason, edited_at";

fn edit_from_row(r: &Row<'_>) -> Result<EditRecord, StoreError> {
    Ok(EditRecord {
        id: r.get(0)?,
        table: r.get(1)?,
        row_id: r.get(2)?,
        action: r.get(3)?,
        old_value: r.get(4)?,
        new_value: r.get(5)?,
        by: r.get(6)?,
        reason: r.get(7)?,
        at: time_col(r, 8)?,
    })
}

impl Store {
    /// The history of one stored row (`table` is the table name: `checks`, `samples`, `events`,
    /// `units`, `machines`, `fluids`, `limits`, `manual_baselines`, `settings`), oldest first.
    pub fn edit_history(&self, table: &str, row_id: Id) -> Result<Vec<EditRecord>, StoreError> {
        let sql = format!(
            "SELECT {EDIT_COLS} FROM edit_log WHERE table_name = ?1 AND row_id = ?2 ORDER BY id"
        );
        self.query(&sql, params![table, row_id], edit_from_row)
    }

    /// The whole edit history, oldest first.
    pub fn edit_log(&self) -> Result<Vec<EditRecord>, StoreError> {
        let sql = format!("SELECT {EDIT_COLS} FROM edit_log ORDER BY id");
        self.query(&sql, params![], edit_from_row)
    }
}
