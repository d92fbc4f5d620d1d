//! The application layer: one function per user action, called alike by the command line and
//! the desktop app. It opens the shop through the store, runs the health engine, and hands
//! back plain result structs. It must not print, parse command lines or know slint.

pub mod bench_shop;
pub mod calc;
pub mod confirm;
pub mod edit_trail;
pub mod entry;
pub mod entry_check;
pub mod figures;
pub mod import;
pub mod kept;
pub mod local_time;
pub mod report;
pub mod rights;
pub mod route_sheet;
pub mod shop;
pub mod sim;
pub mod status;
pub mod view;
pub mod vocab;
pub mod waiting_cost;
pub mod work;

/// Errors of the application layer, each with the exit code the command line reports.
#[derive(Debug, thiserror::Error)]
pub enum AppError {
    /// The user's input was wrong; the message says what and what is expected.
    #[error("{0}")]
    BadInput(String),
    /// Something else failed.
    #[error("{0}")]
    Failed(String),
    /// Whoever read the output stopped reading (the far end of a pipe closed).
    #[error("the output was closed by its reader")]
    OutputClosed,
    /// The shop file or a value was refused, or the database failed.
    #[error(transparent)]
    Store(#[from] crate::store::StoreError),
    /// An import found bad rows and wrote nothing; every bad row, as `FILE:LINE: COLUMN: reason`.
    #[error("{}", crate::exchange::describe_errors(errors))]
    Import {
        errors: Vec<crate::exchange::RowError>,
    },
}

impl From<crate::outfile::OutFileError> for AppError {
    fn from(e: crate::outfile::OutFileError) -> Self {
        if e.is_input() {
            AppError::BadInput(e.to_string())
        } else {
            AppError::Failed(e.to_string())
        }
    }
}

impl AppError {
    /// Whether the shop's database server could not be reached: nothing was done, and the
    /// store connects again on the next call (what a window shows while it waits).
    pub fn is_connection_lost(&self) -> bool {
        matches!(
            self,
            AppError::Store(crate::store::StoreError::ServerGone(_))
        )
    }

    pub fn exit_code(&self) -> u8 {
        match self {
            AppError::BadInput(_) => 2,
            AppError::Failed(_) => 1,
            AppError::OutputClosed => 0,
            AppError::Store(e) if shop::store_error_is_input(e) => 2,
            AppError::Store(_) => 1,
            AppError::Import { .. } => 2,
        }
    }
}
