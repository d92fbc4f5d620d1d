//! Import preview: importing into a scratch copy of the shop (through the one import path,
//! `app::import`) to list every bad row before anything is written. It must not parse CSV
//! cells; that is `exchange::csv_in`'s.

use super::*;
use std::sync::atomic::Ordering;

use crate::app::import::ImportOptions;
pub use crate::app::import::{Cancel, Columns, ImportRun, Resolved};
use crate::app::shop::Shop;
use crate::app::AppError;
pub use crate::exchange::mapping::Mapping;
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
    /// The mapping the file's own column names are read through (or, with `needs_mapping`,
    /// the one proposed); `None` for sumpbook's own names.
    pub mapping: Option<Mapping>,
    /// The saved profile of that mapping.
    pub profile: Option<String>,
    /// No mapping is decided for this file yet: nothing was read beyond the header.
    pub needs_mapping: bool,
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
    preview_import_with(db, file, &Columns::Auto, progress, cancel)
}

/// [`preview_import`] reading the file's columns as `columns` says.
pub fn preview_import_with(
    db: &std::path::Path,
    file: &std::path::Path,
    columns: &Columns,
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
    let resolved = Shop::open(db)?.resolve_columns(None, &header, &rows, columns)?;
    let kind = resolved.kind();
    let (mapping, profile) = match resolved {
        Resolved::Native(_) => (None, None),
        Resolved::Mapped(m, p) => (Some(m), p),
        Resolved::Needs(m) => {
            let reason = format!(
                "the columns are not sumpbook's own and no saved column mapping has this header \
                 (no row was read); {} column(s) still to map or ignore",
                m.undecided().len()
            );
            return Ok(Some(ImportPreview {
                kind,
                header,
                rows,
                outcome: Err(vec![RowError {
                    file: file
                        .file_name()
                        .map(|n| n.to_string_lossy().into_owned())
                        .unwrap_or_default(),
                    line: 1,
                    column: "header".into(),
                    reason,
                }]),
                mapping: Some(m),
                profile: None,
                needs_mapping: true,
            }));
        }
    };
    let scratch = scratch_path(db);
    let result = (|| {
        Shop::open(db)?.backup(&scratch)?;
        let opts = ImportOptions {
            progress,
            cancel: Some(cancel),
            name_only: true,
            columns: mapping.clone().map_or(Columns::Auto, Columns::Given),
            ..ImportOptions::default()
        };
        Shop::open(&scratch)?.import(kind, file, &opts)
    })();
    remove_db_files(&scratch);
    let outcome = match result? {
        ImportRun::Cancelled => return Ok(None),
        ImportRun::Done(mut s) => {
            s.profile.clone_from(&profile);
            Ok(s)
        }
        ImportRun::Refused(e) => Err(e),
        // The mapping was decided above; the scratch copy reads through it.
        ImportRun::NeedsMapping(_) => {
            return Err(AppError::Failed(
                "the import preview lost its column mapping".into(),
            ))
        }
    };
    Ok(Some(ImportPreview {
        kind,
        header,
        rows,
        outcome,
        mapping,
        profile,
        needs_mapping: false,
    }))
}
