//! Files in and out of a shop: CSV import (`csv_in`) and export (`csv_out`), and the demo shop
//! generator (`demo`).
//!
//! Four file kinds: the unit register (`units`), `checks`, `samples` and `events`. Headers
//! name the quantity and its unit (`reservoir_temp_c` or `reservoir_temp_f`, ...), so one
//! importer reads either unit system. A file that names its columns its own way (a lab's
//! "Sample Date", "Visc @ 40C (cSt)") is read through a column mapping (`mapping`).
//! Everything is read and written through the store; this module holds no SQL and computes no
//! health.
//!
//! CSV dialect (docs/engineering.md, "CSV files"): RFC 4180 quoting; the delimiter (`,` `;` or
//! tab) is detected from
//! the header line; UTF-8 with or without a byte-order mark. Times are ISO 8601: a date
//! (`2025-03-04`, taken as noon in the shop's time zone), or a date and time
//! (`2025-03-04T07:30:00Z`, `2025-03-04 07:30`, `2025-03-04T08:30:00+01:00`); a time without `Z`
//! or an offset is the shop's wall-clock time (`app::local_time`). A slashed or dotted
//! date (`11/20/2026`, `20.11.2026`) is read in the date order of the file's column mapping;
//! without one only when it can be read one way (`11/20/2026`, not `03/04/2026`). Anything else
//! is refused. Fractions of a second are refused: readings are
//! kept to the second. Export writes UTC with `Z`. Numbers use a decimal point.
//!
//! Export protects spreadsheets: a text cell beginning with `=`, `+`, `-`, `@`, tab or CR is
//! written with a leading `'` so it is not run as a formula (numbers, negative ones too, are
//! written as they are); import removes that quote again.

use std::fmt;
use std::path::PathBuf;

use crate::store::StoreError;

pub mod csv_in;
pub mod csv_out;
pub mod demo;
pub mod large_shop;
pub mod mapping;

/// The kinds of file sumpbook reads and writes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum FileKind {
    /// The unit register: machines, hydraulic units and their fluids.
    Units,
    Checks,
    Samples,
    Events,
}

impl FileKind {
    pub const ALL: [FileKind; 4] = [
        FileKind::Units,
        FileKind::Checks,
        FileKind::Samples,
        FileKind::Events,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            FileKind::Units => "units",
            FileKind::Checks => "checks",
            FileKind::Samples => "samples",
            FileKind::Events => "events",
        }
    }

    /// The file name used in `sample-data/`.
    pub fn file_name(self) -> &'static str {
        match self {
            FileKind::Units => "units.csv",
            FileKind::Checks => "checks.csv",
            FileKind::Samples => "samples.csv",
            FileKind::Events => "events.csv",
        }
    }
}

impl fmt::Display for FileKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

impl std::str::FromStr for FileKind {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        match s.trim() {
            "units" => Ok(FileKind::Units),
            "checks" => Ok(FileKind::Checks),
            "samples" => Ok(FileKind::Samples),
            "events" => Ok(FileKind::Events),
            other => Err(format!(
                "`{other}` is not a file kind; expected units|checks|samples|events"
            )),
        }
    }
}

/// One refused cell or row: shown as `FILE:LINE: COLUMN: reason`.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize)]
pub struct RowError {
    pub file: String,
    /// 1-based line of the file where the row starts (the header is line 1).
    pub line: u64,
    /// The column as named in the file's header (or the column that is missing).
    pub column: String,
    pub reason: String,
}

impl fmt::Display for RowError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{}:{}: {}: {}",
            self.file, self.line, self.column, self.reason
        )
    }
}

/// What an import did.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize)]
pub struct ImportSummary {
    pub kind: String,
    /// Data rows read (blank rows not counted).
    pub rows: u64,
    /// Rows written.
    pub inserted: u64,
    /// Rows already stored with the same values (a re-import); nothing written for them.
    pub unchanged: u64,
    /// Rows refused (only with keep-going; otherwise the import fails instead).
    pub rejected: u64,
    /// Where the refused rows were written, with a `reject_reason` column.
    pub rejects_file: Option<PathBuf>,
    /// For the unit register: machines and fluids added along with the units.
    pub machines_added: u64,
    pub fluids_added: u64,
    /// Numbers written with more significant digits than are stored (12), stored rounded.
    pub rounded: u64,
    /// The lowest and highest row id written (checks and samples), so the rows of this import
    /// can be told apart afterwards without holding a list of them.
    pub inserted_ids: Option<(i64, i64)>,
    /// Readings kept but questioned (a slipped decimal point, a pressure above the relief
    /// setting, ...), filled in by the application layer after the import.
    pub questioned: Vec<QuestionedRow>,
    /// The saved column mapping the file was read through, when it names its columns its own
    /// way.
    pub profile: Option<String>,
}

/// One questioned field of an imported reading.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize)]
pub struct QuestionedRow {
    pub unit: String,
    /// The reading's time, `YYYY-MM-DDTHH:MM:SSZ`.
    pub at: String,
    /// The field's key (`reservoir_temp`, `pressure`, `water_ppm`, ...).
    pub field: String,
    pub reason: String,
}

/// Why an import or export failed.
#[derive(Debug, thiserror::Error)]
pub enum ExchangeError {
    /// Bad rows; nothing was written. Every one is listed.
    #[error("{}", describe_errors(.0))]
    Rows(Vec<RowError>),
    #[error("{}: {source}", path.display())]
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("cannot write: {0}")]
    Write(std::io::Error),
    #[error(transparent)]
    Store(#[from] StoreError),
    /// The rejects file could not be made.
    #[error(transparent)]
    Out(#[from] crate::outfile::OutFileError),
}

/// What refused rows say: a problem of the header alone is called that (no row was read),
/// not a count of bad rows.
pub fn describe_errors(errors: &[RowError]) -> String {
    let head = if errors.iter().all(|e| e.line <= 1) {
        "nothing was imported; the problem is in the header line (no row was read)".to_string()
    } else {
        format!("{} bad row(s); nothing was imported", errors.len())
    };
    format!("{head}:\n{}", join_errors(errors))
}

fn join_errors(errors: &[RowError]) -> String {
    errors
        .iter()
        .map(ToString::to_string)
        .collect::<Vec<_>>()
        .join("\n")
}

/// Leading characters that make a spreadsheet treat a cell as a formula.
const FORMULA_LEADS: [char; 6] = ['=', '+', '-', '@', '\t', '\r'];

/// A text cell as written to a file: prefixed with `'` when a spreadsheet would run it (and
/// when it already begins with a quote that import would otherwise take away).
pub fn escape_cell(text: &str) -> std::borrow::Cow<'_, str> {
    let mut chars = text.chars();
    match chars.next() {
        Some(c) if FORMULA_LEADS.contains(&c) => format!("'{text}").into(),
        Some('\'')
            if chars
                .next()
                .is_some_and(|c| FORMULA_LEADS.contains(&c) || c == '\'') =>
        {
            format!("'{text}").into()
        }
        _ => text.into(),
    }
}

/// The reverse of [`escape_cell`].
pub fn unescape_cell(cell: &str) -> &str {
    let mut chars = cell.chars();
    if chars.next() == Some('\'') {
        if let Some(c) = chars.next() {
            if FORMULA_LEADS.contains(&c) || c == '\'' {
                return &cell[1..];
            }
        }
    }
    cell
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formula_escaping_round_trips() {
        for text in [
            "=SUM(A1)", "+1", "-x", "@me", "\tab", "\rx", "'=a", "''", "'plain", "plain", "", "'",
            "-",
        ] {
            let escaped = escape_cell(text);
            assert_eq!(unescape_cell(&escaped), text, "{text:?} -> {escaped:?}");
        }
        assert_eq!(escape_cell("=1+2"), "'=1+2");
        assert_eq!(escape_cell("note"), "note");
        assert_eq!(escape_cell("'quoted"), "'quoted");
    }
}
