//! The `sumpbook` binary: parse the command line, run it, print, set the exit code.

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    let cli = sumpbook::cli::Cli::parse();
    // Buffered: standard output alone writes each line as it ends (a system call a line, a
    // tenth of a kept fleet status's time on 1,000 units). Nothing here reads standard input,
    // so no prompt waits behind the buffer.
    let mut out = std::io::BufWriter::with_capacity(1 << 16, std::io::stdout().lock());
    let ran = sumpbook::cli::run(&cli, &mut out);
    // What was written comes out before any complaint about it, and a failure to write it is
    // told like any other.
    let flushed = std::io::Write::flush(&mut out).map_err(sumpbook::cli::Failure::from);
    match ran.and(flushed) {
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
