//! Copying every row of one shop into another (file or server, either way) and the per-table
//! row counts and content digests that prove the copy whole.
//!
//! Rows keep their ids, so references between tables and the edit history stay as they were.
//! The caller holds the destination's transaction: the copy writes everything or nothing. A
//! digest is SHA-256 over every row in id order, each value written in one spelling whatever
//! the backend (type tag, then the integer, the exact bits of the real, or the text with its
//! length), so equal digests mean equal tables. No CSV, no rules of the shop.

use sha2::{Digest, Sha256};

use super::db::{params, Db, Owned, ToDb};
use super::{Store, StoreError};

/// The shop's tables in an order that satisfies their references. `settings` has its one row
/// in every shop already; `edit_log` last, as the history of the rows before it.
pub const COPIED_TABLES: [&str; 12] = [
    "settings",
    "machines",
    "fluids",
    "units",
    "checks",
    "samples",
    "events",
    "manual_baselines",
    "limits",
    "acknowledgements",
    "import_profiles",
    "edit_log",
];

/// Tables of a shop that belong to the database itself, not to the shop's data: its markers,
/// the SQLite edit context (empty between edits), the server's schema version, and the kept
/// evaluations with their counters (derived from the data; the copy's own triggers count its
/// rows as they are written, and its evaluations are kept when it is first evaluated).
const OWN_TABLES: [&str; 5] = [
    "sumpbook_meta",
    "edit_context",
    "sumpbook_schema_version",
    "eval_revisions",
    "kept_evaluations",
];

/// The tables of readings, the bulk of a shop, copied without raising an evaluation counter a
/// row on a server ([`Db::without_eval_counting`]).
const READING_TABLES: [&str; 3] = ["checks", "samples", "events"];

/// Rows read per step, so that a server shop of millions of rows is never all in memory.
const CHUNK: i64 = 5_000;

/// The row count and content digest of one table.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize)]
pub struct TableDigest {
    pub table: String,
    pub rows: u64,
    /// SHA-256 of the table's rows, hex.
    pub digest: String,
}

impl Db {
    /// The columns of `table`, in table order.
    fn columns(&self, table: &str) -> Result<Vec<String>, StoreError> {
        let sql = match self {
            Db::Lite(_) => "SELECT name FROM pragma_table_info(?1) ORDER BY cid",
            Db::Pg(_) => {
                "SELECT column_name::text FROM information_schema.columns \
                 WHERE table_schema = current_schema() AND table_name = ?1 ORDER BY ordinal_position"
            }
        };
        let mut out = Vec::new();
        self.each::<StoreError>(sql, params![table], |r| {
            out.push(r.get::<String>(0)?);
            Ok(())
        })?;
        Ok(out)
    }

    /// The shop's tables in this database (without the database's own).
    fn tables(&self) -> Result<Vec<String>, StoreError> {
        let sql = match self {
            Db::Lite(_) => {
                "SELECT name FROM sqlite_schema WHERE type = 'table' AND name NOT LIKE 'sqlite_%'"
            }
            Db::Pg(_) => {
                "SELECT table_name::text FROM information_schema.tables \
                 WHERE table_schema = current_schema() AND table_type = 'BASE TABLE'"
            }
        };
        let mut out = Vec::new();
        self.each::<StoreError>(sql, params![], |r| {
            let t = r.get::<String>(0)?;
            if !OWN_TABLES.contains(&t.as_str()) {
                out.push(t);
            }
            Ok(())
        })?;
        Ok(out)
    }

    /// Runs `f` with the history trigger of `table` off, so that a copied row is written as it
    /// was and not logged as an edit of the destination. Inside the caller's transaction: the
    /// trigger is back on when it commits, and never gone if it rolls back.
    fn without_history(
        &self,
        table: &str,
        f: impl FnOnce() -> Result<(), StoreError>,
    ) -> Result<(), StoreError> {
        let trigger = format!("{table}_log_update");
        match self {
            Db::Lite(_) => {
                let mut sql: Option<String> = None;
                self.each::<StoreError>(
                    "SELECT sql FROM sqlite_schema WHERE type = 'trigger' AND name = ?1",
                    params![trigger],
                    |r| {
                        sql = r.get(0)?;
                        Ok(())
                    },
                )?;
                let Some(sql) = sql else { return f() };
                self.batch(&format!("DROP TRIGGER \"{trigger}\""))?;
                f()?;
                self.batch(&sql)
            }
            Db::Pg(_) => {
                self.batch(&format!("ALTER TABLE {table} DISABLE TRIGGER {trigger}"))?;
                f()?;
                self.batch(&format!("ALTER TABLE {table} ENABLE TRIGGER {trigger}"))
            }
        }
    }

    /// Runs `f`, writing the rows of a table of readings (`table`: checks, samples or events),
    /// with the trigger that raises the evaluation counter of a reading's unit off; the caller
    /// raises every counter once afterwards, in the same transaction
    /// ([`Db::count_copied_rows`]). On a server each raise leaves a dead row version behind,
    /// and in one transaction none can be cleared: copying 520,000 checks left the counters'
    /// table of 1,001 rows at 3,168 pages, read whole by every status after (9 ms). A file
    /// raises in place, and keeps its trigger.
    fn without_eval_counting(
        &self,
        table: &str,
        f: impl FnOnce() -> Result<(), StoreError>,
    ) -> Result<(), StoreError> {
        match self {
            Db::Lite(_) => f(),
            Db::Pg(_) => {
                self.batch(&format!("ALTER TABLE {table} DISABLE TRIGGER {table}_eval"))?;
                f()?;
                self.batch(&format!("ALTER TABLE {table} ENABLE TRIGGER {table}_eval"))
            }
        }
    }

    /// Raises every evaluation counter once, after [`Db::without_eval_counting`]: no
    /// evaluation kept before the copy is read after it.
    fn count_copied_rows(&self) -> Result<(), StoreError> {
        match self {
            Db::Lite(_) => Ok(()),
            Db::Pg(_) => self.batch("UPDATE eval_revisions SET rev = rev + 1"),
        }
    }

    /// After rows were written with their ids (the edit history among them): new rows of the
    /// server go on after the highest, and after every id the edit history names for the table
    /// (a reading deleted as the newest keeps its number, to be put back). A shop file gives
    /// a reading its id as it is written (`Store::reading_insert`).
    fn ids_follow_rows(&self, table: &str) -> Result<(), StoreError> {
        match self {
            Db::Lite(_) => Ok(()),
            Db::Pg(_) => {
                let mut has_identity = false;
                self.each::<StoreError>(
                    "SELECT pg_get_serial_sequence(?1, 'id') IS NOT NULL",
                    params![table],
                    |r| {
                        has_identity = r.get::<i64>(0)? != 0;
                        Ok(())
                    },
                )?;
                if has_identity {
                    self.batch(&format!(
                        "SELECT setval(pg_get_serial_sequence('{table}', 'id'), \
                         greatest(coalesce((SELECT max(id) FROM {table}), 0), \
                         coalesce((SELECT max(row_id) FROM edit_log WHERE table_name = '{table}'), 0)) \
                         + 1, false)"
                    ))?;
                }
                Ok(())
            }
        }
    }

    /// Empties every table of the shop for a copy that replaces it: on the server in one
    /// statement that fires no row triggers. A file is replaced whole instead (see the app).
    fn clear_for_copy(&self) -> Result<(), StoreError> {
        match self {
            Db::Lite(_) => Err(StoreError::Refused(
                "a shop file is replaced by writing a new file, not emptied".into(),
            )),
            Db::Pg(_) => {
                let list: Vec<&str> = COPIED_TABLES
                    .iter()
                    .copied()
                    .filter(|t| *t != "settings")
                    .collect();
                self.batch(&format!("TRUNCATE {} RESTART IDENTITY", list.join(", ")))
            }
        }
    }
}

fn digest_value(h: &mut Sha256, v: &Owned) {
    match v {
        Owned::Null => h.update(b"N"),
        Owned::Int(i) => {
            h.update(b"I");
            h.update(i.to_le_bytes());
        }
        Owned::Real(f) => {
            h.update(b"R");
            h.update(f.to_bits().to_le_bytes());
        }
        Owned::Text(s) => {
            h.update(b"T");
            h.update((s.len() as u64).to_le_bytes());
            h.update(s.as_bytes());
        }
    }
}

impl Store {
    /// Whether the shop holds no data beyond its settings (no row in any other table).
    pub fn is_empty_shop(&self) -> Result<bool, StoreError> {
        for t in COPIED_TABLES.iter().filter(|t| **t != "settings") {
            let n: i64 = self.query_one(&format!("SELECT count(*) FROM {t}"), params![], |r| {
                r.get(0)
            })?;
            if n > 0 {
                return Ok(false);
            }
        }
        Ok(true)
    }

    /// Refuses a shop with a table the copy does not know (a newer program's, or another's).
    fn check_copy_tables(&self) -> Result<(), StoreError> {
        for t in self.db.tables()? {
            if !COPIED_TABLES.contains(&t.as_str()) {
                return Err(StoreError::Refused(format!(
                    "{}: the table {t} is not one this program copies",
                    self.path.display()
                )));
            }
        }
        Ok(())
    }

    /// Every row of `table` in id order, `CHUNK` at a time, to `f`.
    fn each_row(
        &self,
        table: &str,
        cols: &[String],
        mut f: impl FnMut(&[Owned]) -> Result<(), StoreError>,
    ) -> Result<(), StoreError> {
        let sql = format!(
            "SELECT {} FROM {table} WHERE id > ?1 ORDER BY id LIMIT {CHUNK}",
            cols.join(", ")
        );
        let id_at = cols
            .iter()
            .position(|c| c == "id")
            .ok_or_else(|| StoreError::Corrupt(format!("{table} has no id column")))?;
        let mut after = i64::MIN;
        loop {
            let rows = self.query(&sql, params![after], |r| {
                (0..cols.len())
                    .map(|i| r.owned(i))
                    .collect::<Result<Vec<_>, _>>()
            })?;
            for row in &rows {
                f(row)?;
            }
            match rows.last().map(|r| &r[id_at]) {
                Some(Owned::Int(id)) if rows.len() as i64 == CHUNK => after = *id,
                Some(Owned::Int(_)) | None => return Ok(()),
                Some(other) => return Err(StoreError::Corrupt(format!("{table}: id {other:?}"))),
            }
        }
    }

    /// Row count and content digest of every copied table.
    pub fn table_digests(&self) -> Result<Vec<TableDigest>, StoreError> {
        let mut out = Vec::new();
        for table in COPIED_TABLES {
            let cols = self.db.columns(table)?;
            let mut h = Sha256::new();
            let mut rows = 0u64;
            for c in &cols {
                h.update(c.as_bytes());
                h.update(b"\0");
            }
            self.each_row(table, &cols, |row| {
                rows += 1;
                for v in row {
                    digest_value(&mut h, v);
                }
                Ok(())
            })?;
            let digest = h
                .finalize()
                .iter()
                .map(|b| format!("{b:02x}"))
                .collect::<String>();
            out.push(TableDigest {
                table: table.to_string(),
                rows,
                digest,
            });
        }
        Ok(out)
    }

    /// Writes every row of this shop into `dest`, in one transaction of `dest`: all or
    /// nothing. `dest` must be an empty shop of the same schema version, unless `replace`
    /// (a server shop only; a file is replaced by writing a new one) empties it first.
    /// Before it commits, the row counts and digests of every table are taken on both sides
    /// (this shop as one moment, `dest` with the copied rows) and the copy is undone unless
    /// they are equal. Returns them as (this shop, `dest`).
    pub fn copy_into(
        &self,
        dest: &Store,
        replace: bool,
    ) -> Result<Vec<(TableDigest, TableDigest)>, StoreError> {
        let (from_v, to_v) = (self.schema_version()?, dest.schema_version()?);
        if from_v != to_v {
            return Err(StoreError::Refused(format!(
                "the shops are at schema versions {from_v} and {to_v}; open both with this program first"
            )));
        }
        self.check_copy_tables()?;
        dest.check_copy_tables()?;
        self.count();
        self.db.begin_snapshot()?;
        let snapshot = super::TxGuard {
            db: &self.db,
            open: true,
        };
        let tx = dest.begin_as(true)?;
        if !dest.is_empty_shop()? {
            if !replace {
                return Err(StoreError::Refused(format!(
                    "{} already holds a shop; it is only replaced when asked to",
                    dest.path.display()
                )));
            }
            dest.db.clear_for_copy()?;
        }
        for table in COPIED_TABLES {
            let cols = self.db.columns(table)?;
            let dest_cols = dest.db.columns(table)?;
            if cols != dest_cols {
                return Err(StoreError::Refused(format!(
                    "{table}: the columns differ between the two shops"
                )));
            }
            let write = |sql: &str| {
                self.each_row(table, &cols, |row| {
                    let p: Vec<&dyn ToDb> = row.iter().map(|v| v as &dyn ToDb).collect();
                    dest.exec(sql, &p)?;
                    Ok(())
                })
            };
            if table == "settings" {
                let set: Vec<String> = cols
                    .iter()
                    .enumerate()
                    .filter(|(_, c)| *c != "id")
                    .map(|(i, c)| format!("{c} = ?{}", i + 1))
                    .collect();
                let id_at = cols.iter().position(|c| c == "id").unwrap_or(0) + 1;
                let sql = format!("UPDATE settings SET {} WHERE id = ?{id_at}", set.join(", "));
                dest.db.without_history("settings", || write(&sql))?;
            } else {
                let marks: Vec<String> = (1..=cols.len()).map(|i| format!("?{i}")).collect();
                let sql = format!(
                    "INSERT INTO {table} ({}) VALUES ({})",
                    cols.join(", "),
                    marks.join(", ")
                );
                if READING_TABLES.contains(&table) {
                    dest.db.without_eval_counting(table, || write(&sql))?;
                } else {
                    write(&sql)?;
                }
            }
        }
        dest.db.count_copied_rows()?;
        // Once the edit history is in, which names ids the tables no longer hold.
        for table in COPIED_TABLES.iter().filter(|t| **t != "settings") {
            dest.db.ids_follow_rows(table)?;
        }
        let pairs: Vec<(TableDigest, TableDigest)> = self
            .table_digests()?
            .into_iter()
            .zip(dest.table_digests()?)
            .collect();
        if let Some((a, b)) = pairs.iter().find(|(a, b)| a != b) {
            return Err(StoreError::Refused(format!(
                "the copy of {} does not match ({} rows, {} rows); nothing was written",
                a.table, a.rows, b.rows
            )));
        }
        tx.commit()?;
        drop(snapshot);
        Ok(pairs)
    }
}
