//! `sumpbook confirm UNIT --at TIME [--sample] --by NAME [--note TEXT] [--lift]`: a person's
//! word that a questioned reading is what was measured, or the lifting of it.
//!
//! Reads the options, calls `app::confirm` and prints what was changed. No rules here.

use std::io::Write;

use chrono::Utc;
use clap::Args;

use super::Failure;
use crate::app::confirm::{self, ConfirmAction, ReadingKind};
use crate::app::shop::Shop;

#[derive(Args, Debug, Clone, PartialEq)]
pub struct ConfirmArgs {
    /// Unit tag.
    #[arg(value_name = "UNIT")]
    pub unit: String,
    /// When the reading was taken, to the second: YYYY-MM-DD HH:MM:SS in the shop's time zone,
    /// or with Z or an offset (+01:00).
    #[arg(long, value_name = "TIME")]
    pub at: String,
    /// The reading is a fluid sample result (default: a walk-round check).
    #[arg(long)]
    pub sample: bool,
    /// Who confirms (or lifts the confirmation).
    #[arg(long, value_name = "NAME")]
    pub by: String,
    /// Why: kept in the edit history. Required with --lift.
    #[arg(long, value_name = "TEXT", default_value = "")]
    pub note: String,
    /// Lift an earlier confirmation instead: the reading is held out of baselines and drift
    /// detectors again while it stays questioned.
    #[arg(long)]
    pub lift: bool,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

pub fn run(shop: &Shop, args: &ConfirmArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let zone = shop.zone();
    let at =
        confirm::read_at(&args.at, zone).map_err(|e| Failure::bad_input(format!("--at: {e}")))?;
    let kind = if args.sample {
        ReadingKind::Sample
    } else {
        ReadingKind::Check
    };
    let now = Utc::now();
    let r = if args.lift {
        confirm::lift_confirmation(shop, &args.unit, kind, at, &args.by, &args.note, now)?
    } else {
        confirm::confirm_reading(shop, &args.unit, kind, at, &args.by, &args.note, now)?
    };
    if args.json {
        serde_json::to_writer_pretty(&mut *out, &r)
            .map_err(|e| Failure::failed(format!("cannot write JSON: {e}")))?;
        writeln!(out)?;
        return Ok(());
    }
    let when = zone.show_exact(r.taken_at);
    match (r.action, &r.confirmed, &r.lifted) {
        (ConfirmAction::Confirmed, Some(k), _) => writeln!(
            out,
            "{}: {} of {when} confirmed by {} ({}); it counts like any other reading.",
            r.unit,
            r.kind,
            k.by,
            zone.show_marked(k.at)
        )?,
        (_, _, Some(k)) => writeln!(
            out,
            "{}: the confirmation of the {} of {when} by {} is lifted.",
            r.unit, r.kind, k.by
        )?,
        _ => writeln!(out, "{}: {} of {when} changed.", r.unit, r.kind)?,
    }
    writeln!(out, "Unit state now {}.", r.status.state)?;
    Ok(())
}
