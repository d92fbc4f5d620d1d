//! Copies and checks of a whole shop: the online backup into a new file beside the shop (a
//! server shop is copied into a new shop file), and SQLite's quick and full integrity checks.

use std::path::{Path, PathBuf};

use rusqlite::{Connection, OpenFlags};

use super::db::{params, Db};
use super::{OpenMode, Store, StoreError};

impl Store {
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
