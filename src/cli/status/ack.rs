//! `sumpbook ack`: acknowledging a flag on the command line. No rules here; `app::work` records
//! it.

use super::*;
use std::io::Write;

use clap::Args;

use crate::app::shop::Shop;
use crate::app::vocab::FlagKind;
use crate::app::work::{self};
use crate::cli::Failure;

#[derive(Args, Debug, Clone, PartialEq)]
pub struct AckArgs {
    /// Unit tag.
    #[arg(value_name = "UNIT")]
    pub unit: String,
    /// Flag kind: lost_flow, leak_conductance, case_drain, heat_rise, reservoir_temp,
    /// viscosity, cleanliness, water, acid, filter, oil_level, drift or overdue.
    #[arg(value_name = "KIND")]
    pub kind: String,
    /// Who has seen it.
    #[arg(long, value_name = "NAME")]
    pub by: String,
    /// What is being done about it.
    #[arg(long, value_name = "TEXT", default_value = "")]
    pub note: String,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

pub fn run_ack(shop: &Shop, args: &AckArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let kind: FlagKind = args.kind.parse().map_err(Failure::bad_input)?;
    let r = work::ack(shop, &args.unit, kind, &args.by, &args.note)?;
    if args.json {
        return json_out(out, &r);
    }
    writeln!(
        out,
        "Acknowledged {} {} ({}) by {}.",
        r.unit,
        r.flag.kind,
        r.flag.state,
        args.by.trim()
    )?;
    writeln!(out, "It stays marked as seen until its state changes.")?;
    Ok(())
}
