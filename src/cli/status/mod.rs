//! `sumpbook status`, `due`, `ack`, `log-event`, `limits` and `baseline`: the health engine's
//! findings and the actions on them, on the command line; one file per command, the shared
//! table and JSON helpers here.
//!
//! Parses what was typed (dates, quantities with units, flag and event kinds), calls
//! `app::status` and `app::work`, and prints a compact table in the shop's unit system or its
//! JSON. No rules here.

mod ack;
mod baseline;
mod dates;
mod due;
mod limits;
mod log_event;
mod status_pages;
#[cfg(test)]
mod tests;

pub use ack::*;
pub use baseline::*;
pub use dates::*;
pub use due::*;
pub use limits::*;
pub use log_event::*;
pub use status_pages::*;

use std::io::Write;

use super::Failure;
use crate::app::vocab::State;

fn json_out<T: serde::Serialize>(out: &mut dyn Write, v: &T) -> Result<(), Failure> {
    serde_json::to_writer_pretty(&mut *out, v)
        .map_err(|e| Failure::failed(format!("cannot write JSON: {e}")))?;
    writeln!(out)?;
    Ok(())
}

fn state_word(s: State) -> &'static str {
    crate::app::view::state_word_plain(s)
}

/// What a table shows for no value.
const DASH: &str = "—";

fn dash() -> String {
    DASH.into()
}

fn pad(s: &str, w: usize) -> String {
    let mut out = String::with_capacity(s.len() + w);
    push_pad(&mut out, s, w);
    out
}

/// `s` added to `line` as a column `w` characters wide, with at least one space after it.
fn push_pad(line: &mut String, s: &str, w: usize) {
    line.push_str(s);
    let n = s.chars().count();
    line.extend(std::iter::repeat_n(' ', w.saturating_sub(n).max(1)));
}
