//! The application layer: one function per user action, called alike by the command line and
//! the desktop app. It opens the shop through the store, runs the health engine, and hands
//! back plain result structs. It must not print, parse command lines or know slint.

pub mod calc;

/// Errors of the application layer, each with the exit code the command line reports.
#[derive(Debug, thiserror::Error)]
pub enum AppError {
    /// The user's input was wrong; the message says what and what is expected.
    #[error("{0}")]
    BadInput(String),
    /// Something else failed.
    #[error("{0}")]
    Failed(String),
}

impl AppError {
    pub fn exit_code(&self) -> u8 {
        match self {
            AppError::BadInput(_) => 2,
            AppError::Failed(_) => 1,
        }
    }
}
