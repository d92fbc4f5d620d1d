//! The `sumpbook` binary: parse the command line, run it, print, set the exit code.

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    let cli = sumpbook::cli::Cli::parse();
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    match sumpbook::cli::run(&cli, &mut out) {
        Ok(()) => ExitCode::SUCCESS,
        Err(failure) if failure.is_quiet() => ExitCode::SUCCESS,
        Err(failure) => {
            eprintln!(
                "sumpbook: {}",
                sumpbook::cli::printable::printable(&failure.message)
            );
            ExitCode::from(failure.code)
        }
    }
}
