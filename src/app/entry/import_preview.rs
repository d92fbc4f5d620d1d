//! Import preview: importing into a scratch copy of the shop (through the one import path,
//! `app::import`) to list every bad row before anything is written. It must not parse CSV
//! cells; that is `exchange::csv_in`'s.

use super::*;
use std::sync::atomic::Ordering;

use crate::app::import::ImportOptions;
pub use crate::app::import::{Cancel, ImportRun};
use crate::app::shop::Shop;
use crate::app::AppError;
use crate::exchange::{FileKind, ImportSummary, RowError};

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
        Shop::open(db)?.backup(&scratch)?;
        let opts = ImportOptions {
            progress,
            cancel: Some(cancel),
            name_only: true,
            ..ImportOptions::default()
        };
        Shop::open(&scratch)?.import(kind, file, &opts)
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
