//! The shop database: the only code in sumpbook that holds SQL.
//!
//! One SQLite file is one shop. This module opens it (refusing files that are not SQLite, SQLite
//! files of another program and files from a newer sumpbook), applies the versioned migrations in
//! `migrations/` (taking an online backup first when an existing shop is upgraded), and offers
//! typed functions per table family that take and return the records of `crate::model`.
//! Conversion between the SI values of the model and the units named in the column names
//! (`temp_c`, `pressure_bar`, `flow_lpm`, ...) happens here and nowhere else (see `columns`).
//!
//! It must not know about CSV, the command line or the UI, and it computes no health.
//!
//! Every UPDATE or DELETE of stored data goes through [`Store::with_edit`], which states who and
//! why in `edit_context` inside the edit's own transaction; the schema's triggers copy the old
//! and new row into `edit_log` and refuse an edit without that context.
//!
//! This file holds the open store and its statement helpers. Opening a shop is in `open`, the
//! schema's upgrades in `migrate`, waiting for another program's lock in `lock_wait`, what an
//! unclean close left behind in `unclean_close`, copies and integrity checks in `backup`,
//! transactions and the edit context in `transactions`, how times and names sit in a column in
//! `row_values`, the error type in `errors`; one file per table family holds its queries.

use std::cell::Cell;
use std::path::{Path, PathBuf};

use rusqlite::Connection;

use crate::model::Id;

/// `insert` (`INSERT INTO table (cols) VALUES (values)`) with the id given first, one above
/// every id `table` holds and every id the edit history names for it (see
/// [`Store::reading_insert`]). Both maxima are read off an index (the row id, and the edit
/// history's (table, row) index).
fn fresh_id_insert(insert: &str, table: &str) -> String {
    let next = format!(
        "(SELECT max(ifnull((SELECT max(id) FROM {table}), 0), \
         ifnull((SELECT max(row_id) FROM edit_log WHERE table_name = '{table}'), 0)) + 1)"
    );
    let head = format!("INSERT INTO {table} (");
    match (insert.strip_prefix(&head), insert.find(" VALUES (")) {
        (Some(_), Some(v)) => format!(
            "{head}id, {}{next}, {}",
            &insert[head.len()..v + " VALUES (".len()],
            &insert[v + " VALUES (".len()..]
        ),
        // Every caller passes one of the readings' INSERTs; anything else is left alone.
        _ => insert.to_string(),
    }
}

pub mod acks;
mod backup;
pub mod baselines_limits;
pub mod bulk;
pub mod checks;
pub mod columns;
pub mod copy;
pub(crate) mod db;
pub mod edit_log;
mod errors;
pub mod events;
pub mod explain;
pub mod fluids;
pub mod history;
pub mod import_profiles;
mod kept;
mod lock_wait;
pub mod machines_units;
mod migrate;
mod open;
pub mod roles;
mod row_values;
pub mod samples;
mod server;
pub mod settings;
mod transactions;
mod unclean_close;
mod unit_batches;

pub use bulk::{Bulk, Put};
pub use errors::StoreError;
pub use kept::{KeptEvaluation, KeptRead};
pub use lock_wait::{report_waits_with, BUSY_TIMEOUT, WAIT_REPORT_AFTER, WAIT_REPORT_EVERY};
pub use migrate::{backup_path_before_migration, MIGRATIONS};
pub use open::APPLICATION_ID;
pub use row_values::{fmt_time, fmt_time_stamp, parse_time};
pub use server::is_server_address;
pub use unclean_close::report_notices_with;
pub use unit_batches::NextRecords;

use db::{Db, Row, ToDb};
pub(crate) use errors::classify;
use migrate::MIGRATION_DIR;
use row_values::{confirmation_cols, confirmation_time, enum_col, opt_enum_col, time_col};
use transactions::TxGuard;

/// Whether [`Store::open`] may create a new shop file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum OpenMode {
    /// The file must already be a shop: a missing or empty (0-byte) file is refused.
    MustExist,
    /// Create the file if it is missing, make an empty file a new shop; open it otherwise.
    Create,
}

/// An open shop database.
pub struct Store {
    db: Db,
    path: PathBuf,
    queries: Cell<u64>,
    /// The schema was created by this open (an empty database became a shop).
    created: bool,
    /// Set by [`Store::correcting`]: the next edit is refused if this row (table, id) was
    /// edited after this edit-history mark.
    expect_unedited: Cell<Option<(&'static str, Id, i64)>>,
    /// Rows this connection changed keeping evaluations (`kept`): not a change of the shop's
    /// data, so [`Store::change_stamp`] leaves them out.
    own_keeping: Cell<u64>,
}

impl std::fmt::Debug for Store {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Store")
            .field("path", &self.path)
            .finish_non_exhaustive()
    }
}

impl Store {
    /// On a server: whether the server has announced a save (by any connection, this one
    /// included) since the last call (LISTEN/NOTIFY on `sumpbook_changed`; one empty round
    /// trip that reads no table).
    /// `None` on a file, which announces nothing: compare [`Store::change_stamp`]s instead.
    pub fn changes_announced(&self) -> Result<Option<bool>, StoreError> {
        match &self.db {
            Db::Lite(_) => Ok(None),
            Db::Pg(p) => p.take_notifications().map(Some),
        }
    }

    /// A stamp that changes whenever the shop's data may have changed: a commit through this
    /// connection or, through SQLite's data version, by any other connection or process (on a
    /// server: the schema's change counter, which every write moves). For callers that keep
    /// results computed from the data and must know when to compute again.
    pub fn change_stamp(&self) -> Result<(i64, u64), StoreError> {
        let conn = match &self.db {
            Db::Lite(c) => c,
            Db::Pg(p) => return Ok((server::change_stamp(p)?, 0)),
        };
        let other: i64 = conn
            .query_row("PRAGMA data_version", [], |r| r.get(0))
            .map_err(StoreError::from)?;
        Ok((other, conn.total_changes() - self.own_keeping.get()))
    }

    /// The file this store was opened from.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// How many SQL statements the store has run since it was opened. Lets tests prove that
    /// loading the fleet costs a bounded number of queries, whatever its size.
    pub fn query_count(&self) -> u64 {
        self.queries.get()
    }

    /// Counts one statement execution.
    fn count(&self) {
        self.queries.set(self.queries.get() + 1);
    }

    /// The SQLite connection of a file shop; an error on a server shop.
    fn lite(&self) -> Result<&Connection, StoreError> {
        match &self.db {
            Db::Lite(c) => Ok(c),
            Db::Pg(_) => Err(StoreError::Server(
                "this is done on a shop file only, not on a server".into(),
            )),
        }
    }

    fn lite_mut(&mut self) -> Result<&mut Connection, StoreError> {
        match &mut self.db {
            Db::Lite(c) => Ok(c),
            Db::Pg(_) => Err(StoreError::Server(
                "this is done on a shop file only, not on a server".into(),
            )),
        }
    }

    /// What the user must know of the state this shop file was found in when this process
    /// first opened it (its write-ahead log removed after an unclean shutdown), if anything.
    pub fn open_notice(&self) -> Option<String> {
        unclean_close::open_notice(&self.path)
    }

    /// Whether this open made a new shop in an empty server database.
    pub fn created_here(&self) -> bool {
        self.created
    }

    /// Whether the shop is on a database server (not a file).
    pub fn is_server(&self) -> bool {
        self.db.is_pg()
    }

    /// Runs a statement that is not a query; the number of rows it changed.
    fn exec(&self, sql: &str, params: &[&dyn ToDb]) -> Result<usize, StoreError> {
        self.count();
        self.db.execute(sql, params)
    }

    /// The INSERT of a new reading (`insert`, into `table`: checks, samples or events) as this
    /// backend takes it. On a shop file the new row's id is given with it: one above every id
    /// the table holds and every id its edit history names. SQLite would otherwise hand out the
    /// highest id held plus one, which after the newest reading was deleted is that reading's
    /// own: its deletion could no longer be put back, and its edits would read as the new
    /// row's. The table itself is left as it is (an id kept above all by AUTOINCREMENT would
    /// mean making the table again). A server's identity column never hands a number out
    /// twice, and a copy onto a server moves it past the history's (`copy`).
    pub(crate) fn reading_insert(&self, insert: &str, table: &str) -> String {
        if self.is_server() {
            return insert.to_string();
        }
        fresh_id_insert(insert, table)
    }

    /// Runs an INSERT and returns the new row's id.
    fn insert_row(&self, sql: &str, params: &[&dyn ToDb]) -> Result<Id, StoreError> {
        self.count();
        self.db
            .insert(sql, params)?
            .ok_or_else(|| StoreError::Refused("the row was not written".into()))
    }

    /// Runs a query; `f` makes one record of each row.
    fn query<T>(
        &self,
        sql: &str,
        params: &[&dyn ToDb],
        mut f: impl FnMut(&Row<'_>) -> Result<T, StoreError>,
    ) -> Result<Vec<T>, StoreError> {
        self.count();
        let mut out = Vec::new();
        self.db.each(sql, params, |r| {
            out.push(f(r)?);
            Ok::<(), StoreError>(())
        })?;
        Ok(out)
    }

    /// Runs a query that yields at most one row.
    fn query_opt<T>(
        &self,
        sql: &str,
        params: &[&dyn ToDb],
        f: impl FnMut(&Row<'_>) -> Result<T, StoreError>,
    ) -> Result<Option<T>, StoreError> {
        Ok(self.query(sql, params, f)?.into_iter().next())
    }

    /// Runs a query that yields exactly one row.
    fn query_one<T>(
        &self,
        sql: &str,
        params: &[&dyn ToDb],
        f: impl FnMut(&Row<'_>) -> Result<T, StoreError>,
    ) -> Result<T, StoreError> {
        self.query_opt(sql, params, f)?
            .ok_or_else(|| StoreError::Corrupt(format!("no row from `{sql}`")))
    }

    /// Runs a query and hands each row to `f` as it comes (exports of millions of rows).
    fn query_each<E: From<StoreError>>(
        &self,
        sql: &str,
        params: &[&dyn ToDb],
        f: impl FnMut(&Row<'_>) -> Result<(), E>,
    ) -> Result<(), E> {
        self.count();
        self.db.each(sql, params, f)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Each reading's INSERT takes its id above every id its table and the edit history hold.
    #[test]
    fn a_readings_insert_on_a_file_names_its_id() {
        for (insert, table) in [
            (checks::INSERT_CHECK, "checks"),
            (samples::INSERT_SAMPLE, "samples"),
            (events::INSERT_EVENT, "events"),
        ] {
            let sql = fresh_id_insert(insert, table);
            assert!(
                sql.starts_with(&format!("INSERT INTO {table} (id, unit_id, ")),
                "{sql}"
            );
            assert!(
                sql.contains(&format!(
                    "VALUES ((SELECT max(ifnull((SELECT max(id) FROM {table}), 0), "
                )),
                "{sql}"
            );
            assert!(
                sql.contains(&format!("WHERE table_name = '{table}'), 0)) + 1), ?1, ?2")),
                "{sql}"
            );
        }
    }
}
