//! CSV sniffing: telling a CSV file's kind from its header and reading its first rows for
//! showing. It must not import or judge rows; that is the importer's.

use crate::app::AppError;
use crate::exchange::FileKind;

/// The kind of a CSV file, told from its header line: the kind whose columns include every
/// name in it and whose required columns are all there.
pub fn detect_kind(header: &[String]) -> Option<FileKind> {
    let names: Vec<&str> = header
        .iter()
        .map(|h| h.trim())
        .filter(|h| !h.is_empty())
        .collect();
    let mut fits = FileKind::ALL.iter().copied().filter(|&k| {
        let specs = crate::exchange::csv_in::specs(k);
        names.iter().all(|n| specs.iter().any(|s| s.name == *n))
    });
    let first = fits.next();
    // Ambiguous (only columns common to several kinds): let the fullest match win.
    match (first, fits.next()) {
        (Some(a), None) => Some(a),
        (Some(a), Some(b)) => {
            let key = |k: FileKind| match k {
                FileKind::Checks => names.contains(&"taken_at"),
                FileKind::Samples => names.contains(&"sampled_at"),
                FileKind::Events => names.contains(&"done_at"),
                FileKind::Units => names.contains(&"machine_tag"),
            };
            [a, b].into_iter().chain(fits).find(|&k| key(k))
        }
        _ => None,
    }
}

/// The first rows of a CSV file as text, for showing before anything is imported. Reads only
/// what it shows; the real reading, with every rule, is the importer's.
pub(super) fn head_rows(
    path: &std::path::Path,
    max: usize,
) -> Result<(Vec<String>, Vec<Vec<String>>), AppError> {
    crate::exchange::csv_in::head_of_file(path, max)
        .map_err(|e| AppError::BadInput(format!("{}: {e}", path.display())))
}
