//! `sumpbook history UNIT [--json]`: the unit's edit trail — every correction and deletion of
//! its readings, work records and register entry, with when, who, why and old → new.
//!
//! Parses and prints only; the trail is read by `app::edit_trail`.

use std::io::Write;

use clap::Args;

use super::Failure;
use crate::app::edit_trail;
use crate::app::shop::Shop;

#[derive(Args, Debug, Clone, PartialEq)]
pub struct HistoryArgs {
    /// Unit tag.
    #[arg(value_name = "UNIT")]
    pub unit: String,
    /// Print JSON (times in UTC, and as the shop's clock shows them).
    #[arg(long)]
    pub json: bool,
}

pub fn run(shop: &Shop, args: &HistoryArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let trail = edit_trail::unit_edits(shop, &args.unit)?;
    if args.json {
        serde_json::to_writer_pretty(&mut *out, &trail)
            .map_err(|e| Failure::failed(format!("cannot write JSON: {e}")))?;
        writeln!(out)?;
        return Ok(());
    }
    writeln!(
        out,
        "Edits of {} (times in {}), oldest first",
        trail.unit, trail.time_zone
    )?;
    if trail.edits.is_empty() {
        writeln!(
            out,
            "No reading or record of this unit has been changed or deleted."
        )?;
        return Ok(());
    }
    for line in trail.edits.iter().flat_map(|e| e.lines()) {
        writeln!(out, "{line}")?;
    }
    Ok(())
}
