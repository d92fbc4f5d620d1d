//! What is found when a shop file is opened after the program writing to it stopped without
//! closing it: a removed write-ahead log and how many saved changes went with it, read from the
//! shared-memory index before SQLite resets it. It tells the user through a reporter the
//! command line sets, prints nothing itself and runs no SQL.

use std::io::Read;
use std::path::{Path, PathBuf};
use std::sync::LazyLock;

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

/// Looks at `path` before SQLite opens it, keeps what must be told of it for
/// [`open_notice`] and tells it now through the reporter, if one is set.
pub(super) fn look_before_open(path: &Path) {
    if let Some(notice) = lost_log(path) {
        if let Ok(mut notices) = OPEN_NOTICES.lock() {
            notices.insert(path.to_path_buf(), notice.clone());
        }
        if let Some(report) = NOTICE_REPORTER.get() {
            report(path, &notice);
        }
    }
}

/// What was found at `path` when this process first opened it, if anything.
pub(super) fn open_notice(path: &Path) -> Option<String> {
    OPEN_NOTICES.lock().ok()?.get(path).cloned()
}
