//! Import preview: cancelling long work, importing into a scratch copy of the shop to list every
//! bad row before anything is written, and the import itself with progress and cancel. It must
//! not parse CSV cells; that is `exchange::csv_in`'s.

use super::*;
use std::sync::atomic::{AtomicBool, Ordering};

use crate::app::status::store_error;
use crate::app::AppError;
use crate::exchange::{ExchangeError, FileKind, ImportSummary, RowError};
use crate::store::Store;

/// A flag another thread sets to ask long work to stop.
#[derive(Debug, Default)]
pub struct Cancel(AtomicBool);

impl Cancel {
    pub fn new() -> Self {
        Cancel(AtomicBool::new(false))
    }
    pub fn cancel(&self) {
        self.0.store(true, Ordering::SeqCst);
    }
    pub fn is_cancelled(&self) -> bool {
        self.0.load(Ordering::SeqCst)
    }
}

/// A reader that reports how far through the file it is and stops when asked to: the
/// importer then fails with an I/O error, its transaction is dropped, and nothing is written.
struct Watched<'a, R> {
    inner: R,
    read: u64,
    total: u64,
    reported: u64,
    progress: &'a dyn Fn(f32),
    cancel: &'a Cancel,
}

impl<R: std::io::Read> std::io::Read for Watched<'_, R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        if self.cancel.is_cancelled() {
            // Not `Interrupted`: readers retry on that.
            return Err(std::io::Error::other("import cancelled"));
        }
        let n = self.inner.read(buf)?;
        self.read += n as u64;
        if self.total > 0 && (self.read - self.reported) * 100 >= self.total {
            self.reported = self.read;
            (self.progress)((self.read as f64 / self.total as f64).min(1.0) as f32);
        }
        Ok(n)
    }
}

/// What an import would do, found by importing into a scratch copy of the shop.
#[derive(Clone, Debug, PartialEq)]
pub struct ImportPreview {
    pub kind: FileKind,
    pub header: Vec<String>,
    /// The first rows, as written.
    pub rows: Vec<Vec<String>>,
    /// What importing would write; `Err` lists every bad row (then nothing can be imported).
    pub outcome: Result<ImportSummary, Vec<RowError>>,
}

/// How an import ended.
#[derive(Clone, Debug, PartialEq)]
pub enum ImportRun {
    Done(ImportSummary),
    /// Stopped on request; nothing was written.
    Cancelled,
    /// Bad rows; nothing was written.
    Refused(Vec<RowError>),
}

fn scratch_path(db: &std::path::Path) -> std::path::PathBuf {
    static N: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);
    let n = N.fetch_add(1, Ordering::SeqCst);
    let stem = db
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    std::env::temp_dir().join(format!("{stem}-preview-{}-{n}.sqlite", std::process::id()))
}

fn remove_db_files(path: &std::path::Path) {
    for suffix in ["", "-wal", "-shm", "-journal"] {
        let mut p = path.as_os_str().to_owned();
        p.push(suffix);
        let _ = std::fs::remove_file(std::path::PathBuf::from(p));
    }
}

fn import_into(
    store: &mut Store,
    kind: FileKind,
    file: &std::path::Path,
    progress: &dyn Fn(f32),
    cancel: &Cancel,
) -> Result<ImportRun, AppError> {
    let f = std::fs::File::open(file)
        .map_err(|e| AppError::BadInput(format!("{}: {e}", file.display())))?;
    let total = f.metadata().map(|m| m.len()).unwrap_or(0);
    let watched = Watched {
        inner: f,
        read: 0,
        total,
        reported: 0,
        progress,
        cancel,
    };
    let label = file
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    match crate::exchange::csv_in::import_reader(store, kind, &label, watched, None) {
        Ok(mut summary) => {
            crate::app::shop::mark_questioned(store, kind, &mut summary)?;
            progress(1.0);
            Ok(ImportRun::Done(summary))
        }
        Err(_) if cancel.is_cancelled() => Ok(ImportRun::Cancelled),
        Err(ExchangeError::Rows(rows)) => Ok(ImportRun::Refused(rows)),
        Err(ExchangeError::Store(e)) => Err(store_error(e)),
        Err(other) => Err(AppError::Failed(other.to_string())),
    }
}

/// Reads a CSV file for import without changing the shop: tells its kind from the header,
/// shows its first rows, and imports it into a scratch copy of the shop to find every bad row
/// (and what a good file would add).
pub fn preview_import(
    db: &std::path::Path,
    file: &std::path::Path,
    progress: &dyn Fn(f32),
    cancel: &Cancel,
) -> Result<Option<ImportPreview>, AppError> {
    if !file.is_file() {
        return Err(AppError::BadInput(format!(
            "{}: no such file",
            file.display()
        )));
    }
    let (header, rows) = head_rows(file, 200)?;
    let kind = detect_kind(&header).ok_or_else(|| {
        AppError::BadInput(format!(
            "cannot tell what the file holds from its header ({}); a checks, samples, events or unit register \
             file names its columns, e.g. unit_tag,taken_at,reservoir_temp_c",
            header.join(",")
        ))
    })?;
    let scratch = scratch_path(db);
    let result = (|| {
        Store::open(db, crate::store::OpenMode::MustExist)
            .and_then(|s| s.backup_to(&scratch))
            .map_err(store_error)?;
        let mut copy =
            Store::open(&scratch, crate::store::OpenMode::MustExist).map_err(store_error)?;
        import_into(&mut copy, kind, file, progress, cancel)
    })();
    remove_db_files(&scratch);
    Ok(match result? {
        ImportRun::Cancelled => None,
        ImportRun::Done(s) => Some(ImportPreview {
            kind,
            header,
            rows,
            outcome: Ok(s),
        }),
        ImportRun::Refused(e) => Some(ImportPreview {
            kind,
            header,
            rows,
            outcome: Err(e),
        }),
    })
}

/// Imports a CSV file of `kind` into the shop at `db` on a connection of its own (so it can
/// run beside the app's), reporting progress; all or nothing, and nothing when cancelled.
pub fn run_import(
    db: &std::path::Path,
    kind: FileKind,
    file: &std::path::Path,
    progress: &dyn Fn(f32),
    cancel: &Cancel,
) -> Result<ImportRun, AppError> {
    let mut store = Store::open(db, crate::store::OpenMode::MustExist).map_err(store_error)?;
    // Nothing is written into a shop that is already damaged.
    store.quick_check().map_err(store_error)?;
    import_into(&mut store, kind, file, progress, cancel)
}
