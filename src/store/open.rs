//! Opening a shop: refusing what is not one (not SQLite, SQLite of another program, a newer
//! sumpbook's file, a truncated file, a read-only file or folder), switching to write-ahead
//! logging, and upgrading the schema when the file is older than this program.

use std::cell::Cell;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::time::Duration;

use rusqlite::{Connection, OpenFlags};

use super::db::Db;
use super::migrate::MigrationLock;
use super::{
    classify, is_server_address, lock_wait, server, unclean_close, OpenMode, Store, StoreError,
    BUSY_TIMEOUT, MIGRATIONS,
};

/// `PRAGMA application_id` of a sumpbook shop: the bytes `SUMP`.
pub const APPLICATION_ID: i32 = 0x5355_4D50;

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
        unclean_close::look_before_open(path);
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
            own_keeping: Cell::new(0),
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
            own_keeping: Cell::new(0),
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
        lock_wait::watch(self.lite()?, &self.path)?;
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
