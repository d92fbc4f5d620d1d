//! Mapping each backend's errors to [`StoreError`]: SQLite's result codes and constraint
//! messages, PostgreSQL's SQLSTATE codes and constraint names. The schema names every CHECK
//! constraint `<column>: <rule>` on both backends, so that the user is told which field was
//! refused and why. No SQL is run here.

use super::StoreError;

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
