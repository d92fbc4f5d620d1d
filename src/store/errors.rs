//! [`StoreError`], everything the store can refuse or fail with, and the mapping of each
//! backend's errors to it: SQLite's result codes and constraint messages, PostgreSQL's SQLSTATE
//! codes and constraint names. The schema names every CHECK
//! constraint `<column>: <rule>` on both backends, so that the user is told which field was
//! refused and why. No SQL is run here.

use std::path::PathBuf;

use super::BUSY_TIMEOUT;

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

impl From<rusqlite::Error> for StoreError {
    fn from(e: rusqlite::Error) -> Self {
        classify(e)
    }
}

/// Turns SQLite's message for a failed constraint into the field and rule it names.
pub(crate) fn classify(e: rusqlite::Error) -> StoreError {
    use rusqlite::ffi::ErrorCode;
    let (code, msg) = match &e {
        rusqlite::Error::SqliteFailure(f, msg) => (f.code, msg.clone().unwrap_or_default()),
        rusqlite::Error::FromSqlConversionFailure(..)
        | rusqlite::Error::InvalidColumnType(..)
        | rusqlite::Error::IntegralValueOutOfRange(..) => {
            return StoreError::Corrupt(e.to_string())
        }
        _ => return StoreError::Sqlite(e),
    };
    match code {
        ErrorCode::DatabaseBusy | ErrorCode::DatabaseLocked => StoreError::Busy,
        ErrorCode::ReadOnly => StoreError::ReadOnly,
        ErrorCode::NotADatabase => StoreError::Corrupt("the file is not a database".into()),
        ErrorCode::DatabaseCorrupt => StoreError::Corrupt(msg),
        ErrorCode::ConstraintViolation => constraint_error(&msg).unwrap_or(StoreError::Sqlite(e)),
        _ => StoreError::Sqlite(e),
    }
}

pub(crate) fn constraint_error(msg: &str) -> Option<StoreError> {
    if let Some(rest) = msg.strip_prefix("CHECK constraint failed: ") {
        // Constraints are named "<column>: <rule>" in the schema.
        return Some(match rest.split_once(": ") {
            Some((field, reason)) => StoreError::Invalid {
                field: field.into(),
                reason: reason.into(),
            },
            None => StoreError::Invalid {
                field: rest.into(),
                reason: "value out of range".into(),
            },
        });
    }
    if let Some(rest) = msg.strip_prefix("NOT NULL constraint failed: ") {
        if rest == "edit_log.edited_by" {
            return Some(StoreError::NoEditContext);
        }
        let field = rest.rsplit('.').next().unwrap_or(rest);
        return Some(StoreError::Invalid {
            field: field.into(),
            reason: "must be given".into(),
        });
    }
    if let Some(rest) = msg.strip_prefix("UNIQUE constraint failed: ") {
        // The schema's own refusal of a replacement adds why after "; " (schema version 4).
        let key = rest.split_once("; ").map_or(rest, |(key, _)| key);
        return Some(duplicate(key));
    }
    if msg.starts_with("FOREIGN KEY constraint failed") {
        return Some(StoreError::BadReference);
    }
    if let Some(rest) = msg.strip_prefix("cannot store ") {
        // STRICT tables: "cannot store TEXT value in REAL column checks.pressure_bar"
        let field = rest.rsplit('.').next().unwrap_or(rest);
        return Some(StoreError::Invalid {
            field: field.into(),
            reason: format!("wrong type: cannot store {rest}"),
        });
    }
    if !msg.is_empty() {
        return Some(StoreError::Refused(msg.into()));
    }
    None
}

/// The duplicate key named by SQLite's message (`checks.unit_id, checks.taken_at`) or by the
/// server's constraint name (`checks_unit_id_taken_at_key`), in the user's words.
fn duplicate(key: &str) -> StoreError {
    let what = match key {
        "checks.unit_id, checks.taken_at" | "checks_unit_id_taken_at_key" => {
            "a check of this unit at this time"
        }
        "samples.unit_id, samples.sampled_at" | "samples_unit_id_sampled_at_key" => {
            "a sample of this unit at this time"
        }
        "events.unit_id, events.done_at, events.kind" | "events_unit_id_done_at_kind_key" => {
            "an event of this kind on this unit at this time"
        }
        "machines.tag" | "machines_tag_key" => "a machine with this tag",
        "units.tag" | "units_tag_key" => "a unit with this tag",
        "fluids.name" | "fluids_name_key" => "a fluid with this name",
        "index 'limits_scope_key'" | "limits_scope_key" => "a limit with this key",
        other => {
            return StoreError::Duplicate {
                what: format!("a row with the same {other}"),
            }
        }
    };
    StoreError::Duplicate { what: what.into() }
}

/// The server keeps names to 63 bytes: a longer constraint name of the schema comes back cut
/// short. The whole name is the one of the shop file's schema (the same names on both
/// backends) that begins with it.
fn full_constraint_name(name: &str) -> String {
    const PG_NAME_BYTES: usize = 63;
    if name.len() < PG_NAME_BYTES {
        return name.to_string();
    }
    for file in super::MIGRATION_DIR.dirs().flat_map(|d| d.files()) {
        let Some(sql) = file.contents_utf8() else {
            continue;
        };
        for part in sql.split("CONSTRAINT \"").skip(1) {
            if let Some((full, _)) = part.split_once('"') {
                if full.len() > name.len() && full.starts_with(name) {
                    return full.to_string();
                }
            }
        }
    }
    name.to_string()
}

/// A server error as the user can act on it (SQLSTATE codes of PostgreSQL's appendix A).
pub(crate) fn from_pg(e: postgres::Error) -> StoreError {
    let Some(db) = e.as_db_error() else {
        if e.is_closed() {
            return StoreError::ServerGone(e.to_string());
        }
        let text = e.to_string();
        // A dropped connection shows as an I/O error of the client.
        if text.contains("connection")
            || text.contains("closed")
            || text.contains("I/O")
            || text.contains("communicating")
        {
            return StoreError::ServerGone(text);
        }
        return StoreError::Server(text);
    };
    let msg = db.message().to_string();
    match db.code().code() {
        // check_violation: the constraint is named "<column>: <rule>".
        "23514" => match db
            .constraint()
            .map(full_constraint_name)
            .as_deref()
            .and_then(|c| c.split_once(": "))
        {
            Some((field, reason)) => StoreError::Invalid {
                field: field.into(),
                reason: reason.into(),
            },
            None => StoreError::Invalid {
                field: db.constraint().unwrap_or("value").into(),
                reason: "value out of range".into(),
            },
        },
        "23502" => match (db.table(), db.column()) {
            (Some("edit_log"), Some("edited_by")) => StoreError::NoEditContext,
            (_, Some(col)) => StoreError::Invalid {
                field: col.into(),
                reason: "must be given".into(),
            },
            _ => StoreError::Refused(msg),
        },
        "23505" => duplicate(db.constraint().unwrap_or("key")),
        "23503" => StoreError::BadReference,
        // raise_exception from the schema's triggers.
        "P0001" => StoreError::Refused(msg),
        // insufficient_privilege: the signed-in role may not do this.
        "42501" => StoreError::NotAllowed(msg),
        // serialization_failure, deadlock_detected, lock_not_available.
        "40001" | "40P01" | "55P03" => StoreError::Busy,
        "25006" => StoreError::ReadOnly,
        // invalid_text_representation, numeric_value_out_of_range, ...: a value the column
        // cannot hold.
        c if c.starts_with("22") => StoreError::Invalid {
            field: db.column().unwrap_or("value").into(),
            reason: msg,
        },
        // admin_shutdown, crash_shutdown, cannot_connect_now.
        "57P01" | "57P02" | "57P03" => StoreError::ServerGone(msg),
        _ => StoreError::Server(msg),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

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
}
