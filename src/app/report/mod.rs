//! Writing the condition report: the application function behind `sumpbook report` and the
//! app's Reports screen.
//!
//! Evaluates the fleet once through the one evaluation path (`status`), takes the due list
//! from `work`, reads what the health results do not carry (unit register, events) through the
//! store, and turns it all into the printed form of `report::ReportDoc`: figures in the shop's
//! units, states in words and marks, chart series clipped to the period. No health rule is
//! applied here; `report` lays out and draws. The PDF is written to a new side file
//! (`crate::outfile`) and renamed into place, so a failed or cancelled report never leaves half
//! a file, and an existing file is replaced only when asked.

mod chart_specs;
mod corrections;
mod fleet_rows;
mod indicator_rows;
mod questioned;
#[cfg(test)]
mod tests;
mod unit_section;
mod words;

use chart_specs::*;
use corrections::*;
use fleet_rows::*;
use indicator_rows::*;
use questioned::*;
use unit_section::*;
use words::*;

use std::io::Write;
use std::path::{Path, PathBuf};

use chrono::{DateTime, Duration, NaiveDate, Utc};
use serde::Serialize;

use super::local_time::Zone;
use super::shop::Shop;
use super::status::{fleet_status_in, store_error, Detail, UnitStatus};
use super::work::due_list_from;
use super::AppError;
use crate::health::plan::SAFETY_CAUTIONS;
use crate::health::State;
use crate::outfile::{Options, OutFile};
use crate::report::{self, Finding, Paper, ReportDoc, WorkItem};
use crate::units::UnitSystem;

/// Days the report covers when no start is given.
pub const DEFAULT_PERIOD_DAYS: i64 = 91;
/// The look-ahead of the fleet page's work list: overdue and due within 4 weeks.
pub const WORK_AHEAD_DAYS: i64 = 28;

/// What to put in the report.
#[derive(Clone, Debug, PartialEq)]
pub struct ReportOptions {
    /// Where to write the PDF.
    pub out: PathBuf,
    /// Unit tags to include, in this order; empty: every unit not archived, worst first.
    pub units: Vec<String>,
    /// First day of the period; default `to` − 91 days.
    pub from: Option<NaiveDate>,
    /// Last day of the period; the units are judged as they stood at its end. Default: today,
    /// judged now.
    pub to: Option<NaiveDate>,
    pub paper: Paper,
    /// Who prepared it, printed on every page.
    pub prepared_by: String,
    /// Replace a file already at `out` (otherwise an existing file is refused).
    pub replace: bool,
}

/// What was written.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ReportSummary {
    pub path: PathBuf,
    pub pages: usize,
    /// Pages of the fleet part; the rest are the unit pages (more than one per unit only
    /// where a unit's page had to continue).
    pub fleet_pages: usize,
    pub units: usize,
    pub from: NaiveDate,
    pub to: NaiveDate,
    /// `false` when the progress callback asked to stop; then nothing was written.
    pub completed: bool,
}

/// The paper a shop prints on unless asked otherwise: US Letter in a shop that works in US
/// customary units, A4 elsewhere.
pub fn paper_for(system: UnitSystem) -> Paper {
    match system {
        UnitSystem::Us => Paper::Letter,
        UnitSystem::Metric => Paper::A4,
    }
}

/// Writes the condition report to `opts.out`. `progress(done, total)` is called as parts are
/// finished (evaluation, fleet page, each unit, writing); returning `false` stops without
/// writing anything and gives `completed: false`.
pub fn write_report(
    shop: &Shop,
    opts: &ReportOptions,
    progress: &mut dyn FnMut(usize, usize) -> bool,
) -> Result<ReportSummary, AppError> {
    check_out_path(&opts.out)?;
    // Made first, so that an existing file is refused before the work; dropped unfinished on
    // a cancel or a failure, which removes it.
    let mut file = OutFile::create(
        &opts.out,
        Options {
            replace: opts.replace,
            devices_in_place: true,
            can_force: true,
        },
    )?;
    let now = Utc::now();
    let (from, to) = period(opts, now, shop.zone())?;
    let doc = build_report(shop, opts, now)?;
    let not_done = |fleet_pages| ReportSummary {
        path: opts.out.clone(),
        pages: 0,
        fleet_pages,
        units: doc.units.len(),
        from,
        to,
        completed: false,
    };
    // One step for the evaluation already done, then the report's own steps.
    let total = doc.units.len() + 3;
    if !progress(1, total) {
        return Ok(not_done(0));
    }
    let rendered = match report::render(&doc, &mut |done, _| progress(done + 1, total)) {
        Ok(r) => r,
        Err(report::ReportError::Cancelled) => return Ok(not_done(0)),
        Err(e) => return Err(AppError::Failed(e.to_string())),
    };
    file.write_all(&rendered.pdf)
        .map_err(|e| AppError::Failed(format!("cannot write {}: {e}", opts.out.display())))?;
    file.commit()?;
    Ok(ReportSummary {
        path: opts.out.clone(),
        pages: rendered.pages,
        fleet_pages: rendered.fleet_pages,
        units: doc.units.len(),
        from,
        to,
        completed: true,
    })
}

fn check_out_path(out: &Path) -> Result<(), AppError> {
    if out.as_os_str().is_empty() {
        return Err(AppError::BadInput(
            "no output file given for the report".into(),
        ));
    }
    if out.is_dir() {
        return Err(AppError::BadInput(format!(
            "{} is a folder; give a file name such as report.pdf",
            out.display()
        )));
    }
    if let Some(parent) = out.parent().filter(|p| !p.as_os_str().is_empty()) {
        if !parent.is_dir() {
            return Err(AppError::BadInput(format!(
                "the folder {} does not exist",
                parent.display()
            )));
        }
    }
    Ok(())
}

/// Reads a day of the period as typed (`YYYY-MM-DD`); blank is `None` (the default).
pub fn read_day(what: &str, text: &str) -> Result<Option<NaiveDate>, AppError> {
    let text = text.trim();
    if text.is_empty() {
        return Ok(None);
    }
    NaiveDate::parse_from_str(text, "%Y-%m-%d")
        .map(Some)
        .map_err(|_| {
            AppError::BadInput(format!(
                "{what}: `{text}` is not a date; expected YYYY-MM-DD, e.g. 2026-03-31"
            ))
        })
}

/// A free name in `folder` for a route sheet printed on the shop's day `today`.
pub fn default_route_sheet_path(folder: &Path, today: NaiveDate) -> PathBuf {
    crate::outfile::free_name(folder, &format!("route-sheet-{today}"), "pdf")
}

/// Where a report of `to` goes in `folder` when no file is chosen: the default name, or the
/// first numbered one (`-2`, `-3` …) that nothing is at yet, so a default never replaces.
pub fn default_out_path(folder: &Path, to: NaiveDate) -> PathBuf {
    crate::outfile::free_name(folder, &format!("condition-report-{to}"), "pdf")
}

/// Whether writing to `out` would replace a file already there (to be asked first).
pub fn out_is_taken(out: &Path) -> bool {
    crate::outfile::is_taken(out)
}

/// The first and last day of the period.
fn period(
    opts: &ReportOptions,
    now: DateTime<Utc>,
    zone: Zone,
) -> Result<(NaiveDate, NaiveDate), AppError> {
    let to = opts.to.unwrap_or_else(|| zone.date_of(now));
    let from = opts
        .from
        .unwrap_or(to - Duration::days(DEFAULT_PERIOD_DAYS));
    if from > to {
        return Err(AppError::BadInput(format!(
            "the period starts ({from}) after it ends ({to})"
        )));
    }
    Ok((from, to))
}

/// Now, or the end of the day `to` in the shop's zone when one was asked for (as `status --at
/// DATE` does).
fn evaluation_instant(to: Option<NaiveDate>, now: DateTime<Utc>, zone: Zone) -> DateTime<Utc> {
    to.map(|d| zone.day_end(d)).unwrap_or(now)
}

/// Fills the printed report from the shop's data, as of `now`.
pub fn build_report(
    shop: &Shop,
    opts: &ReportOptions,
    now: DateTime<Utc>,
) -> Result<ReportDoc, AppError> {
    let store = shop.store();
    let zone = crate::app::shop::zone_of(store);
    let (from, to) = period(opts, now, zone)?;
    let at = evaluation_instant(opts.to, now, zone);
    let fleet = fleet_status_in(store, Some(at), Detail::Full)?;
    let sys = fleet.unit_system;

    // The units asked for, in the order asked; else the whole fleet, worst first.
    let mut chosen: Vec<&UnitStatus> = Vec::new();
    if opts.units.is_empty() {
        chosen.extend(fleet.units.iter());
    } else {
        for tag in &opts.units {
            let u = fleet
                .units
                .iter()
                .find(|u| u.unit.eq_ignore_ascii_case(tag.trim()))
                .ok_or_else(|| {
                    AppError::BadInput(format!(
                        "no unit `{}` in this shop (or it is archived)",
                        tag.trim()
                    ))
                })?;
            if !chosen.iter().any(|c| c.unit_id == u.unit_id) {
                chosen.push(u);
            }
        }
    }

    let machines = store.machines().map_err(store_error)?;
    // The edit history, read once for every unit's corrections.
    let log = store.edit_log().map_err(store_error)?;
    let registers = store.units().map_err(store_error)?;
    let fluids = store.fluids().map_err(store_error)?;
    let mut units = Vec::new();
    for u in &chosen {
        let unit = registers.iter().find(|r| r.id == u.unit_id);
        let machine = unit.and_then(|r| machines.iter().find(|m| m.id == r.machine_id));
        let events = store
            .unit_history(u.unit_id, Some(at))
            .map_err(store_error)?
            .map(|h| h.events)
            .unwrap_or_default();
        let edits = super::edit_trail::unit_edits_from(store, &log, u.unit_id, &u.unit)?;
        let details = store
            .event_details_of_unit(u.unit_id)
            .map_err(store_error)?;
        let mut section = unit_section(u, unit, machine, &events, &edits, (from, to), sys, zone);
        section.work_done = period_work_done(&events, &details, &fluids, (from, to), sys, zone);
        units.push(section);
    }

    // The work of the evaluation above: the shop is read and judged once per report.
    let due = due_list_from(store, &fleet, Some(WORK_AHEAD_DAYS))?;
    let tags: Vec<&str> = chosen.iter().map(|u| u.unit.as_str()).collect();
    let work: Vec<WorkItem> = due
        .items
        .iter()
        .filter(|d| tags.contains(&d.unit.as_str()))
        .map(|d| WorkItem {
            unit_tag: d.unit.clone(),
            task: d.task.clone(),
            due: d.due.to_string(),
            status: crate::app::view::due_words_why(d.days_overdue, d.pulled_forward.as_deref()),
            mark: (d.state > State::Steady).then(|| mark(d.state)),
        })
        .collect();

    let exceptions: Vec<Finding> = chosen
        .iter()
        .flat_map(|u| {
            u.health
                .flags
                .iter()
                .map(|f| finding(&u.unit, f, sys, zone))
        })
        .collect();
    let counts = super::status::StateCounts::of(chosen.iter().map(|u| u.state));
    let fleet_summary = format!(
        "{}. Evaluated {}.",
        super::view::counts_line(chosen.len(), &counts),
        zone.show_marked(at)
    );

    Ok(ReportDoc {
        shop_name: fleet.shop_name.clone(),
        title: "Condition report".into(),
        period: format!("{from} – {to}"),
        written: zone.show_date(now),
        written_at: now,
        prepared_by: if opts.prepared_by.trim().is_empty() { "—".into() } else { opts.prepared_by.trim().to_string() },
        paper: opts.paper,
        fleet_summary,
        fleet: chosen.iter().map(|u| fleet_row(u, sys, zone)).collect(),
        exceptions,
        work,
        work_heading: format!("Work overdue and due in the next {} weeks", WORK_AHEAD_DAYS / 7),
        notes: vec![format!(
            "Dates and times in the shop's time zone, {}. Figures in {} units; lost flow, leak and heat rise are against the unit's baseline. Trend: \
             least-squares slope over the last 12 points, ↑ rising or ↓ falling where it is significant \
             (|t| ≥ 2), → no clear trend. On the unit pages, change is the last value in the period minus the first; \
             cost of waiting is the heat the lost flow makes at working pressure (lost flow × pressure), and its \
             cost a year at the unit's run hours and the shop's price per kWh. \
             A figure marked \"check corrected\" (or \"sample corrected\") rests on a reading changed after it was \
             entered, as does a baseline whose checks were; each unit page lists the corrections of its readings made in the period or made since to \
             a reading of the period, field by field as stored (the column name gives the unit), with who, \
             when and why.",
            zone.name(),
            match sys {
                UnitSystem::Metric => "metric",
                UnitSystem::Us => "US customary",
            }
        )],
        questioned: chosen
            .iter()
            .flat_map(|u| {
                u.health
                    .suspects
                    .iter()
                    .filter(|q| q.confirmed.is_none())
                    .map(move |q| format!("{}: {}", u.unit, questioned_text(q, zone)))
            })
            .collect(),
        units,
        cautions: SAFETY_CAUTIONS[..SAFETY_CAUTIONS.len() - 1].iter().map(|s| s.to_string()).collect(),
        guidance: SAFETY_CAUTIONS[SAFETY_CAUTIONS.len() - 1].to_string(),
    })
}
