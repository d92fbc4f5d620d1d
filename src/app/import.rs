//! Import: the one path by which a CSV file enters a shop — the command line's `import`, the
//! app's import screen and its preview on a scratch copy alike — with keep-going, progress and
//! cancel. It must not parse CSV cells (that is `exchange::csv_in`'s) nor know slint or the
//! command line.

use std::path::Path;
use std::sync::atomic::{AtomicBool, Ordering};

use super::shop::{mark_questioned, Shop};
use super::AppError;
use crate::exchange::{csv_in, ExchangeError, FileKind, ImportSummary, RowError};

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
}

impl Default for ImportOptions<'_> {
    fn default() -> Self {
        ImportOptions {
            keep_going: false,
            progress: &no_progress,
            cancel: None,
            name_only: false,
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
        let rejects = opts.keep_going.then(|| csv_in::rejects_path(file));
        let store = self.store_mut();
        match csv_in::import_reader(store, kind, &label, watched, rejects) {
            Ok(mut summary) => {
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
