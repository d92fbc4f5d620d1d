//! `sumpbook history UNIT [--json]`: the unit's edit trail — every correction, deletion and
//! restore of its readings, work records and register entry, with when, who, why and old → new;
//! `--restore EDIT --reason WHY` puts a deleted reading back (itself an edit in the trail).
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
    /// Put back the reading that this edit (its number in the trail) deleted.
    #[arg(long, value_name = "EDIT", requires = "reason")]
    pub restore: Option<i64>,
    /// Why the reading is put back (kept with the restore).
    #[arg(long, value_name = "WHY")]
    pub reason: Option<String>,
    /// Who puts it back (default: the login name).
    #[arg(long, value_name = "WHO")]
    pub by: Option<String>,
}

impl HistoryArgs {
    /// Whether the command writes (a restore).
    pub fn changes(&self) -> bool {
        self.restore.is_some()
    }
}

pub fn run(shop: &Shop, args: &HistoryArgs, out: &mut dyn Write) -> Result<(), Failure> {
    if let Some(edit) = args.restore {
        let reason = args.reason.clone().unwrap_or_default();
        let done =
            edit_trail::restore_reading(shop, &args.unit, edit, &super::who(&args.by), &reason)?;
        writeln!(
            out,
            "Put back the {} (edit {edit}); the restore is edit {} of the trail.",
            done.record_text, done.edit_id
        )?;
        return Ok(());
    }
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
    for e in &trail.edits {
        for line in e.lines() {
            writeln!(out, "{line}")?;
        }
        if e.restorable {
            writeln!(
                out,
                "    can be put back: sumpbook history {} --restore {} --reason WHY",
                trail.unit, e.edit_id
            )?;
        }
    }
    Ok(())
}
