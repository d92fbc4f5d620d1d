//! `sumpbook log-event`: recording maintenance done on a unit. No rules here; `app::work`
//! records it.

use super::*;
use std::io::Write;

use clap::Args;

use crate::app::shop::Shop;
use crate::app::work::{self, EventInput};
use crate::cli::Failure;
use crate::model::{EventDetails, EventKind};
use crate::quantity::{format, parse_volume, Quantity};

#[derive(Args, Debug, Clone, PartialEq)]
pub struct LogEventArgs {
    /// Unit tag.
    #[arg(value_name = "UNIT")]
    pub unit: String,
    /// fluid_change, top_up, filter_change, rebuild, repair, cooler_clean or note.
    #[arg(value_name = "KIND")]
    pub kind: String,
    /// When it was done: YYYY-MM-DD HH:MM in the shop's time zone, a date alone (noon that
    /// day), or with Z or an offset (+01:00); default now.
    #[arg(long, value_name = "DATE")]
    pub at: Option<String>,
    /// Oil put in, with its unit: 20l, 5.3gal.
    #[arg(long, value_name = "VOLUME")]
    pub volume: Option<String>,
    /// The fluid put in (by name); default the unit's fluid in service.
    #[arg(long, value_name = "NAME")]
    pub fluid: Option<String>,
    /// The unit's hour meter when it was done, in hours: 10250; not below the last reading
    /// before it, nor above one after it.
    #[arg(long, value_name = "HOURS")]
    pub hours: Option<String>,
    /// The part number of the filter element fitted.
    #[arg(long, value_name = "PART", default_value = "")]
    pub filter_part: String,
    /// The shop's work-order reference the work was done under.
    #[arg(long, value_name = "REF", default_value = "")]
    pub work_order: String,
    /// Who did it.
    #[arg(long, value_name = "NAME", default_value = "")]
    pub by: String,
    /// What was done, in a few words.
    #[arg(long, value_name = "TEXT", default_value = "")]
    pub note: String,
    /// Keep values asked about: an hour meter below the reading before it (a replaced meter)
    /// or above one after it (they are listed otherwise, and nothing is recorded).
    #[arg(long)]
    pub confirm: bool,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

pub fn run_log_event(shop: &Shop, args: &LogEventArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let kind: EventKind = args.kind.parse().map_err(Failure::bad_input)?;
    let at = args
        .at
        .as_deref()
        .map(|s| parse_when(s, shop.zone()))
        .transpose()?;
    let volume = args
        .volume
        .as_deref()
        .map(|v| parse_volume(v).map_err(|e| Failure::bad_input(format!("--volume: {e}"))))
        .transpose()?;
    let hours = args
        .hours
        .as_deref()
        .map(|h| {
            let t = h.trim().trim_end_matches('h').trim_end();
            t.parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .ok_or_else(|| {
                    Failure::bad_input(format!(
                        "--hours: `{}` is not a number of hours (use a decimal point: 10250.5)",
                        h.trim()
                    ))
                })
        })
        .transpose()?;
    let input = EventInput {
        kind,
        at,
        volume,
        fluid: args.fluid.clone(),
        by: args.by.clone(),
        note: args.note.clone(),
        details: EventDetails {
            hours,
            filter_part: args.filter_part.clone(),
            work_order: args.work_order.clone(),
        },
        confirmed: args.confirm,
    };
    let r = work::log_event(shop, &args.unit, &input)?;
    if args.json {
        return json_out(out, &r);
    }
    let sys = shop.unit_system();
    let vol = r
        .event
        .volume
        .map(|v| format!(", {}", format(Quantity::Volume(v), sys)))
        .unwrap_or_default();
    let fluid = r
        .fluid
        .as_ref()
        .map(|f| format!(", {f}"))
        .unwrap_or_default();
    writeln!(
        out,
        "Recorded {} on {} at {}{vol}{fluid}.",
        r.event.kind,
        r.unit,
        shop.zone().show_marked(r.event.done_at)
    )?;
    let details = work::details_words(&r.details);
    if !details.is_empty() {
        writeln!(out, "  {details}")?;
    }
    for c in &r.confirmed {
        writeln!(out, "  kept as confirmed: {c}")?;
    }
    if r.fluid_in_service_changed {
        writeln!(
            out,
            "The unit's fluid in service is now {}.",
            r.fluid.clone().unwrap_or_default()
        )?;
    }
    for w in &r.work {
        writeln!(out, "  next {}: {} ({})", w.kind.label(), w.due, w.basis)?;
    }
    Ok(())
}
