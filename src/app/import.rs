//! Import: the one path by which a CSV file enters a shop — the command line's `import`, the
//! app's import screen and its preview on a scratch copy alike — with keep-going, progress and
//! cancel. It must not parse CSV cells (that is `exchange::csv_in`'s) nor know slint or the
//! command line.

use std::path::Path;
use std::sync::atomic::{AtomicBool, Ordering};

use super::shop::{mark_questioned, Shop};
use super::AppError;
use crate::exchange::mapping::{self, DateOrder, Mapping};
use crate::exchange::{csv_in, ExchangeError, FileKind, ImportSummary, RowError};
use crate::model::ImportProfile;
use crate::units::UnitSystem;

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

/// How an import ended.
#[derive(Clone, Debug, PartialEq)]
pub enum ImportRun {
    Done(ImportSummary),
    /// Stopped on request; nothing was written.
    Cancelled,
    /// Bad rows; nothing was written.
    Refused(Vec<RowError>),
    /// The file names its columns its own way and no saved profile has its header: nothing
    /// was read beyond the header. Holds the mapping proposed for it.
    NeedsMapping(Mapping),
}

/// How an import reads a file's columns.
#[derive(Clone, Debug, Default, PartialEq)]
pub enum Columns {
    /// By sumpbook's own names, or through the saved profile made for the same header.
    #[default]
    Auto,
    /// Through the saved profile of this name (`import --map NAME`).
    Profile(String),
    /// Through this mapping (the import screen's, or corrections on the command line).
    Given(Mapping),
}

/// How a file's columns were resolved.
#[derive(Clone, Debug, PartialEq)]
pub enum Resolved {
    /// sumpbook's own column names.
    Native(FileKind),
    /// Through a mapping; the profile's name when it is a saved one.
    Mapped(Mapping, Option<String>),
    /// Not decided: the proposed mapping.
    Needs(Mapping),
}

impl Resolved {
    pub fn kind(&self) -> FileKind {
        match self {
            Resolved::Native(k) => *k,
            Resolved::Mapped(m, _) | Resolved::Needs(m) => m.kind,
        }
    }
}

/// Why a file needs its columns mapped, with the mapping proposed for it, one line each.
pub fn mapping_needed_text(file: &Path, m: &Mapping) -> String {
    let mut t = format!(
        "{}: the columns are not sumpbook's own and no saved column mapping has this header; \
         nothing was imported (the problem is in the header line, no row was read).\n\
         Proposed mapping for a {} file:\n",
        file.display(),
        m.kind
    );
    for l in m.lines() {
        t.push_str(&format!("  {l}\n"));
    }
    t.push_str(&format!("Dates: {}\n", m.dates.words()));
    for p in m.problems() {
        t.push_str(&format!("To decide: {p}\n"));
    }
    t
}

/// sumpbook's column names for a file of `kind`: what a file's column can be mapped to.
pub fn import_columns(kind: FileKind) -> Vec<&'static str> {
    mapping::column_names(kind)
}

fn profile_mapping(p: &ImportProfile, header: &[String]) -> Result<Mapping, AppError> {
    let bad = |e: String| AppError::Failed(format!("the saved column mapping {}: {e}", p.name));
    let kind: FileKind = p.kind.parse().map_err(bad)?;
    let dates: DateOrder = p.date_order.parse().map_err(bad)?;
    mapping::from_stored(kind, &p.columns, dates, header).map_err(bad)
}

fn same_header(a: &[String], b: &[String]) -> bool {
    a.len() == b.len() && a.iter().zip(b).all(|(x, y)| x.trim() == y.trim())
}

impl ImportRun {
    /// The summary of a finished import; bad rows as [`AppError::Import`] (exit 2), a cancelled
    /// import as a failure.
    pub fn into_summary(self) -> Result<ImportSummary, AppError> {
        match self {
            ImportRun::Done(s) => Ok(s),
            ImportRun::Refused(errors) => Err(AppError::Import { errors }),
            ImportRun::Cancelled => Err(AppError::Failed(
                "import cancelled; nothing was written".into(),
            )),
            ImportRun::NeedsMapping(m) => Err(AppError::BadInput(mapping_needed_text(
                Path::new("the file"),
                &m,
            ))),
        }
    }
}

fn no_progress(_: f32) {}

/// How an import runs.
pub struct ImportOptions<'a> {
    /// Write the good rows and put the refused ones in `FILE.rejects.csv` beside the file,
    /// instead of all or nothing.
    pub keep_going: bool,
    /// Told the share of the file read so far, 0–1.
    pub progress: &'a dyn Fn(f32),
    /// Set by another thread to stop; nothing is then written.
    pub cancel: Option<&'a Cancel>,
    /// Name the file in row messages by its file name alone (the app's lists) rather than the
    /// path as given (the command line).
    pub name_only: bool,
    /// How the file's columns are read.
    pub columns: Columns,
}

impl Default for ImportOptions<'_> {
    fn default() -> Self {
        ImportOptions {
            keep_going: false,
            progress: &no_progress,
            cancel: None,
            name_only: false,
            columns: Columns::Auto,
        }
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

impl Shop {
    /// The saved column-mapping profiles, by name.
    pub fn import_profiles(&self) -> Result<Vec<ImportProfile>, AppError> {
        Ok(self.store().import_profiles()?)
    }

    /// Saves `m` as the profile `name` (replacing one of that name), made for the header of the
    /// file it maps. Refused while a column is undecided or a required one is not mapped.
    pub fn save_import_profile(&self, name: &str, m: &Mapping) -> Result<(), AppError> {
        let name = name.trim();
        if name.is_empty() {
            return Err(AppError::BadInput(
                "give the column mapping a name (the lab's or the counter's)".into(),
            ));
        }
        let problems = m.problems();
        if !problems.is_empty() {
            return Err(AppError::BadInput(format!(
                "the column mapping cannot be saved yet: {}",
                problems.join("; ")
            )));
        }
        self.store().save_import_profile(&ImportProfile {
            name: name.to_string(),
            kind: m.kind.as_str().to_string(),
            header: m.columns.iter().map(|(n, _)| n.clone()).collect(),
            columns: mapping::stored_columns(m),
            date_order: m.dates.as_str().to_string(),
            saved_at: chrono::Utc::now(),
        })?;
        Ok(())
    }

    /// The mapping to start from for a file: the saved profile `base`, else the profile made
    /// for the same header, else one proposed from the header's words (the date order as the
    /// file's first dates show it). `kind` `None` tells the kind from the header.
    pub fn mapping_for(
        &self,
        kind: Option<FileKind>,
        file: &Path,
        base: Option<&str>,
    ) -> Result<Mapping, AppError> {
        let (header, rows) = csv_in::head_of_file(file, 50)
            .map_err(|e| AppError::BadInput(format!("{}: {e}", file.display())))?;
        let columns = match base {
            Some(n) => Columns::Profile(n.to_string()),
            None => Columns::Auto,
        };
        Ok(
            match self.resolve_columns(kind, &header, &rows, &columns)? {
                Resolved::Mapped(m, _) | Resolved::Needs(m) => m,
                Resolved::Native(k) => {
                    mapping::propose(k, &header, self.unit_system() == UnitSystem::Us)
                }
            },
        )
    }

    /// How a file with `header` (and first `rows`) is read under `columns`.
    pub fn resolve_columns(
        &self,
        kind: Option<FileKind>,
        header: &[String],
        rows: &[Vec<String>],
        columns: &Columns,
    ) -> Result<Resolved, AppError> {
        let wrong_kind = |m: &Mapping, what: &str| {
            AppError::BadInput(format!(
                "{what} is for a {} file, not a {} file",
                m.kind,
                kind.map_or("", FileKind::as_str)
            ))
        };
        match columns {
            Columns::Given(m) => {
                if kind.is_some_and(|k| k != m.kind) {
                    return Err(wrong_kind(m, "the column mapping"));
                }
                Ok(Resolved::Mapped(m.clone(), None))
            }
            Columns::Profile(name) => {
                let Some(p) = self.store().import_profile(name)? else {
                    let saved: Vec<String> = self
                        .import_profiles()?
                        .into_iter()
                        .map(|p| p.name)
                        .collect();
                    return Err(AppError::BadInput(format!(
                        "no saved column mapping is named `{name}`; saved: {}",
                        if saved.is_empty() {
                            "none".to_string()
                        } else {
                            saved.join(", ")
                        }
                    )));
                };
                let m = profile_mapping(&p, header)?;
                if kind.is_some_and(|k| k != m.kind) {
                    return Err(wrong_kind(&m, &format!("the column mapping {name}")));
                }
                Ok(Resolved::Mapped(m, Some(p.name)))
            }
            Columns::Auto => {
                let native = match kind {
                    Some(k) => mapping::is_native(k, header).then_some(k),
                    None => super::entry::detect_kind(header),
                };
                if let Some(k) = native {
                    return Ok(Resolved::Native(k));
                }
                for p in self.import_profiles()? {
                    if same_header(&p.header, header) && kind.is_none_or(|k| k.as_str() == p.kind) {
                        let m = profile_mapping(&p, header)?;
                        return Ok(Resolved::Mapped(m, Some(p.name)));
                    }
                }
                let us = self.unit_system() == UnitSystem::Us;
                let mut m = match kind {
                    Some(k) => mapping::propose(k, header, us),
                    None => mapping::propose_any(header, us),
                };
                // A header with some of sumpbook's own names (one misspelt), or one whose
                // required columns the proposal cannot place (a data row where the header
                // should be, another delimiter), is read as it stands: the importer says what is
                // wrong with it better than a mapping could.
                let own = mapping::column_names(m.kind);
                let some_own = header.iter().any(|h| own.contains(&h.trim()));
                if some_own || !m.has_required() {
                    return Ok(Resolved::Native(m.kind));
                }
                let date_cells = m.columns.iter().enumerate().filter_map(|(i, (_, t))| {
                    matches!(t, Some(mapping::Target::Column(c)) if c.ends_with("_at")).then_some(i)
                });
                let at: Vec<usize> = date_cells.collect();
                let cells = rows
                    .iter()
                    .flat_map(|r| at.iter().filter_map(|&i| r.get(i).map(String::as_str)));
                m.dates = mapping::guess_date_order(cells).unwrap_or(DateOrder::Iso);
                Ok(Resolved::Needs(m))
            }
        }
    }

    /// Imports a CSV file of `kind`: all or nothing, or with `keep_going` the good rows and a
    /// side file of rejects; the readings the screening questions are listed in the summary.
    /// Bad rows come back as [`ImportRun::Refused`], a cancelled import as
    /// [`ImportRun::Cancelled`]; in both cases nothing was written.
    pub fn import(
        &mut self,
        kind: FileKind,
        file: &Path,
        opts: &ImportOptions<'_>,
    ) -> Result<ImportRun, AppError> {
        let f = std::fs::File::open(file)
            .map_err(|e| AppError::BadInput(format!("{}: {e}", file.display())))?;
        let total = f.metadata().map(|m| m.len()).unwrap_or(0);
        let never = Cancel::new();
        let cancel = opts.cancel.unwrap_or(&never);
        let watched = Watched {
            inner: f,
            read: 0,
            total,
            reported: 0,
            progress: opts.progress,
            cancel,
        };
        let label = if opts.name_only {
            file.file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default()
        } else {
            file.display().to_string()
        };
        let (header, rows) = csv_in::head_of_file(file, 50)
            .map_err(|e| AppError::BadInput(format!("{}: {e}", file.display())))?;
        let (mapping, profile) =
            match self.resolve_columns(Some(kind), &header, &rows, &opts.columns)? {
                Resolved::Native(_) => (None, None),
                Resolved::Mapped(m, p) => (Some(m), p),
                Resolved::Needs(m) => return Ok(ImportRun::NeedsMapping(m)),
            };
        let rejects = opts.keep_going.then(|| csv_in::rejects_path(file));
        let store = self.store_mut();
        match csv_in::import_mapped(store, kind, &label, watched, rejects, mapping.as_ref()) {
            Ok(mut summary) => {
                summary.profile = profile;
                mark_questioned(store, kind, &mut summary)?;
                (opts.progress)(1.0);
                Ok(ImportRun::Done(summary))
            }
            Err(_) if cancel.is_cancelled() => Ok(ImportRun::Cancelled),
            Err(ExchangeError::Rows(rows)) => Ok(ImportRun::Refused(rows)),
            Err(other) => Err(AppError::from(other)),
        }
    }
}
