//! Bringing a shop's schema up to date: the embedded migrations, the schema version a file is
//! at, the lock that lets one process at a time upgrade or create a shop, and the backup taken
//! beside an existing shop before it is upgraded.

use std::path::{Path, PathBuf};
use std::sync::LazyLock;

use include_dir::{include_dir, Dir};
use rusqlite_migration::{Migrations, SchemaVersion};

use super::db::Db;
use super::{classify, server, Store, StoreError};

pub(super) static MIGRATION_DIR: Dir<'static> =
    include_dir!("$CARGO_MANIFEST_DIR/migrations/sqlite");

/// The SQLite schema migrations, embedded at build time from `migrations/sqlite/N-name/up.sql`
/// (the server's are in `migrations/postgres`, one for one with these).
///
/// A malformed migration folder is a build defect; it yields an empty set here, which
/// [`Store::open`] reports as [`StoreError::Migration`] and `MIGRATIONS.validate()` fails on.
pub static MIGRATIONS: LazyLock<Migrations<'static>> = LazyLock::new(|| {
    Migrations::from_directory(&MIGRATION_DIR).unwrap_or_else(|_| Migrations::new(Vec::new()))
});

impl Store {
    /// Brings the schema to the latest version, one process at a time: the version is read
    /// again under the migration lock (another process may have done it meanwhile), an existing shop is
    /// backed up first (SQLite online backup beside the file), and the migrations run in one
    /// transaction that takes the write lock at its start.
    /// The caller holds the [`MigrationLock`].
    pub(super) fn migrate(&mut self) -> Result<(), StoreError> {
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

    /// The newest schema version this program knows.
    pub fn latest_schema_version() -> usize {
        MIGRATION_DIR.dirs().count()
    }
}

/// Keeps a second process from upgrading or creating the same shop at the same moment: an
/// exclusive lock on a file beside the shop, held while the schema is checked, backed up and
/// migrated, removed afterwards.
pub(super) struct MigrationLock {
    file: std::fs::File,
    path: PathBuf,
}

impl MigrationLock {
    pub(super) fn take(db: &Path) -> Result<MigrationLock, StoreError> {
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_migration_applies_in_memory() {
        MIGRATIONS.validate().unwrap();
        assert_eq!(Store::latest_schema_version(), 10);
    }
}
