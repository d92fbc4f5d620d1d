//! Waiting for another program's lock on a shop file: SQLite's busy handler keeps waiting while
//! the holder makes progress (its shop file or write-ahead log changes), tells the user once a
//! wait lasts, and gives up after [`BUSY_TIMEOUT`] without progress. It prints nothing itself
//! and runs no SQL.

use std::path::{Path, PathBuf};
use std::sync::LazyLock;
use std::time::Duration;

use rusqlite::Connection;

use super::StoreError;

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
    /// Give up at once instead of waiting (a write that may as well be skipped, `kept`).
    give_up: bool,
}

/// Makes the busy handler of the connection whose SQLite handle is at `key` give up at once
/// (`true`) or wait as usual (`false`).
pub(super) fn set_give_up(key: usize, give_up: bool) {
    if let Ok(mut waits) = WAITS.lock() {
        if let Some(w) = waits.get_mut(&key) {
            w.give_up = give_up;
        }
    }
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
        if w.give_up {
            return 0;
        }
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

/// Has SQLite call [`wait_for_lock`] whenever `conn`, a connection to the shop at `path`, meets
/// a lock.
pub(super) fn watch(conn: &Connection, path: &Path) -> Result<(), StoreError> {
    // SAFETY: the handle is this open connection's; the handler's context is only used as a
    // key into WAITS, never dereferenced.
    let handle = unsafe { conn.handle() };
    let key = handle as usize;
    if let Ok(mut waits) = WAITS.lock() {
        let now = std::time::Instant::now();
        waits.insert(
            key,
            Wait {
                path: path.to_path_buf(),
                since: now,
                last_progress: now,
                last_told: None,
                files: Vec::new(),
                give_up: false,
            },
        );
    }
    // SAFETY: as above; the handler is a plain function living for the program.
    let rc =
        unsafe { rusqlite::ffi::sqlite3_busy_handler(handle, Some(wait_for_lock), handle.cast()) };
    if rc != rusqlite::ffi::SQLITE_OK {
        return Err(StoreError::CannotOpen {
            path: path.to_path_buf(),
            reason: format!("cannot set the lock wait (SQLite code {rc})"),
        });
    }
    Ok(())
}
