//! `sumpbook due`: the work due, in buckets, as a table or JSON. No rules here; `app::work`
//! plans.

use super::*;
use std::io::Write;

use clap::Args;

use crate::app::shop::Shop;
use crate::app::vocab::CAUTION_SHORT;
use crate::app::work::{self, DueBucket, DueList};
use crate::cli::Failure;

#[derive(Args, Debug, Clone, PartialEq)]
pub struct DueArgs {
    /// Only work due within this many days (overdue work is always listed).
    #[arg(long, value_name = "DAYS")]
    pub within: Option<i64>,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
    /// Plan as at the end of this date (YYYY-MM-DD).
    #[arg(long, value_name = "DATE")]
    pub at: Option<String>,
}

fn due_table(
    out: &mut dyn Write,
    d: &DueList,
    zone: crate::app::local_time::Zone,
) -> Result<(), Failure> {
    let scope = match d.within_days {
        Some(n) => format!("overdue and due within {n} days"),
        None => "all planned work".into(),
    };
    writeln!(out, "Work due at {} — {scope}", zone.show_date(d.at))?;
    if d.items.is_empty() {
        writeln!(out, "Nothing due.")?;
        return Ok(());
    }
    let mut current: Option<DueBucket> = None;
    for i in &d.items {
        if current != Some(i.bucket) {
            current = Some(i.bucket);
            writeln!(out)?;
            let head = match i.bucket {
                DueBucket::Overdue => "OVERDUE".to_string(),
                DueBucket::DueSoon => format!("DUE WITHIN {} DAYS", d.due_soon_days),
                DueBucket::Later => "LATER".to_string(),
            };
            writeln!(out, "{head}")?;
        }
        let when = crate::app::view::due_words(i.days_overdue);
        let mark = if i.caution.is_some() { "!" } else { " " };
        writeln!(
            out,
            "  {}{}{}due {}  {}{}  {}",
            pad(&i.unit, 10),
            pad(&i.machine, 9),
            pad(&i.task, 18),
            i.due,
            pad(&when, 13),
            mark,
            i.pulled_forward.clone().unwrap_or_else(|| i.basis.clone())
        )?;
    }
    if d.items.iter().any(|i| i.caution.is_some()) {
        writeln!(out)?;
        writeln!(out, "! Fluid, filter and sample work: {CAUTION_SHORT}")?;
    }
    Ok(())
}

pub fn run_due(shop: &Shop, args: &DueArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let at = args
        .at
        .as_deref()
        .map(|s| parse_at_end_of_day(s, shop.zone()))
        .transpose()?;
    let d = work::due_list(shop, at, args.within)?;
    if args.json {
        json_out(out, &d)
    } else {
        due_table(out, &d, shop.zone())
    }
}
