//! `sumpbook baseline`: a hand-entered baseline for the era in force. No rules here; `app::work`
//! checks and stores it.

use super::*;
use std::io::Write;

use clap::Args;

use crate::app::shop::Shop;
use crate::app::work::{self};
use crate::cli::Failure;

#[derive(Args, Debug, Clone, PartialEq)]
pub struct BaselineArgs {
    /// Unit tag.
    #[arg(value_name = "UNIT")]
    pub unit: String,
    /// effective_flow | corrected_flow | heat_rise | leak_conductance | case_drain
    #[arg(value_name = "INDICATOR")]
    pub indicator: String,
    /// Reference value: a flow with its unit (104.6lpm, 27.6gpm), a heat rise in K or F
    /// (20.5K, 36.9F), a leak conductance as the engine's SI figure.
    #[arg(value_name = "VALUE")]
    pub value: String,
    /// Spread (one standard deviation), written like VALUE.
    #[arg(long, value_name = "X")]
    pub spread: String,
    /// Who enters it.
    #[arg(long, value_name = "NAME", default_value = "")]
    pub by: String,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

/// `sumpbook baseline UNIT INDICATOR VALUE --spread X --by NAME`: a hand-entered baseline for
/// the era in force.
pub fn run_baseline(shop: &Shop, args: &BaselineArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let r = work::set_baseline(
        shop,
        &args.unit,
        &args.indicator,
        &args.value,
        &args.spread,
        &args.by,
    )?;
    if args.json {
        return json_out(out, &r);
    }
    writeln!(
        out,
        "Baseline {} of {} for the era since {} entered by {}; `sumpbook status --unit {}` now measures against it.",
        r.indicator,
        r.unit,
        shop.zone().show_date(r.era_start),
        r.by,
        r.unit
    )?;
    Ok(())
}
