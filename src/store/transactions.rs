//! Write transactions and the edit history's context: every UPDATE or DELETE runs inside
//! [`Store::with_edit`], which states who and why for the schema's triggers, and a correction
//! is refused when someone else edited the same row since the user opened it.

use chrono::Utc;

use super::db::{params, Db};
use super::{fmt_time_stamp, Store, StoreError};
use crate::model::Id;

impl Store {
    /// Begins a write transaction that takes the write lock at once (no lock upgrade later, so
    /// two writers wait on each other instead of failing midway).
    pub(super) fn begin(&self) -> Result<TxGuard<'_>, StoreError> {
        self.begin_as(false)
    }

    /// [`Store::begin`]; `exclusive`: one such writer at a time on a server too.
    pub(super) fn begin_as(&self, exclusive: bool) -> Result<TxGuard<'_>, StoreError> {
        self.count();
        self.db.begin(exclusive)?;
        Ok(TxGuard {
            db: &self.db,
            open: true,
        })
    }

    /// Runs `f` in one transaction with `by` and `reason` recorded for the edit history.
    /// Every UPDATE or DELETE of stored data must go through here.
    pub(crate) fn with_edit<T>(
        &self,
        by: &str,
        reason: &str,
        f: impl FnOnce(&Self) -> Result<T, StoreError>,
    ) -> Result<T, StoreError> {
        if by.trim().is_empty() {
            return Err(StoreError::Invalid {
                field: "by".into(),
                reason: "who made the change must be given".into(),
            });
        }
        let tx = self.begin()?;
        self.count();
        self.db
            .set_edit_context(by.trim(), reason, &fmt_time_stamp(&Utc::now()))?;
        if let Some((table, id, seen)) = self.expect_unedited.take() {
            self.ensure_unedited_since(table, id, seen)?;
        }
        let out = f(self)?;
        self.count();
        self.db.clear_edit_context()?;
        tx.commit()?;
        Ok(out)
    }

    /// Where a stored row stands in the edit history: the id of its latest edit (0 if it was
    /// never edited). A form keeps it when it shows the row, and hands it to
    /// [`Store::correcting`] when it saves.
    pub fn edit_mark(&self, table: &str, row_id: Id) -> Result<i64, StoreError> {
        self.query_one(
            "SELECT coalesce(max(id), 0) FROM edit_log WHERE table_name = ?1 AND row_id = ?2",
            params![table, row_id],
            |r| r.get(0),
        )
    }

    /// Runs `f`, a correction of the row `row_id` of `table`, refusing it with
    /// [`StoreError::Conflict`] (who changed it and when) if anyone edited that row after
    /// `seen` (its [`Store::edit_mark`] when the user opened it): nothing is overwritten
    /// silently. The check is made inside the correction's own transaction, with the row
    /// locked, so two people saving at once cannot both pass it.
    pub fn correcting<T>(
        &self,
        table: &'static str,
        row_id: Id,
        seen: i64,
        f: impl FnOnce(&Self) -> Result<T, StoreError>,
    ) -> Result<T, StoreError> {
        self.expect_unedited.set(Some((table, row_id, seen)));
        let out = f(self);
        self.expect_unedited.set(None);
        out
    }

    fn ensure_unedited_since(&self, table: &str, row_id: Id, seen: i64) -> Result<(), StoreError> {
        self.count();
        self.db.lock_row(table, row_id)?;
        let latest = self.edit_mark(table, row_id)?;
        if latest <= seen {
            return Ok(());
        }
        let (by, at): (String, String) = self.query_one(
            "SELECT edited_by, edited_at FROM edit_log WHERE id = ?1",
            params![latest],
            |r| Ok((r.get(0)?, r.get(1)?)),
        )?;
        Err(StoreError::Conflict {
            what: format!("{table} row {row_id}"),
            by,
            at,
        })
    }
}

/// Rolls back on drop unless committed.
pub(super) struct TxGuard<'c> {
    pub(super) db: &'c Db,
    pub(super) open: bool,
}

impl TxGuard<'_> {
    pub(super) fn commit(mut self) -> Result<(), StoreError> {
        self.db.batch("COMMIT")?;
        self.open = false;
        Ok(())
    }
}

impl Drop for TxGuard<'_> {
    fn drop(&mut self) {
        if self.open && self.db.in_transaction() {
            // Nothing useful can be done with a failed rollback here; SQLite rolls back the
            // journal on the next open in any case, and the server when the connection ends.
            let _ = self.db.batch("ROLLBACK");
        }
    }
}
