//! `sumpbook report`: write the PDF condition report of the fleet or of chosen units.
//!
//! Parses the options, calls `app::report::write_report` and prints what was written (or JSON
//! with `--json`). No layout, no health rules, no SQL here.

use std::path::PathBuf;

use chrono::NaiveDate;
use clap::Args;

use super::Failure;
use crate::app::report::{read_day, write_report, ReportOptions};
use crate::app::shop::Shop;
use crate::app::vocab::Paper;

#[derive(Args, Debug, Clone, PartialEq)]
pub struct ReportArgs {
    /// The PDF file to write.
    #[arg(long, value_name = "FILE.pdf")]
    pub out: PathBuf,
    /// A unit to include (repeat for more); default: every unit, worst first.
    #[arg(long = "unit", value_name = "TAG")]
    pub units: Vec<String>,
    /// First day of the period (YYYY-MM-DD); default: 91 days before --to.
    #[arg(long, value_name = "DATE", value_parser = parse_date)]
    pub from: Option<NaiveDate>,
    /// Last day of the period (YYYY-MM-DD), the day the units are judged at; default: today.
    #[arg(long, value_name = "DATE", value_parser = parse_date)]
    pub to: Option<NaiveDate>,
    /// Paper size; default: Letter in a shop set to US customary units, else A4.
    #[arg(long, value_name = "a4|letter", value_parser = parse_paper)]
    pub paper: Option<Paper>,
    /// Who prepared the report, printed on every page.
    #[arg(long = "by", value_name = "NAME", default_value = "")]
    pub by: String,
    /// Print what was written as JSON.
    #[arg(long)]
    pub json: bool,
    /// Replace the file given with --out if it exists (otherwise an existing file is refused).
    #[arg(long)]
    pub force: bool,
}

fn parse_date(s: &str) -> Result<NaiveDate, String> {
    read_day("date", s)
        .map_err(|e| e.to_string())?
        .ok_or_else(|| "a date is needed (YYYY-MM-DD)".to_string())
}

fn parse_paper(s: &str) -> Result<Paper, String> {
    s.parse()
}

pub fn run(shop: &Shop, args: &ReportArgs, out: &mut dyn std::io::Write) -> Result<(), Failure> {
    let opts = ReportOptions {
        out: args.out.clone(),
        units: args.units.clone(),
        from: args.from,
        to: args.to,
        paper: match args.paper {
            Some(p) => p,
            None => crate::app::report::paper_for(shop.unit_system()),
        },
        prepared_by: args.by.clone(),
        replace: args.force,
    };
    let summary = write_report(shop, &opts, &mut |_, _| true)?;
    if args.json {
        let text =
            serde_json::to_string_pretty(&summary).map_err(|e| Failure::failed(e.to_string()))?;
        writeln!(out, "{text}")?;
    } else {
        writeln!(
            out,
            "wrote {}: {} page{} ({} fleet, {} unit{}), {} – {}",
            summary.path.display(),
            summary.pages,
            if summary.pages == 1 { "" } else { "s" },
            summary.fleet_pages,
            summary.units,
            if summary.units == 1 { "" } else { "s" },
            summary.from,
            summary.to
        )?;
    }
    Ok(())
}

#[derive(clap::Args, Debug, Clone, PartialEq)]
pub struct RouteSheetArgs {
    /// The PDF to write (default: route-sheet-DATE.pdf in the current folder).
    #[arg(long, value_name = "FILE.pdf")]
    pub out: Option<PathBuf>,
    /// Paper size (default: letter in a US-customary shop, A4 in a metric one).
    #[arg(long, value_name = "a4|letter", value_parser = parse_paper)]
    pub paper: Option<Paper>,
    /// Replace the file if it exists.
    #[arg(long)]
    pub force: bool,
}

pub fn run_route_sheet(
    shop: &Shop,
    args: &RouteSheetArgs,
    out: &mut dyn std::io::Write,
) -> Result<(), Failure> {
    let path = match &args.out {
        Some(p) => p.clone(),
        None => crate::app::report::default_route_sheet_path(
            std::path::Path::new("."),
            shop.zone().date_of(chrono::Utc::now()),
        ),
    };
    let s = crate::app::route_sheet::write_route_sheet(shop, &path, args.paper, args.force)?;
    writeln!(
        out,
        "route sheet written to {}: {} units on {} page(s)",
        s.path.display(),
        s.units,
        s.pages
    )?;
    Ok(())
}
