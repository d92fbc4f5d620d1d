//! The command line: clap definitions and one small handler file per family of subcommands.
//!
//! Handlers parse what the user typed, call the application layer (`crate::app`) and print;
//! they hold no business rules and no SQL. Exit codes: 0 ok, 1 failure, 2 bad usage or input.

use std::path::PathBuf;

use clap::{Parser, Subcommand};

pub mod bench;
pub mod calc;
pub mod confirm;
pub mod data;
pub mod entry;
pub mod history;
pub mod printable;
pub mod report;
pub mod settings;
pub mod sim;
pub mod status;

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
        Failure {
            code: 2,
            message: message.into(),
        }
    }
    /// The operation failed for another reason: exit code 1.
    pub fn failed(message: impl Into<String>) -> Self {
        Failure {
            code: 1,
            message: message.into(),
        }
    }
}

impl From<crate::app::AppError> for Failure {
    fn from(e: crate::app::AppError) -> Self {
        if matches!(e, crate::app::AppError::OutputClosed) {
            return Failure::output_closed();
        }
        Failure {
            code: e.exit_code(),
            message: e.to_string(),
        }
    }
}

impl Failure {
    /// The reader of standard output went away (`sumpbook status | head`): not an error of
    /// ours, so the program ends quietly with success, as other filters in a pipe do.
    pub fn output_closed() -> Self {
        Failure {
            code: 0,
            message: String::new(),
        }
    }

    /// Whether this is [`Failure::output_closed`]: nothing to say.
    pub fn is_quiet(&self) -> bool {
        self.code == 0 && self.message.is_empty()
    }
}

impl From<std::io::Error> for Failure {
    fn from(e: std::io::Error) -> Self {
        if e.kind() == std::io::ErrorKind::BrokenPipe {
            return Failure::output_closed();
        }
        Failure::failed(format!("cannot write output: {e}"))
    }
}

/// Who makes a change, for the edit history: `--by`, else the login name.
pub(crate) fn who(by: &Option<String>) -> String {
    by.clone()
        .filter(|b| !b.trim().is_empty())
        .or_else(|| {
            std::env::var("USER")
                .ok()
                .or_else(|| std::env::var("USERNAME").ok())
        })
        .unwrap_or_else(|| "command line".into())
}

/// The environment variable that names the shop when `--db` is not given.
pub const DB_VARIABLE: &str = "SUMPBOOK_DB";

#[derive(Parser, Debug)]
#[command(name = "sumpbook", version, about = "Condition log and drift watch for hydraulic power units", long_about = None)]
pub struct Cli {
    /// The shop database: one SQLite file, or a PostgreSQL server as
    /// postgres://USER@HOST:PORT/DBNAME. Default: $SUMPBOOK_DB, else sumpbook.sqlite in the
    /// platform data directory.
    #[arg(long, global = true, value_name = "FILE|URL")]
    pub db: Option<PathBuf>,

    #[command(subcommand)]
    pub command: Option<Command>,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Quick calculators for the bench: VI, viscosity, ISO 4406 code, flow, power, cylinder
    /// force, oil speed in a line.
    Calc(calc::CalcArgs),
    /// Create a new, empty shop file (or confirm that the file is one).
    Init(data::InitArgs),
    /// Write the demo shop (an invented press shop with planted faults) into an empty shop.
    Demo(data::DemoArgs),
    /// Import a CSV file: all rows or none, unless --keep-going.
    Import(data::ImportArgs),
    /// The saved column mappings for files with their own column names (`import --map NAME`).
    ImportMaps(data::StoredStatusArgs),
    /// Print the walk-round on paper: the units in route order, last time's values and limits
    /// beside blank cells, in the walk-round form's order (PDF).
    RouteSheet(report::RouteSheetArgs),
    /// Export CSV (to standard output or --out FILE).
    Export(data::ExportArgs),
    /// Each unit's state, flags and key indicators, worst first (`--at DATE` replays the past).
    Status(status::StatusArgs),
    /// Work due across the fleet, overdue first: fluid and filter changes, samples, checks.
    Due(status::DueArgs),
    /// Record that you have seen a flag; it stays marked until its state changes.
    Ack(status::AckArgs),
    /// Record work done (fluid change, top-up, filter change, rebuild, ...).
    LogEvent(status::LogEventArgs),
    /// Enter a unit's baseline by hand for its era in force.
    Baseline(status::BaselineArgs),
    /// Record one walk-round check of a unit (values with units: 45C, 172bar, 3.9s).
    LogCheck(entry::LogCheckArgs),
    /// Confirm a questioned reading as measured (or --lift a confirmation), by unit and time.
    Confirm(confirm::ConfirmArgs),
    /// A unit's edit trail: every correction, deletion and restore, with when, who, why and
    /// old → new; --restore EDIT puts a deleted reading back.
    History(history::HistoryArgs),
    /// Show the shop's settings (name, units of measure, time zone), or set them.
    Settings(settings::SettingsArgs),
    /// List the limits in force (shop or one unit), or set and reset them.
    Limits(status::LimitsArgs),
    /// Write a consistent copy of the shop file while it stays in use.
    Backup(data::BackupArgs),
    /// Copy a whole shop between a file and a server (or file to file): all or nothing,
    /// checked table by table at the end.
    Copy(data::CopyArgs),
    /// The shop's roles on a server: show yours, create them (--create) or give one to a
    /// login (--grant LOGIN --role ROLE).
    Roles(data::RolesArgs),
    /// Write the PDF condition report: fleet page, then one page per unit with charts.
    Report(report::ReportArgs),
    /// Make a large generated shop for the benchmarks in benches/ (hidden).
    #[command(hide = true)]
    BenchShop(bench::BenchShopArgs),
    /// Write a simulated shop with planted faults for the detection benchmark (hidden).
    #[command(hide = true)]
    SimShop(sim::SimShopArgs),
    /// Score the detection benchmark's status files against the truth (hidden).
    #[command(hide = true)]
    SimScore(sim::SimScoreArgs),
}

/// Runs a parsed command line; `None` means "open the app". Text goes to `out` with control
/// characters escaped (`printable`); an export to standard output is CSV data, written as is.
pub fn run(cli: &Cli, out: &mut dyn std::io::Write) -> Result<(), Failure> {
    crate::app::shop::report_waits_with(|path, waited| {
        eprintln!(
            "sumpbook: waiting for {}: another program is writing to it ({} s so far)",
            printable::printable(&path.display().to_string()),
            waited.as_secs()
        )
    });
    crate::app::shop::report_notices_with(|_, notice| {
        eprintln!("sumpbook: warning: {}", printable::printable(notice))
    });
    if matches!(&cli.command, Some(Command::Export(a)) if a.out.is_none()) {
        return run_command(cli, out);
    }
    run_command(cli, &mut printable::Escaping(out))
}

fn run_command(cli: &Cli, out: &mut dyn std::io::Write) -> Result<(), Failure> {
    // The app started from a desktop icon has no --db: the environment can name the shop.
    let db = cli.db.clone().or_else(|| {
        std::env::var_os(DB_VARIABLE)
            .filter(|v| !v.is_empty())
            .map(PathBuf::from)
    });
    match &cli.command {
        Some(Command::Calc(args)) => calc::run(args, out),
        Some(Command::Init(args)) => data::run_init(db.as_deref(), args, out),
        Some(Command::Demo(a)) => data::run_demo(db.as_deref(), a, out),
        Some(Command::Import(args)) => data::run_import(db.as_deref(), args, out),
        Some(Command::ImportMaps(args)) => data::run_import_maps(db.as_deref(), args, out),
        Some(Command::Export(args)) => data::run_export(db.as_deref(), args, out),
        Some(Command::RouteSheet(args)) => {
            report::run_route_sheet(&data::open_shop(db.as_deref())?, args, out)
        }
        Some(Command::Status(args)) => {
            status::run_status(&data::open_shop(db.as_deref())?, args, out)
        }
        Some(Command::Due(args)) => status::run_due(&data::open_shop(db.as_deref())?, args, out),
        Some(Command::Ack(args)) => {
            status::run_ack(&data::open_shop_for_writing(db.as_deref())?, args, out)
        }
        Some(Command::LogEvent(args)) => {
            status::run_log_event(&data::open_shop_for_writing(db.as_deref())?, args, out)
        }
        Some(Command::Baseline(args)) => {
            status::run_baseline(&data::open_shop_for_writing(db.as_deref())?, args, out)
        }
        Some(Command::LogCheck(args)) => {
            entry::run_log_check(&data::open_shop_for_writing(db.as_deref())?, args, out)
        }
        Some(Command::Confirm(args)) => {
            confirm::run(&data::open_shop_for_writing(db.as_deref())?, args, out)
        }
        Some(Command::History(args)) => {
            let shop = if args.changes() {
                data::open_shop_for_writing(db.as_deref())?
            } else {
                data::open_shop(db.as_deref())?
            };
            history::run(&shop, args, out)
        }
        Some(Command::Settings(args)) => {
            let shop = if args.changes() {
                data::open_shop_for_writing(db.as_deref())?
            } else {
                data::open_shop(db.as_deref())?
            };
            settings::run(&shop, args, out)
        }
        Some(Command::Limits(args)) => {
            // Showing the limits reads; an action changes them.
            let shop = if args.action.is_some() {
                data::open_shop_for_writing(db.as_deref())?
            } else {
                data::open_shop(db.as_deref())?
            };
            status::run_limits(&shop, args, out)
        }
        Some(Command::Backup(args)) => data::run_backup(db.as_deref(), args, out),
        Some(Command::Copy(args)) => data::run_copy(args, out),
        Some(Command::Roles(args)) => data::run_roles(db.as_deref(), args, out),
        Some(Command::Report(args)) => report::run(&data::open_shop(db.as_deref())?, args, out),
        Some(Command::BenchShop(args)) => bench::run(db.as_deref(), args, out),
        Some(Command::SimShop(args)) => sim::run_shop(args, out),
        Some(Command::SimScore(args)) => sim::run_score(args, out),
        // No subcommand: the desktop app, on --db or the default shop.
        #[cfg(feature = "gui")]
        None => crate::gui::run(db.as_deref()).map_err(Failure::from),
        // Built without the app: the stored status of the shop.
        #[cfg(not(feature = "gui"))]
        None => data::run_stored_status(db.as_deref(), &data::StoredStatusArgs::default(), out),
    }
}
