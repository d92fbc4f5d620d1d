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

use std::cell::Cell;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::sync::LazyLock;
use std::time::Duration;

use chrono::{DateTime, Datelike, NaiveDate, Timelike, Utc};
use include_dir::{include_dir, Dir};
use rusqlite::{Connection, OpenFlags};

use crate::model::Id;
use rusqlite_migration::{Migrations, SchemaVersion};

pub mod acks;
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
pub mod machines_units;
pub mod roles;
pub mod samples;
mod server;
pub mod settings;

pub use bulk::{Bulk, Put};
pub use server::is_server_address;

use db::{params, Db, Row, ToDb};
pub(crate) use errors::classify;
#[cfg(test)]
use errors::constraint_error;

static MIGRATION_DIR: Dir<'static> = include_dir!("$CARGO_MANIFEST_DIR/migrations/sqlite");

/// The SQLite schema migrations, embedded at build time from `migrations/sqlite/N-name/up.sql`
/// (the server's are in `migrations/postgres`, one for one with these).
///
/// A malformed migration folder is a build defect; it yields an empty set here, which
/// [`Store::open`] reports as [`StoreError::Migration`] and `MIGRATIONS.validate()` fails on.
pub static MIGRATIONS: LazyLock<Migrations<'static>> = LazyLock::new(|| {
    Migrations::from_directory(&MIGRATION_DIR).unwrap_or_else(|_| Migrations::new(Vec::new()))
});

/// `PRAGMA application_id` of a sumpbook shop: the bytes `SUMP`.
pub const APPLICATION_ID: i32 = 0x5355_4D50;

/// How long a second process waits for a lock while the holder shows no progress (its
/// write-ahead log and the shop file unchanged) before giving up. A holder that keeps writing
/// (a long import) is waited for as long as it takes.
pub const BUSY_TIMEOUT: Duration = Duration::from_secs(10);

/// After this long, a waiting writer says what it waits for (through the reporter set with
/// [`report_waits_with`]), and again every [`WAIT_REPORT_EVERY`].
pub const WAIT_REPORT_AFTER: Duration = Duration::from_secs(1);
pub const WAIT_REPORT_EVERY: Duration = Duration::from_secs(10);

static WAIT_REPORTER: std::sync::OnceLock<fn(&Path, Duration)> = std::sync::OnceLock::new();

/// Sets what is told when a writer waits for a lock: `f(shop file, waited so far)`. The store
/// prints nothing itself; the command line sets one that writes to standard error.
pub fn report_waits_with(f: fn(&Path, Duration)) {
    let _ = WAIT_REPORTER.set(f);
}

/// One connection's wait for a lock: the shop it waits for and the holder's last progress.
struct Wait {
    path: PathBuf,
    since: std::time::Instant,
    last_progress: std::time::Instant,
    last_told: Option<std::time::Instant>,
    files: Vec<Option<(u64, std::time::SystemTime)>>,
}

/// The waits of every open connection, by the address of its SQLite handle (the busy
/// handler's context), so that the handler knows which shop it waits for.
static WAITS: LazyLock<std::sync::Mutex<std::collections::HashMap<usize, Wait>>> =
    LazyLock::new(Default::default);

/// Size and time of change of the shop file and its write-ahead log: any change is progress.
fn file_marks(path: &Path) -> Vec<Option<(u64, std::time::SystemTime)>> {
    let mut wal = path.as_os_str().to_owned();
    wal.push("-wal");
    [path.to_path_buf(), PathBuf::from(wal)]
        .iter()
        .map(|p| {
            std::fs::metadata(p)
                .ok()
                .and_then(|m| Some((m.len(), m.modified().ok()?)))
        })
        .collect()
}

/// SQLite's busy handler: keep waiting (non-zero) while the holder makes progress, tell the
/// wait once it lasts, give up (zero) after [`BUSY_TIMEOUT`] without progress.
extern "C" fn wait_for_lock(ctx: *mut std::ffi::c_void, count: std::ffi::c_int) -> std::ffi::c_int {
    let now = std::time::Instant::now();
    let tell = {
        let Ok(mut waits) = WAITS.lock() else {
            return 0;
        };
        let Some(w) = waits.get_mut(&(ctx as usize)) else {
            return 0;
        };
        let marks = file_marks(&w.path);
        if count == 0 {
            w.since = now;
            w.last_progress = now;
            w.last_told = None;
        } else if marks != w.files {
            w.last_progress = now;
        }
        w.files = marks;
        if now.duration_since(w.last_progress) > BUSY_TIMEOUT {
            return 0;
        }
        let waited = now.duration_since(w.since);
        let due = match w.last_told {
            None => waited >= WAIT_REPORT_AFTER,
            Some(t) => now.duration_since(t) >= WAIT_REPORT_EVERY,
        };
        if due {
            w.last_told = Some(now);
            Some((w.path.clone(), waited))
        } else {
            None
        }
    };
    if let (Some((path, waited)), Some(report)) = (tell, WAIT_REPORTER.get()) {
        report(&path, waited);
    }
    // Short sleeps first (most waits are a moment), then a steady pace.
    let pause = match count {
        0..=4 => 5,
        5..=20 => 20,
        _ => 50,
    };
    std::thread::sleep(Duration::from_millis(pause));
    1
}

/// What is told when a shop is opened in a state the user must know of (its write-ahead log
/// removed after an unclean shutdown): `f(shop file, what to say)`. Set by the command line.
static NOTICE_REPORTER: std::sync::OnceLock<fn(&Path, &str)> = std::sync::OnceLock::new();

/// Sets what is told when a shop is opened in a state the user must know of; the store prints
/// nothing itself. The command line sets one that writes to standard error.
pub fn report_notices_with(f: fn(&Path, &str)) {
    let _ = NOTICE_REPORTER.set(f);
}

/// What was found when each shop file was first opened by this process: opening resets what it
/// was found from, so a later open of the same file (the app opens it more than once) is told
/// from here.
static OPEN_NOTICES: LazyLock<std::sync::Mutex<std::collections::HashMap<PathBuf, String>>> =
    LazyLock::new(Default::default);

/// The wal-index header at the start of `SHOP-shm` (SQLite's documented WAL-mode file format,
/// "The WAL-Index File Format"): two copies of a 48-byte header, then the checkpoint record, in
/// the byte order of the machine that wrote them.
const SHM_VERSION: u32 = 3_007_000;
const SHM_HEADER_BYTES: usize = 48;
const SHM_MAX_FRAME_AT: usize = 16;
const SHM_BACKFILL_AT: usize = 2 * SHM_HEADER_BYTES;

/// Whether a shop file's write-ahead log was removed after the program writing to it stopped
/// without closing it (a kill, a crash, a power cut), losing changes it had saved. Read before
/// SQLite opens the file, because its first connection resets the shared-memory index.
///
/// SQLite creates `SHOP-wal` before it maps `SHOP-shm` and, closing, removes the index before
/// the log, so while any connection holds the shop the log is there: an index without a log is
/// left only by a holder that stopped unclean and a log removed since. The index then tells how
/// much was lost: frames `nBackfill + 1 ..= mxFrame` were saved in the log and not yet copied
/// into the shop file. An index whose frames were all copied (nothing lost) says nothing; one
/// whose header cannot be read says that changes may be lost.
fn lost_log(path: &Path) -> Option<String> {
    let side = |suffix: &str| {
        let mut p = path.as_os_str().to_owned();
        p.push(suffix);
        PathBuf::from(p)
    };
    let (wal, shm) = (side("-wal"), side("-shm"));
    if std::fs::metadata(&wal).is_ok_and(|m| m.len() > 0) {
        return None;
    }
    if !std::fs::metadata(&shm).is_ok_and(|m| m.is_file()) {
        return None;
    }
    let mut head = [0u8; SHM_BACKFILL_AT + 4];
    if std::fs::File::open(&shm)
        .and_then(|mut f| f.read_exact(&mut head))
        .is_err()
    {
        // Shorter than its header: no frame was ever indexed in it.
        return None;
    }
    let u32_at = |i: usize| u32::from_ne_bytes([head[i], head[i + 1], head[i + 2], head[i + 3]]);
    let what = if u32_at(0) != SHM_VERSION
        || head[12] != 1
        || head[..SHM_HEADER_BYTES] != head[SHM_HEADER_BYTES..2 * SHM_HEADER_BYTES]
    {
        "changes it had saved may not be in the shop".to_string()
    } else {
        let (saved, copied) = (u32_at(SHM_MAX_FRAME_AT), u32_at(SHM_BACKFILL_AT));
        if saved <= copied {
            return None;
        }
        format!(
            "the last changes it saved ({} page writes since the log was last copied into the \
             shop) are not in the shop",
            saved - copied
        )
    };
    Some(format!(
        "{}: the program that last wrote to this shop stopped without closing it, and its \
         write-ahead log {} was removed since: {what}. If that file can still be had (a backup, \
         the wastebasket), close sumpbook and put it back beside the shop before anything is \
         written to it; otherwise check the last entries and enter what is missing again",
        path.display(),
        wal.display()
    ))
}

/// Whether [`Store::open`] may create a new shop file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum OpenMode {
    /// The file must already be a shop: a missing or empty (0-byte) file is refused.
    MustExist,
    /// Create the file if it is missing, make an empty file a new shop; open it otherwise.
    Create,
}

/// Everything the store can refuse or fail with, in terms the user can act on.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum StoreError {
    #[error("{}: no such file", path.display())]
    Missing { path: PathBuf },
    /// An empty (0-byte) file where a shop was expected: only `init` (or the app's first
    /// start) makes a new shop, so a typo in a read command never leaves a new file behind.
    #[error("no shop at {p}; create one with `sumpbook --db {p} init`", p = path.display())]
    NoShop { path: PathBuf },
    #[error("{}: not an SQLite database (is it the right file?)", path.display())]
    NotSqlite { path: PathBuf },
    #[error("{}: an SQLite database of another program, not a sumpbook shop", path.display())]
    NotSumpbook { path: PathBuf },
    #[error("{}: written by a newer sumpbook (schema version {found}; this program knows up to {known}); update sumpbook", path.display())]
    TooNew {
        path: PathBuf,
        found: usize,
        known: usize,
    },
    #[error("{}: cannot open: {reason}", path.display())]
    CannotOpen { path: PathBuf, reason: String },
    #[error("{}: the file is read-only; sumpbook needs to write to it", path.display())]
    ReadOnlyFile { path: PathBuf },
    #[error("the database is read-only")]
    ReadOnly,
    #[error("the shop is locked by another program that has made no progress for {} s; try again when it is done (or close the program holding it)", BUSY_TIMEOUT.as_secs())]
    Busy,
    #[error("{}: the database is locked by another program that has made no progress for {} s; try again when it is done (or close the program holding it)", path.display(), BUSY_TIMEOUT.as_secs())]
    Locked { path: PathBuf },
    #[error("{}: the shop file is damaged ({reason}); restore the last good backup, or recover what is still readable with the sqlite3 shell's `.recover` into a new file and open that", path.display())]
    Damaged { path: PathBuf, reason: String },
    #[error("cannot bring the database schema up to date: {0}")]
    Migration(String),
    /// A value was refused: `field` is the column, `reason` the rule it broke.
    #[error("{field}: {reason}")]
    Invalid { field: String, reason: String },
    /// A row with the same identifying key exists.
    #[error("{what} already exists")]
    Duplicate { what: String },
    #[error("{0} not found")]
    NotFound(String),
    /// A foreign key points at nothing.
    #[error("refers to a machine, unit or fluid that does not exist")]
    BadReference,
    /// A stored row can only be changed with who and why stated.
    #[error("an edit needs who made it and why")]
    NoEditContext,
    /// A trigger or another rule of the schema refused the change.
    #[error("refused: {0}")]
    Refused(String),
    /// The file holds something this program cannot read back.
    #[error("the shop file is damaged or was changed by another program: {0}")]
    Corrupt(String),
    #[error("{}: {source}", path.display())]
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("database error: {0}")]
    Sqlite(rusqlite::Error),
    /// A file beside the shop (a backup) could not be made.
    #[error(transparent)]
    Out(#[from] crate::outfile::OutFileError),
    /// Someone else edited the row since the user opened it: nothing was saved.
    #[error("{what} was changed by {by} at {at} since you opened it; nothing was saved: look at the stored values and correct again")]
    Conflict {
        what: String,
        by: String,
        at: String,
    },
    /// The server refused the change for the signed-in role.
    #[error("not allowed for your database role: {0}")]
    NotAllowed(String),
    /// The database server answered with an error not listed above.
    #[error("database server: {0}")]
    Server(String),
    /// The connection to the database server was lost or could not be made.
    #[error("the database server cannot be reached: {0}; check that it runs and try again")]
    ServerGone(String),
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
}

impl std::fmt::Debug for Store {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Store")
            .field("path", &self.path)
            .finish_non_exhaustive()
    }
}

const SQLITE_HEADER: &[u8; 16] = b"SQLite format 3\0";

impl Store {
    /// Opens (or with [`OpenMode::Create`] creates) a shop and brings its schema up to date.
    ///
    /// `path` may also be the address of a PostgreSQL database
    /// (`postgres://USER@HOST:PORT/DBNAME`): the shop is then on that server, and an empty
    /// database becomes a new shop whatever `mode` says.
    pub fn open(path: &Path, mode: OpenMode) -> Result<Store, StoreError> {
        if let Some(url) = path.to_str().filter(|p| is_server_address(p)) {
            return server::open(url);
        }
        let path_buf = path.to_path_buf();
        match std::fs::metadata(path) {
            Ok(meta) if meta.is_dir() => {
                return Err(StoreError::CannotOpen {
                    path: path_buf,
                    reason: "it is a directory".into(),
                })
            }
            Ok(meta) if !meta.is_file() => {
                // /dev/null, /dev/zero, a pipe: SQLite would answer "disk I/O error".
                return Err(StoreError::CannotOpen {
                    path: path_buf,
                    reason: "it is a device or pipe, not a shop file; give the path of a shop \
                             file (.sqlite)"
                        .into(),
                });
            }
            Ok(meta) => {
                if meta.permissions().readonly() {
                    return Err(StoreError::ReadOnlyFile { path: path_buf });
                }
                // SQLite keeps its journal files beside the shop, so the folder must be
                // writable too; otherwise it answers "the database is read-only", naming none.
                let folder = match path.parent() {
                    Some(p) if !p.as_os_str().is_empty() => p,
                    _ => Path::new("."),
                };
                if std::fs::metadata(folder).is_ok_and(|m| m.permissions().readonly()) {
                    return Err(StoreError::CannotOpen {
                        path: path_buf,
                        reason: format!(
                            "the folder {} is read-only, and sumpbook writes its journal files \
                             beside the shop; make the folder writable, or copy the shop into a \
                             folder you can write to",
                            folder.display()
                        ),
                    });
                }
                if meta.len() > 0 {
                    check_sqlite_header(path, meta.len())?;
                } else if mode == OpenMode::MustExist {
                    return Err(StoreError::NoShop { path: path_buf });
                }
            }
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
                if mode == OpenMode::MustExist {
                    return Err(StoreError::Missing { path: path_buf });
                }
            }
            Err(e) => {
                return Err(StoreError::Io {
                    path: path_buf,
                    source: e,
                })
            }
        }
        if let Some(notice) = lost_log(path) {
            if let Ok(mut notices) = OPEN_NOTICES.lock() {
                notices.insert(path_buf.clone(), notice.clone());
            }
            if let Some(report) = NOTICE_REPORTER.get() {
                report(path, &notice);
            }
        }
        let mut flags = OpenFlags::SQLITE_OPEN_READ_WRITE | OpenFlags::SQLITE_OPEN_NO_MUTEX;
        if mode == OpenMode::Create {
            flags |= OpenFlags::SQLITE_OPEN_CREATE;
        }
        let conn =
            Connection::open_with_flags(path, flags).map_err(|e| StoreError::CannotOpen {
                path: path_buf.clone(),
                reason: e.to_string(),
            })?;
        let mut store = Store {
            db: Db::Lite(conn),
            path: path_buf,
            queries: Cell::new(0),
            created: false,
            expect_unedited: Cell::new(None),
        };
        store.prepare_connection().map_err(|e| match e {
            StoreError::Busy => StoreError::Locked {
                path: path.to_path_buf(),
            },
            StoreError::Corrupt(reason) => StoreError::Damaged {
                path: path.to_path_buf(),
                reason,
            },
            other => other,
        })?;
        Ok(store)
    }

    /// Opens a private in-memory shop (tests, previews); nothing is written to disk.
    pub fn open_in_memory() -> Result<Store, StoreError> {
        let conn = Connection::open_in_memory()?;
        let mut store = Store {
            db: Db::Lite(conn),
            path: PathBuf::from(":memory:"),
            queries: Cell::new(0),
            created: false,
            expect_unedited: Cell::new(None),
        };
        store.prepare_connection()?;
        Ok(store)
    }

    fn prepare_connection(&mut self) -> Result<(), StoreError> {
        let not_db = |e: rusqlite::Error, path: &Path| match classify(e) {
            StoreError::Corrupt(_) => StoreError::NotSqlite {
                path: path.to_path_buf(),
            },
            other => other,
        };
        {
            let conn = self.lite()?;
            // SAFETY: the handle is this open connection's; the handler's context is only
            // used as a key into WAITS, never dereferenced.
            let handle = unsafe { conn.handle() };
            let key = handle as usize;
            if let Ok(mut waits) = WAITS.lock() {
                let now = std::time::Instant::now();
                waits.insert(
                    key,
                    Wait {
                        path: self.path.clone(),
                        since: now,
                        last_progress: now,
                        last_told: None,
                        files: Vec::new(),
                    },
                );
            }
            // SAFETY: as above; the handler is a plain function living for the program.
            let rc = unsafe {
                rusqlite::ffi::sqlite3_busy_handler(handle, Some(wait_for_lock), handle.cast())
            };
            if rc != rusqlite::ffi::SQLITE_OK {
                return Err(StoreError::CannotOpen {
                    path: self.path.clone(),
                    reason: format!("cannot set the lock wait (SQLite code {rc})"),
                });
            }
        }
        if self.lite()?.is_readonly(rusqlite::MAIN_DB).unwrap_or(false) {
            return Err(StoreError::ReadOnlyFile {
                path: self.path.clone(),
            });
        }
        let app_id: i32 = self
            .lite()?
            .query_row("PRAGMA application_id", [], |r| r.get(0))
            .map_err(|e| not_db(e, &self.path))?;
        let objects: i64 =
            self.lite()?
                .query_row("SELECT count(*) FROM sqlite_schema", [], |r| r.get(0))?;
        let has_meta: bool = self.lite()?.query_row(
            "SELECT count(*) FROM sqlite_schema WHERE type = 'table' AND name = 'sumpbook_meta'",
            [],
            |r| r.get::<_, i64>(0).map(|n| n > 0),
        )?;
        let ours = app_id == APPLICATION_ID || (app_id == 0 && has_meta);
        let empty = app_id == 0 && objects == 0;
        if !ours && !empty {
            return Err(StoreError::NotSumpbook {
                path: self.path.clone(),
            });
        }
        let known = Self::latest_schema_version();
        let current = MIGRATIONS
            .current_version(self.lite()?)
            .map_err(|e| StoreError::Migration(e.to_string()))?;
        let found: usize = current.into();
        if found > known {
            return Err(StoreError::TooNew {
                path: self.path.clone(),
                found,
                known,
            });
        }
        if ours && found == 0 {
            // The marker without a version: written by something that is not sumpbook.
            return Err(StoreError::NotSumpbook {
                path: self.path.clone(),
            });
        }

        let memory = self.path == Path::new(":memory:");
        // A new shop, or one to upgrade, is prepared by one process at a time.
        let _lock = if found < known && !memory {
            Some(MigrationLock::take(&self.path)?)
        } else {
            None
        };
        if !memory {
            // Switching the journal mode can meet a lock without SQLite's busy handler being
            // called (another process switching at the same moment); wait as for any lock.
            let started = std::time::Instant::now();
            let mode: String = loop {
                match self
                    .lite()?
                    .query_row("PRAGMA journal_mode = WAL", [], |r| r.get(0))
                {
                    Ok(mode) => break mode,
                    Err(e) => match classify(e) {
                        StoreError::Busy if started.elapsed() < BUSY_TIMEOUT => {
                            std::thread::sleep(Duration::from_millis(50))
                        }
                        other => return Err(other),
                    },
                }
            };
            if !mode.eq_ignore_ascii_case("wal") {
                return Err(StoreError::CannotOpen {
                    path: self.path.clone(),
                    reason: format!(
                        "cannot switch to write-ahead logging (journal mode is {mode})"
                    ),
                });
            }
        }
        self.lite()?.pragma_update(None, "foreign_keys", true)?;
        // A larger page cache keeps bulk imports into indexed tables fast; bounded at 16 MiB.
        self.lite()?.pragma_update(None, "cache_size", -16384)?;

        if found < known {
            self.migrate()?;
        }
        let app_id: i32 = self
            .lite()?
            .query_row("PRAGMA application_id", [], |r| r.get(0))?;
        if app_id != APPLICATION_ID {
            return Err(StoreError::Migration(
                "the schema did not set the sumpbook marker".into(),
            ));
        }
        Ok(())
    }

    /// Brings the schema to the latest version, one process at a time: the version is read
    /// again under the migration lock (another process may have done it meanwhile), an existing shop is
    /// backed up first (SQLite online backup beside the file), and the migrations run in one
    /// transaction that takes the write lock at its start.
    /// The caller holds the [`MigrationLock`].
    fn migrate(&mut self) -> Result<(), StoreError> {
        let memory = self.path == Path::new(":memory:");
        let known = Self::latest_schema_version();
        let found = self.schema_version()?;
        if found > known {
            return Err(StoreError::TooNew {
                path: self.path.clone(),
                found,
                known,
            });
        }
        if found == known {
            return Ok(());
        }
        if found > 0 && !memory {
            let backup = backup_path_before_migration(&self.path, found);
            self.backup_to(&backup)?;
        }
        self.lite_mut()?
            .set_transaction_behavior(rusqlite::TransactionBehavior::Immediate);
        let result = MIGRATIONS.to_latest(self.lite_mut()?);
        self.lite_mut()?
            .set_transaction_behavior(rusqlite::TransactionBehavior::Deferred);
        if result.is_err() {
            // The version is read before the migration's transaction takes the write lock, so
            // another program may have upgraded the file while this one waited for the lock;
            // its upgrade then fails on the objects already there and is rolled back whole.
            // What counts is the version the file is at now.
            match self.schema_version()? {
                now if now == known => return Ok(()),
                now if now > known => {
                    return Err(StoreError::TooNew {
                        path: self.path.clone(),
                        found: now,
                        known,
                    })
                }
                _ => {}
            }
        }
        result.map_err(|e| match e {
            rusqlite_migration::Error::RusqliteError { err, .. } => match classify(err) {
                StoreError::Busy => StoreError::Busy,
                other => StoreError::Migration(other.to_string()),
            },
            other => StoreError::Migration(other.to_string()),
        })
    }

    /// The schema version the file is at now.
    pub fn schema_version(&self) -> Result<usize, StoreError> {
        if let Db::Pg(p) = &self.db {
            return server::schema_version(p);
        }
        let v: SchemaVersion = MIGRATIONS
            .current_version(self.lite()?)
            .map_err(|e| StoreError::Migration(e.to_string()))?;
        Ok(v.into())
    }

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
        Ok((other, conn.total_changes()))
    }

    /// The newest schema version this program knows.
    pub fn latest_schema_version() -> usize {
        MIGRATION_DIR.dirs().count()
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
        OPEN_NOTICES.lock().ok()?.get(&self.path).cloned()
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

    /// Writes a consistent copy of the whole shop to `dest` with SQLite's online backup, while
    /// other readers and writers may go on using the file.
    ///
    /// The copy is written to a new side file beside `dest` (`crate::outfile`: random name,
    /// opened without following links) and renamed when complete without overwriting, so a
    /// file by the backup's name is always a whole backup; a failed copy leaves nothing behind.
    pub fn backup_to(&self, dest: &Path) -> Result<(), StoreError> {
        use rusqlite::backup::{Backup, StepResult};
        let out = crate::outfile::OutFile::create(
            dest,
            crate::outfile::Options {
                replace: false,
                devices_in_place: false,
                can_force: false,
            },
        )?;
        let Some(tmp) = out.side_path().map(Path::to_path_buf) else {
            return Err(StoreError::CannotOpen {
                path: dest.to_path_buf(),
                reason: "not a regular file".into(),
            });
        };
        let remove_sides = || {
            for suffix in ["-journal", "-wal", "-shm"] {
                let mut p = tmp.as_os_str().to_os_string();
                p.push(suffix);
                // Nothing to do if it is not there.
                let _ = std::fs::remove_file(PathBuf::from(p));
            }
        };
        // A damaged shop is refused before anything is copied: a copy of it would be kept as
        // a good backup and later overwrite the last copy that really is one.
        self.quick_check()?;
        self.count();
        let copied = match &self.db {
            Db::Lite(conn) => (|| -> Result<(), rusqlite::Error> {
                let mut dst = Connection::open_with_flags(
                    &tmp,
                    OpenFlags::SQLITE_OPEN_READ_WRITE
                        | OpenFlags::SQLITE_OPEN_NOFOLLOW
                        | OpenFlags::SQLITE_OPEN_NO_MUTEX,
                )?;
                let backup = Backup::new(conn, &mut dst)?;
                loop {
                    match backup.step(100)? {
                        StepResult::More => {}
                        StepResult::Done => return Ok(()),
                        _ => {
                            return Err(rusqlite::Error::SqliteFailure(
                                rusqlite::ffi::Error::new(rusqlite::ffi::SQLITE_BUSY),
                                Some("the shop is locked by another program".into()),
                            ))
                        }
                    }
                }
            })()
            .map_err(|e| e.to_string()),
            // A server shop is backed up as a new shop file holding all its rows.
            Db::Pg(_) => Store::open(&tmp, OpenMode::Create)
                .and_then(|copy| self.copy_into(&copy, false).map(|_| ()))
                .map_err(|e| e.to_string()),
        };
        remove_sides();
        if let Err(e) = copied {
            return Err(StoreError::CannotOpen {
                path: dest.to_path_buf(),
                reason: e.to_string(),
            });
        }
        // The copy is checked as written on disk; one that fails is dropped with its side file
        // (`out` is not committed), so no file by the backup's name is ever a bad copy.
        let copy_check = quick_check_file(&tmp);
        remove_sides();
        if let Err(reason) = copy_check {
            return Err(StoreError::CannotOpen {
                path: dest.to_path_buf(),
                reason: format!("the copy failed its check ({reason}); nothing was kept"),
            });
        }
        out.commit()?;
        Ok(())
    }

    /// `PRAGMA quick_check` = ok on a shop file, else [`StoreError::Damaged`] naming the file and
    /// what to do. Cheap next to `integrity_check` (no index-to-table cross check), so every
    /// write command and every backup runs it once. A server shop has nothing to check here.
    pub fn quick_check(&self) -> Result<(), StoreError> {
        if let Db::Lite(conn) = &self.db {
            self.count();
            quick_check_conn(conn).map_err(|reason| StoreError::Damaged {
                path: self.path.clone(),
                reason,
            })?;
        }
        Ok(())
    }

    /// `PRAGMA integrity_check` = ok.
    pub fn integrity_ok(&self) -> Result<bool, StoreError> {
        self.count();
        let Db::Lite(conn) = &self.db else {
            // The server keeps its own files consistent; a reachable server answers a query.
            return Ok(self.query_one("SELECT 1", params![], |r| r.get::<i64>(0))? == 1);
        };
        let r: String = conn.query_row("PRAGMA integrity_check", [], |r| r.get(0))?;
        Ok(r == "ok")
    }

    /// Begins a write transaction that takes the write lock at once (no lock upgrade later, so
    /// two writers wait on each other instead of failing midway).
    fn begin(&self) -> Result<TxGuard<'_>, StoreError> {
        self.begin_as(false)
    }

    /// [`Store::begin`]; `exclusive`: one such writer at a time on a server too.
    fn begin_as(&self, exclusive: bool) -> Result<TxGuard<'_>, StoreError> {
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
}

impl Store {
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
struct TxGuard<'c> {
    db: &'c Db,
    open: bool,
}

impl TxGuard<'_> {
    fn commit(mut self) -> Result<(), StoreError> {
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

/// Refuses a file that is not SQLite, and an SQLite file shorter than its own header says
/// (a half-copied or truncated file), before SQLite is asked to read it.
fn check_sqlite_header(path: &Path, file_len: u64) -> Result<(), StoreError> {
    let mut head = [0u8; 100];
    let mut file = std::fs::File::open(path).map_err(|e| StoreError::Io {
        path: path.to_path_buf(),
        source: e,
    })?;
    let mut read = 0;
    while read < head.len() {
        match file.read(&mut head[read..]) {
            Ok(0) => break,
            Ok(n) => read += n,
            Err(e) => {
                return Err(StoreError::Io {
                    path: path.to_path_buf(),
                    source: e,
                })
            }
        }
    }
    if read < 16 || &head[..16] != SQLITE_HEADER {
        return Err(StoreError::NotSqlite {
            path: path.to_path_buf(),
        });
    }
    let damaged = |reason: String| StoreError::Damaged {
        path: path.to_path_buf(),
        reason,
    };
    if read < head.len() {
        return Err(damaged(format!("only {file_len} bytes")));
    }
    // File format: page size at offset 16 (1 means 65536), the change counter at 24, the size
    // in pages at 28, valid when the "version-valid-for" number at 92 equals the counter.
    let be32 = |at: usize| u32::from_be_bytes([head[at], head[at + 1], head[at + 2], head[at + 3]]);
    let page_size = match u16::from_be_bytes([head[16], head[17]]) {
        1 => 65_536u64,
        n => u64::from(n),
    };
    let pages = u64::from(be32(28));
    // With a write-ahead log beside the file (after a crash, say) the log holds pages the file
    // does not have yet, and SQLite recovers them: only a file without one must be complete.
    let mut wal = path.as_os_str().to_owned();
    wal.push("-wal");
    let wal_has_frames = std::fs::metadata(PathBuf::from(wal)).is_ok_and(|m| m.len() > 0);
    if !wal_has_frames && be32(92) == be32(24) && pages > 0 && pages * page_size > file_len {
        return Err(damaged(format!(
            "it holds {file_len} bytes but should hold {} pages of {page_size} bytes",
            pages
        )));
    }
    Ok(())
}

/// Keeps a second process from upgrading or creating the same shop at the same moment: an
/// exclusive lock on a file beside the shop, held while the schema is checked, backed up and
/// migrated, removed afterwards.
struct MigrationLock {
    file: std::fs::File,
    path: PathBuf,
}

impl MigrationLock {
    fn take(db: &Path) -> Result<MigrationLock, StoreError> {
        let mut name = db.file_name().map(|n| n.to_os_string()).unwrap_or_default();
        name.push(".upgrading");
        let path = db.with_file_name(name);
        let io = |e: std::io::Error| StoreError::Io {
            path: path.clone(),
            source: e,
        };
        // Every process must find the same name, so it cannot be random; instead a link
        // planted there is refused (O_NOFOLLOW), nothing is ever written to the file, and only
        // a regular file is locked (a pipe would block, a device is not ours).
        let mut opts = std::fs::OpenOptions::new();
        opts.create(true).truncate(false).write(true);
        #[cfg(unix)]
        {
            use std::os::unix::fs::OpenOptionsExt;
            opts.custom_flags(libc::O_NOFOLLOW | libc::O_NONBLOCK)
                .mode(0o600);
        }
        let file = opts.open(&path).map_err(|e| {
            if std::fs::symlink_metadata(&path).is_ok_and(|m| m.file_type().is_symlink()) {
                StoreError::CannotOpen {
                    path: path.clone(),
                    reason: "a link is in the place of sumpbook's lock file; remove it".into(),
                }
            } else {
                io(e)
            }
        })?;
        if !file.metadata().map_err(io)?.is_file() {
            return Err(StoreError::CannotOpen {
                path: path.clone(),
                reason: "not a regular file in the place of sumpbook's lock file; remove it".into(),
            });
        }
        file.lock().map_err(io)?;
        Ok(MigrationLock { file, path })
    }
}

impl Drop for MigrationLock {
    fn drop(&mut self) {
        // A leftover file does no harm; the lock goes with the handle.
        let _ = std::fs::remove_file(&self.path);
        let _ = self.file.unlock();
    }
}

/// Where the automatic backup before upgrading from schema `version` goes.
pub fn backup_path_before_migration(path: &Path, version: usize) -> PathBuf {
    let mut name = path
        .file_name()
        .map(|n| n.to_os_string())
        .unwrap_or_default();
    name.push(format!(".before-schema-{}.sqlite", version + 1));
    let mut candidate = path.with_file_name(&name);
    let mut n = 2;
    while candidate.exists() {
        let mut numbered = name.clone();
        numbered.push(format!(".{n}"));
        candidate = path.with_file_name(numbered);
        n += 1;
    }
    candidate
}

/// Formats a time for a column: `YYYY-MM-DDTHH:MM:SSZ`. Sub-second parts are refused, not
/// dropped, because stored readings are evidence.
pub fn fmt_time(field: &str, t: &DateTime<Utc>) -> Result<String, StoreError> {
    if t.nanosecond() != 0 {
        return Err(StoreError::Invalid {
            field: field.into(),
            reason: "times are kept to the second; fractions of a second are not stored".into(),
        });
    }
    Ok(fmt_time_stamp(t))
}

/// Formats a time to the second, dropping any fraction: for stamps the program makes itself
/// (edit times, acknowledgement times), not for readings.
pub fn fmt_time_stamp(t: &DateTime<Utc>) -> String {
    let year = t.year();
    if (0..=9999).contains(&year) {
        // Digit by digit: an import formats a million of these, and `write!` took a twentieth
        // of its time.
        let two = |v: u32| [b'0' + (v / 10 % 10) as u8, b'0' + (v % 10) as u8];
        let y = year as u32;
        let [y1, y2] = two(y / 100);
        let [y3, y4] = two(y % 100);
        let [m1, m2] = two(t.month());
        let [d1, d2] = two(t.day());
        let [h1, h2] = two(t.hour());
        let [i1, i2] = two(t.minute());
        let [s1, s2] = two(t.second());
        let b = [
            y1, y2, y3, y4, b'-', m1, m2, b'-', d1, d2, b'T', h1, h2, b':', i1, i2, b':', s1, s2,
            b'Z',
        ];
        return b.iter().map(|&c| char::from(c)).collect();
    }
    let mut s = String::with_capacity(20);
    use std::fmt::Write;
    // Writing to a String cannot fail.
    let _ = write!(
        s,
        "{:04}-{:02}-{:02}T{:02}:{:02}:{:02}Z",
        t.year(),
        t.month(),
        t.day(),
        t.hour(),
        t.minute(),
        t.second()
    );
    s
}

/// Parses a stored `YYYY-MM-DDTHH:MM:SSZ`.
pub fn parse_time(s: &str) -> Result<DateTime<Utc>, StoreError> {
    let bad = || StoreError::Corrupt(format!("`{s}` is not a stored time"));
    let b = s.as_bytes();
    if b.len() != 20
        || b[4] != b'-'
        || b[7] != b'-'
        || b[10] != b'T'
        || b[13] != b':'
        || b[16] != b':'
        || b[19] != b'Z'
    {
        return Err(bad());
    }
    let num = |range: std::ops::Range<usize>| -> Result<u32, StoreError> {
        let mut v = 0u32;
        for &c in &b[range] {
            if !c.is_ascii_digit() {
                return Err(bad());
            }
            v = v * 10 + u32::from(c - b'0');
        }
        Ok(v)
    };
    let year = i32::try_from(num(0..4)?).map_err(|_| bad())?;
    let date = NaiveDate::from_ymd_opt(year, num(5..7)?, num(8..10)?).ok_or_else(bad)?;
    let dt = date
        .and_hms_opt(num(11..13)?, num(14..16)?, num(17..19)?)
        .ok_or_else(bad)?;
    Ok(dt.and_utc())
}

/// A column time read from a row, as a model time.
fn time_col(row: &Row<'_>, idx: usize) -> Result<DateTime<Utc>, StoreError> {
    let Some(s) = row.text(idx)? else {
        return Err(StoreError::Corrupt(format!(
            "column {idx} holds no time where one is required"
        )));
    };
    parse_time(s)
}

/// A text column holding one of a closed set of names.
fn enum_col<T: std::str::FromStr<Err = String>>(
    row: &Row<'_>,
    idx: usize,
) -> Result<T, StoreError> {
    let Some(s) = row.text(idx)? else {
        return Err(StoreError::Corrupt(format!(
            "column {idx} holds no value where one is required"
        )));
    };
    s.parse::<T>().map_err(StoreError::Corrupt)
}

fn opt_enum_col<T: std::str::FromStr<Err = String>>(
    row: &Row<'_>,
    idx: usize,
) -> Result<Option<T>, StoreError> {
    row.text(idx)?
        .map(|s| s.parse::<T>().map_err(StoreError::Corrupt))
        .transpose()
}

/// Who confirmed a questioned reading and when, from the two columns `confirmed_by` and
/// `confirmed_at` at `idx` and `idx + 1` (both NULL when nobody has).
fn confirmation_cols(
    row: &Row<'_>,
    idx: usize,
) -> Result<Option<crate::model::Confirmation>, StoreError> {
    let Some(by) = row.text(idx)? else {
        return Ok(None);
    };
    let by = by.to_string();
    Ok(Some(crate::model::Confirmation {
        by,
        at: time_col(row, idx + 1)?,
    }))
}

/// The `confirmed_at` column text of a confirmation (`None` when there is none).
fn confirmation_time(c: &Option<crate::model::Confirmation>) -> Result<Option<String>, StoreError> {
    c.as_ref()
        .map(|k| fmt_time("confirmed_at", &k.at))
        .transpose()
}

/// Runs `PRAGMA quick_check` on `conn`: `Err` holds the first problems it names (or the error
/// that stopped it, as a damaged page often does).
fn quick_check_conn(conn: &Connection) -> Result<(), String> {
    let rows = (|| -> Result<Vec<String>, rusqlite::Error> {
        let mut stmt = conn.prepare("PRAGMA quick_check(3)")?;
        let rows = stmt.query_map([], |r| r.get::<_, String>(0))?;
        rows.collect()
    })()
    .map_err(|e| format!("quick check: {e}"))?;
    if rows.len() == 1 && rows[0] == "ok" {
        Ok(())
    } else {
        Err(format!("quick check: {}", rows.join("; ")))
    }
}

/// [`quick_check_conn`] on a file of its own connection (the copy a backup just wrote).
fn quick_check_file(path: &Path) -> Result<(), String> {
    let conn = Connection::open_with_flags(
        path,
        // Read-write: the copy is in WAL mode, and a read-only connection could not make the
        // shared-memory file it needs. It is our own side file, removed after.
        OpenFlags::SQLITE_OPEN_READ_WRITE
            | OpenFlags::SQLITE_OPEN_NOFOLLOW
            | OpenFlags::SQLITE_OPEN_NO_MUTEX,
    )
    .map_err(|e| e.to_string())?;
    quick_check_conn(&conn)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn time_stamps_are_written_like_the_format_string_would() {
        // Each digit position, the year 0 and 9999 edges, and the fallback beyond them.
        for text in [
            "2024-02-29T23:59:07Z",
            "0000-01-01T00:00:00Z",
            "0999-10-09T09:08:01Z",
            "9999-12-31T23:59:59Z",
            "1970-01-01T00:00:00Z",
        ] {
            let t = parse_time(text).unwrap();
            assert_eq!(fmt_time_stamp(&t), text);
            let by_format = format!(
                "{:04}-{:02}-{:02}T{:02}:{:02}:{:02}Z",
                t.year(),
                t.month(),
                t.day(),
                t.hour(),
                t.minute(),
                t.second()
            );
            assert_eq!(fmt_time_stamp(&t), by_format);
        }
        let far = NaiveDate::from_ymd_opt(12345, 6, 7)
            .unwrap()
            .and_hms_opt(8, 9, 10)
            .unwrap()
            .and_utc();
        assert_eq!(fmt_time_stamp(&far), "12345-06-07T08:09:10Z");
    }

    #[test]
    fn stored_times_round_trip_and_sort_as_text() {
        let t = parse_time("2024-02-29T23:59:07Z").unwrap();
        assert_eq!(fmt_time("taken_at", &t).unwrap(), "2024-02-29T23:59:07Z");
        assert!(parse_time("2025-02-29T00:00:00Z").is_err());
        assert!(parse_time("2025-01-01 00:00:00Z").is_err());
        let frac = t + chrono::Duration::milliseconds(5);
        assert!(
            matches!(fmt_time("taken_at", &frac), Err(StoreError::Invalid { field, .. }) if field == "taken_at")
        );
        assert_eq!(fmt_time_stamp(&frac), "2024-02-29T23:59:07Z");
    }

    #[test]
    fn constraint_messages_name_the_field() {
        let e = constraint_error(
            "CHECK constraint failed: pressure_bar: must be between 0 and 1000 bar",
        )
        .unwrap();
        assert!(
            matches!(e, StoreError::Invalid { ref field, .. } if field == "pressure_bar"),
            "{e:?}"
        );
        let e = constraint_error("NOT NULL constraint failed: checks.unit_id").unwrap();
        assert!(
            matches!(e, StoreError::Invalid { ref field, .. } if field == "unit_id"),
            "{e:?}"
        );
        let e = constraint_error("NOT NULL constraint failed: edit_log.edited_by").unwrap();
        assert!(matches!(e, StoreError::NoEditContext));
        let e = constraint_error("UNIQUE constraint failed: units.tag").unwrap();
        assert_eq!(e.to_string(), "a unit with this tag already exists");
        // The schema's refusal of a replacement (version 4) reads as the same duplicate.
        let e = constraint_error(
            "UNIQUE constraint failed: checks.unit_id, checks.taken_at; a stored row is changed \
             only by UPDATE, which edit_log records, never replaced",
        )
        .unwrap();
        assert_eq!(
            e.to_string(),
            "a check of this unit at this time already exists"
        );
    }

    #[test]
    fn every_migration_applies_in_memory() {
        MIGRATIONS.validate().unwrap();
        assert_eq!(Store::latest_schema_version(), 6);
    }
}
