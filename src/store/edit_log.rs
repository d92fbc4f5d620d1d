//! Reading the edit history (`edit_log`): every changed, deleted or restored stored value with
//! who, when and why; and putting a deleted reading back, which is itself an edit. Changes and
//! deletions are written by the schema's triggers (see `Store::with_edit`), a restore by
//! [`Store::restore_deleted`] in the same transaction as the row it puts back (on a server by
//! the schema's own function, as no role may write the history); the table itself refuses
//! UPDATE and DELETE.

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

    /// One edit of the history, by its id.
    pub fn edit(&self, id: Id) -> Result<Option<EditRecord>, StoreError> {
        let sql = format!("SELECT {EDIT_COLS} FROM edit_log WHERE id = ?1");
        self.query_opt(&sql, params![id], edit_from_row)
    }

    /// The whole edit history, oldest first.
    pub fn edit_log(&self) -> Result<Vec<EditRecord>, StoreError> {
        let sql = format!("SELECT {EDIT_COLS} FROM edit_log ORDER BY id");
        self.query(&sql, params![], edit_from_row)
    }
}

/// The tables whose deleted rows may be put back: the readings and the work records.
pub const RESTORABLE: [&str; 3] = ["checks", "samples", "events"];

/// What a restore put back: the table and the row's id (the one it had before it was deleted).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Restored {
    pub table: &'static str,
    pub row_id: Id,
}

impl Store {
    /// Whether a row numbered `id` is stored in `table`, one of [`RESTORABLE`].
    pub fn reading_stored(&self, table: &str, id: Id) -> Result<bool, StoreError> {
        let table = RESTORABLE
            .into_iter()
            .find(|t| *t == table)
            .ok_or_else(|| StoreError::NotFound(format!("table {table}")))?;
        let n: i64 = self.query_one(
            &format!("SELECT count(*) FROM {table} WHERE id = ?1"),
            params![id],
            |r| r.get(0),
        )?;
        Ok(n > 0)
    }

    /// Puts back the check, sample or event that the edit `deletion` deleted, as it was and
    /// with its own id, recording the restore in the edit history with `by`, `reason` and the
    /// time. Refused when that edit is no deletion of a reading, when the reading was put back
    /// already (the deletion is no longer its latest edit), or when another reading took its id
    /// or its time meanwhile.
    pub fn restore_deleted(
        &self,
        deletion: Id,
        by: &str,
        reason: &str,
    ) -> Result<Restored, StoreError> {
        self.with_edit(by, reason, |s| {
            let d = s
                .edit(deletion)?
                .ok_or_else(|| StoreError::NotFound(format!("edit {deletion}")))?;
            let table = RESTORABLE
                .into_iter()
                .find(|t| *t == d.table)
                .filter(|_| d.action == "delete")
                .ok_or_else(|| {
                    StoreError::Refused(format!(
                        "edit {deletion} is not the deletion of a check, sample or event"
                    ))
                })?;
            let latest = s.edit_mark(table, d.row_id)?;
            if latest != d.id {
                return Err(StoreError::Refused(format!(
                    "edit {deletion} is not the latest edit of that reading: it was put back \
                     already (edit {latest})"
                )));
            }
            if s.reading_stored(table, d.row_id)? {
                return Err(StoreError::Refused(format!(
                    "a later record holds number {} of {table} now, so the deleted one cannot \
                     take it back; enter its values anew",
                    d.row_id
                )));
            }
            if s.is_server() {
                // Only the schema's function may write the history on a server; it makes the
                // same checks again, and refuses a role that may not delete readings.
                s.query_one("SELECT sumpbook_restore(?1)", params![deletion], |r| {
                    r.get::<i64>(0)
                })?;
            } else {
                s.put_back(table, &d)?;
            }
            Ok(Restored {
                table,
                row_id: d.row_id,
            })
        })
    }

    /// The shop file's restore: the row from the deletion's JSON (the columns it held; a column
    /// added later takes its default), then the restore in the history with the edit context.
    fn put_back(&self, table: &str, d: &EditRecord) -> Result<(), StoreError> {
        let held: serde_json::Map<String, serde_json::Value> = serde_json::from_str(&d.old_value)
            .map_err(|e| {
            StoreError::Corrupt(format!("edit {} does not hold a record: {e}", d.id))
        })?;
        let columns: Vec<String> = self
            .query(
                "SELECT name FROM pragma_table_info(?1) ORDER BY cid",
                params![table],
                |r| r.get(0),
            )?
            .into_iter()
            .filter(|c: &String| held.contains_key(c))
            .collect();
        let names = columns
            .iter()
            .map(|c| format!("\"{c}\""))
            .collect::<Vec<_>>()
            .join(", ");
        let values = columns
            .iter()
            .map(|c| format!("json_extract(?1, '$.\"{c}\"')"))
            .collect::<Vec<_>>()
            .join(", ");
        self.exec(
            &format!("INSERT INTO {table} ({names}) SELECT {values}"),
            params![d.old_value],
        )?;
        self.exec(
            "INSERT INTO edit_log (table_name, row_id, action, old_value, new_value, edited_by, \
             reason, edited_at) \
             SELECT ?1, ?2, 'restore', ?3, ?3, edited_by, reason, edited_at FROM edit_context \
             WHERE id = 1",
            params![table, d.row_id, d.old_value],
        )?;
        Ok(())
    }
}
