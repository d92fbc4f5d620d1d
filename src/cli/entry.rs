//! `sumpbook log-check UNIT --at … --reservoir-temp 45C …`: one walk-round check.
//!
//! Reads the options, calls `app::entry_check::log_check` and prints what was saved. Values
//! carry their unit (`45C`, `2500psi`, `3.9s`; a bare number is read in the shop's units, as
//! in the app's form). No rules here.

use std::io::Write;

use chrono::Utc;
use clap::Args;

use super::Failure;
use crate::app::entry_check::{log_check, CheckInput};
use crate::app::shop::Shop;

#[derive(Args, Debug, Clone, PartialEq)]
pub struct LogCheckArgs {
    /// Unit tag.
    #[arg(value_name = "UNIT")]
    pub unit: String,
    /// When it was taken: YYYY-MM-DD HH:MM in the shop's time zone (see `settings`), a date
    /// alone (noon that day), or with Z or an offset (+01:00). Default now.
    #[arg(long, value_name = "TIME")]
    pub at: Option<String>,
    /// Oil temperature in the reservoir, e.g. 45C or 113F.
    #[arg(long, value_name = "TEMP", allow_hyphen_values = true)]
    pub reservoir_temp: Option<String>,
    /// Air temperature beside the unit, e.g. 21C.
    #[arg(long, value_name = "TEMP", allow_hyphen_values = true)]
    pub ambient_temp: Option<String>,
    /// Working pressure, e.g. 172bar or 2500psi.
    #[arg(long, value_name = "PRESSURE", allow_hyphen_values = true)]
    pub pressure: Option<String>,
    /// Time of the unit's timed stroke, e.g. 3.9s.
    #[arg(long, value_name = "TIME", allow_hyphen_values = true)]
    pub stroke_time: Option<String>,
    /// Time of one whole machine cycle, e.g. 12.5s.
    #[arg(long, value_name = "TIME", allow_hyphen_values = true)]
    pub cycle_time: Option<String>,
    /// ok or low.
    #[arg(long, value_name = "LEVEL")]
    pub oil_level: Option<String>,
    /// Filter indicator: ok, alert or bypass.
    #[arg(long, value_name = "STATE")]
    pub filter: Option<String>,
    /// Hour-meter reading.
    #[arg(long, value_name = "HOURS", allow_hyphen_values = true)]
    pub hours: Option<String>,
    /// Case-drain flow of a variable pump, e.g. 1.2lpm.
    #[arg(long, value_name = "FLOW", allow_hyphen_values = true)]
    pub case_drain: Option<String>,
    /// Who took the reading (kept with it).
    #[arg(long, value_name = "NAME")]
    pub by: String,
    #[arg(long, value_name = "TEXT", default_value = "")]
    pub note: String,
    /// Keep values that are possible but unusual (they are listed otherwise, and nothing is saved).
    #[arg(long)]
    pub confirm: bool,
    /// Save without the readings left out that the unit's last check had (they are listed
    /// otherwise, and nothing is saved).
    #[arg(long)]
    pub leave_blank: bool,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

pub fn run_log_check(shop: &Shop, args: &LogCheckArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let mut values = Vec::new();
    for (key, v) in [
        ("reservoir_temp", &args.reservoir_temp),
        ("ambient_temp", &args.ambient_temp),
        ("pressure", &args.pressure),
        ("stroke_time", &args.stroke_time),
        ("cycle_time", &args.cycle_time),
        ("oil_level", &args.oil_level),
        ("filter", &args.filter),
        ("hours", &args.hours),
        ("case_drain", &args.case_drain),
    ] {
        if let Some(text) = v {
            values.push((key.to_string(), text.clone()));
        }
    }
    if !args.note.is_empty() {
        values.push(("note".to_string(), args.note.clone()));
    }
    let input = CheckInput {
        at: args.at.clone(),
        values,
        by: args.by.clone(),
        confirmed: args.confirm,
        leave_blank: args.leave_blank,
    };
    let logged = log_check(shop, &args.unit, &input, Utc::now())?;
    if args.json {
        serde_json::to_writer_pretty(&mut *out, &logged)
            .map_err(|e| Failure::failed(format!("cannot write JSON: {e}")))?;
        writeln!(out)?;
        return Ok(());
    }
    writeln!(
        out,
        "{}: check of {} saved (id {}); unit state now {}",
        logged.unit,
        shop.zone().show_exact(logged.taken_at),
        logged.check_id,
        logged.status.state
    )?;
    for c in &logged.confirmed {
        writeln!(out, "  kept as confirmed: {c}")?;
    }
    for c in &logged.left_blank {
        writeln!(out, "  left blank: {c}")?;
    }
    Ok(())
}
