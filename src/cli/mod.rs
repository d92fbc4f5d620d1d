//! The command line: clap definitions and one small handler file per family of subcommands.
//!
//! Handlers parse what the user typed, call the application layer (`crate::app`) and print;
//! they hold no business rules and no SQL. Exit codes: 0 ok, 1 failure, 2 bad usage or input.

use std::path::PathBuf;

use clap::{Parser, Subcommand};

pub mod calc;

/// What went wrong, as the user is told it, and the exit code that goes with it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Failure {
    /// 1 = the operation failed, 2 = bad usage or bad input.
    pub code: u8,
    pub message: String,
}

impl Failure {
    /// Bad usage or bad input: exit code 2.
    pub fn bad_input(message: impl Into<String>) -> Self {
        Failure { code: 2, message: message.into() }
    }
    /// The operation failed for another reason: exit code 1.
    pub fn failed(message: impl Into<String>) -> Self {
        Failure { code: 1, message: message.into() }
    }
}

impl From<crate::app::AppError> for Failure {
    fn from(e: crate::app::AppError) -> Self {
        Failure { code: e.exit_code(), message: e.to_string() }
    }
}

impl From<std::io::Error> for Failure {
    fn from(e: std::io::Error) -> Self {
        Failure::failed(format!("cannot write output: {e}"))
    }
}

#[derive(Parser, Debug)]
#[command(name = "sumpbook", version, about = "Condition log and drift watch for hydraulic power units", long_about = None)]
pub struct Cli {
    /// The shop database (one SQLite file). Default: sumpbook.sqlite in the platform data directory.
    #[arg(long, global = true, value_name = "FILE")]
    pub db: Option<PathBuf>,

    #[command(subcommand)]
    pub command: Option<Command>,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Quick calculators for the bench: VI, viscosity, ISO 4406 code, flow, power.
    Calc(calc::CalcArgs),
}

/// Runs a parsed command line; `None` means "open the app".
pub fn run(cli: &Cli, out: &mut dyn std::io::Write) -> Result<(), Failure> {
    match &cli.command {
        Some(Command::Calc(args)) => calc::run(args, out),
        None => Err(Failure::bad_input("no command given; see `sumpbook --help`")),
    }
}
