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

use std::io::Write;
use std::path::{Path, PathBuf};

use chrono::{DateTime, Duration, NaiveDate, Utc};
use serde::Serialize;

use super::figures;
use super::shop::Shop;
use super::status::{fleet_status_in, store_error, Detail, UnitStatus};
use super::work::due_list_in;
use super::AppError;
use crate::health::indicators::{Dim, Direction, Tile};
use crate::health::plan::SAFETY_CAUTIONS;
use crate::health::screen::{Field as ScreenField, Record};
use crate::health::{BaselineIndicator, BaselineSource, Flag, State, SuspectReading};
use crate::model::{EventKind, Fluid, Machine, StrokeDirection, Unit};
use crate::outfile::{Options, OutFile};
use crate::quantity::{format, Quantity};
use crate::report::charts::{Band, Chart, EventMark, LimitLine, Series};
use crate::report::{
    self, Finding, FleetRow, IndicatorRow, Mark, Paper, ReportDoc, StateText, UnitSection, WorkItem,
};
use crate::units::{Length, Pressure, UnitSystem, Volume};

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
    let (from, to) = period(opts, now)?;
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
fn period(opts: &ReportOptions, now: DateTime<Utc>) -> Result<(NaiveDate, NaiveDate), AppError> {
    let to = opts.to.unwrap_or_else(|| now.date_naive());
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

/// Now, or the end of the day `to` when one was asked for (as `status --at DATE` does).
fn evaluation_instant(to: Option<NaiveDate>, now: DateTime<Utc>) -> DateTime<Utc> {
    to.and_then(|d| d.and_hms_opt(23, 59, 59))
        .map(|t| t.and_utc())
        .unwrap_or(now)
}

/// Fills the printed report from the shop's data, as of `now`.
pub fn build_report(
    shop: &Shop,
    opts: &ReportOptions,
    now: DateTime<Utc>,
) -> Result<ReportDoc, AppError> {
    let store = shop.store();
    let (from, to) = period(opts, now)?;
    let at = evaluation_instant(opts.to, now);
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
    let registers = store.units().map_err(store_error)?;
    let mut units = Vec::new();
    for u in &chosen {
        let unit = registers.iter().find(|r| r.id == u.unit_id);
        let machine = unit.and_then(|r| machines.iter().find(|m| m.id == r.machine_id));
        let events = store
            .unit_history(u.unit_id, Some(at))
            .map_err(store_error)?
            .map(|h| h.events)
            .unwrap_or_default();
        units.push(unit_section(u, unit, machine, &events, from, to, sys));
    }

    let due = due_list_in(store, Some(at), Some(WORK_AHEAD_DAYS))?;
    let tags: Vec<&str> = chosen.iter().map(|u| u.unit.as_str()).collect();
    let work: Vec<WorkItem> = due
        .items
        .iter()
        .filter(|d| tags.contains(&d.unit.as_str()))
        .map(|d| WorkItem {
            unit_tag: d.unit.clone(),
            task: d.task.clone(),
            due: d.due.to_string(),
            status: work_status(d.days_overdue, d.pulled_forward.as_deref()),
            mark: (d.state > State::Steady).then(|| mark(d.state)),
        })
        .collect();

    let exceptions: Vec<Finding> = chosen
        .iter()
        .flat_map(|u| u.health.flags.iter().map(|f| finding(&u.unit, f, sys)))
        .collect();
    let counts = |s: State| chosen.iter().filter(|u| u.state == s).count();
    let fleet_summary = format!(
        "{} unit{}: {} steady, {} not judged yet, {} watch, {} act. Evaluated {}.",
        chosen.len(),
        if chosen.len() == 1 { "" } else { "s" },
        counts(State::Steady),
        counts(State::NotJudged),
        counts(State::Watch),
        counts(State::Act),
        at.format("%Y-%m-%d %H:%M UTC")
    );

    Ok(ReportDoc {
        shop_name: fleet.shop_name.clone(),
        title: "Condition report".into(),
        period: format!("{from} – {to}"),
        written: now.format("%Y-%m-%d").to_string(),
        written_at: now,
        prepared_by: if opts.prepared_by.trim().is_empty() { "—".into() } else { opts.prepared_by.trim().to_string() },
        paper: opts.paper,
        fleet_summary,
        fleet: chosen.iter().map(|u| fleet_row(u, sys)).collect(),
        exceptions,
        work,
        work_heading: format!("Work overdue and due in the next {} weeks", WORK_AHEAD_DAYS / 7),
        notes: vec![format!(
            "Figures in {} units; lost flow, leak and heat rise are against the unit's baseline. Trend: \
             least-squares slope over the last 12 points, ↑ rising or ↓ falling where it is significant \
             (|t| ≥ 2), → no clear trend. On the unit pages, change is the last value in the period minus the first.",
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
                    .map(move |q| format!("{}: {}", u.unit, questioned_text(q)))
            })
            .collect(),
        units,
        cautions: SAFETY_CAUTIONS[..SAFETY_CAUTIONS.len() - 1].iter().map(|s| s.to_string()).collect(),
        guidance: SAFETY_CAUTIONS[SAFETY_CAUTIONS.len() - 1].to_string(),
    })
}

fn mark(s: State) -> Mark {
    match s {
        // The word says "not judged yet"; the report draws no mark of its own for it yet.
        State::Steady => Mark::Steady,
        // The open square: readings or a baseline are missing, so nothing is said yet.
        State::NotJudged => Mark::None,
        State::Watch => Mark::Watch,
        State::Act => Mark::Act,
    }
}

fn state_text(s: State) -> StateText {
    StateText {
        mark: mark(s),
        word: s.as_str().to_string(),
    }
}

fn work_status(days_overdue: i64, pulled_forward: Option<&str>) -> String {
    let when = match days_overdue {
        d if d > 0 => format!("overdue {d} day{}", if d == 1 { "" } else { "s" }),
        0 => "due today".to_string(),
        d => format!("in {} day{}", -d, if d == -1 { "" } else { "s" }),
    };
    match pulled_forward {
        Some(why) => format!("{when}; brought forward: {why}"),
        None => when,
    }
}

/// The unit a chart's axis is in.
fn chart_unit(dim: Dim, sys: UnitSystem) -> String {
    match dim {
        Dim::Ratio => "× baseline".into(),
        Dim::RangeNumber => "ISO 4406 scale number".into(),
        _ => figures::unit(dim, sys).to_string(),
    }
}

fn arrow(d: Direction) -> &'static str {
    match d {
        Direction::Rising => "rising ↑",
        Direction::Falling => "falling ↓",
        Direction::Flat => "no clear trend →",
    }
}

/// A questioned reading in words: record, time, field, reason, and who confirmed it.
fn questioned_text(q: &SuspectReading) -> String {
    let record = match q.record {
        Record::Check => "check",
        Record::Sample => "sample",
    };
    let state = match &q.confirmed {
        None => "not confirmed: left out of baselines and flags".to_string(),
        Some(c) => {
            let (by, at) = super::status::confirmed_by_text(c);
            format!("confirmed by {by} {}", at.format("%Y-%m-%d"))
        }
    };
    format!(
        "{record} of {}, {}: {} ({state})",
        q.at.format("%Y-%m-%d %H:%M UTC"),
        q.field.label(),
        q.reason
    )
}

/// One line on the unit's questioned readings that are not confirmed: how many, and the
/// latest one (record, time, field), so the unit keeps to its page; `sumpbook status --unit`
/// and the app list each with its reason.
fn questioned_remarks(u: &UnitStatus) -> Vec<String> {
    let open: Vec<&SuspectReading> = u
        .health
        .suspects
        .iter()
        .filter(|q| q.confirmed.is_none())
        .collect();
    let Some(q) = open.last() else {
        return Vec::new();
    };
    let record = match q.record {
        Record::Check => "check",
        Record::Sample => "sample",
    };
    let n = open.len();
    vec![format!(
        "Questioned, not confirmed: {n} reading{} (latest: {} of {}), left out of baselines and \
         flags until confirmed.",
        if n == 1 { "" } else { "s" },
        q.field.label(),
        format!("{record} {}", q.at.format("%Y-%m-%d %H:%M UTC"))
    )]
}

/// Which questionable fields feed an indicator (tile key).
fn feeds(field: ScreenField, key: &str) -> bool {
    use ScreenField as F;
    match field {
        F::StrokeTime => matches!(
            key,
            "lost_flow" | "effective_flow" | "corrected_flow" | "leak_conductance"
        ),
        F::Pressure => matches!(key, "leak_conductance" | "corrected_flow"),
        F::ReservoirTemp => matches!(
            key,
            "reservoir_temp" | "heat_rise" | "corrected_flow" | "leak_conductance" | "case_drain"
        ),
        F::AmbientTemp => key == "heat_rise",
        F::CaseDrain => key == "case_drain",
        F::Kv40 | F::ViscReading => key == "kv40",
        F::Water => key == "water",
        F::Acid => key == "acid_rise",
    }
}

/// A mark for an indicator whose latest figure rests on (or had to leave out) a questioned
/// field of the unit's latest check or sample.
fn questioned_mark(u: &UnitStatus, key: &str) -> Option<String> {
    let last_check = u.health.last_check;
    let last_sample = u.health.last_sample;
    let q = u.health.suspects.iter().rev().find(|q| {
        let latest = match q.record {
            Record::Check => last_check == Some(q.at),
            Record::Sample => last_sample == Some(q.at),
        };
        latest && feeds(q.field, key)
    })?;
    Some(match &q.confirmed {
        None => format!("latest {} questioned, left out", q.field.label()),
        Some(c) => format!(
            "rests on a questioned {}, confirmed by {}",
            q.field.label(),
            super::status::confirmed_by_text(c).0
        ),
    })
}

/// About three significant figures, trailing zeros dropped: chart labels (`96.2`, `3.51`, `16`).
fn trim_number(v: f64) -> String {
    figures::significant(v, 3, 2)
}

fn finding(tag: &str, f: &Flag, sys: UnitSystem) -> Finding {
    Finding {
        unit_tag: tag.to_string(),
        state: state_text(f.state),
        what: f.what.clone(),
        amount: figures::flag_figure(f, sys),
        since: f.since.to_string(),
        next_step: f.next_step.clone(),
        acknowledged: f.acknowledgement.as_ref().map(|a| {
            let note = if a.note.trim().is_empty() {
                String::new()
            } else {
                format!(": {}", a.note.trim())
            };
            format!("{} {}{note}", a.by, a.at.format("%Y-%m-%d"))
        }),
    }
}

/// The tile that says most about the unit's state: the worst, else lost flow.
fn leading_tile(u: &UnitStatus) -> Option<&Tile> {
    let tiles = &u.health.tiles;
    tiles
        .iter()
        .filter(|t| t.state > State::Steady)
        .max_by_key(|t| t.state)
        .or_else(|| {
            tiles
                .iter()
                .find(|t| t.key == "lost_flow" && t.value.is_some())
        })
        .or_else(|| tiles.iter().find(|t| t.value.is_some()))
}

/// The unit's key figures, written exactly as the fleet table of `sumpbook status` writes
/// them (lost flow, leak conductance, heat-rise drift, KV40, ISO 4406 against target, water),
/// so that the paper and the screen agree; an empty figure is left out.
fn key_figures(u: &UnitStatus, sys: UnitSystem) -> String {
    let i = &u.health.indicators;
    let mut parts = Vec::new();
    if let Some(v) = i.lost_flow_pct {
        parts.push(format!("lost flow {v:.1}%"));
    }
    if let Some(v) = i.leak_conductance_ratio {
        parts.push(format!("leak {v:.2}×"));
    }
    if let Some(v) = i.heat_rise_drift_k {
        let (v, unit) = match sys {
            UnitSystem::Metric => (v, "K"),
            UnitSystem::Us => (v * 9.0 / 5.0, "°F"),
        };
        parts.push(format!("heat rise {v:+.1} {unit} over baseline"));
    }
    if let Some(v) = i.kv40_cst {
        parts.push(format!("KV40 {v:.1} cSt"));
    }
    match (&i.iso4406, &i.iso4406_target) {
        (Some(c), Some(t)) => parts.push(format!("ISO 4406 {c} (target {t})")),
        (Some(c), None) => parts.push(format!("ISO 4406 {c}")),
        _ => {}
    }
    if let Some(v) = i.water_ppm {
        parts.push(format!("water {v:.0} ppm"));
    }
    if parts.is_empty() {
        "no readings yet".into()
    } else {
        parts.join(" · ")
    }
}

fn short_label(t: &Tile) -> String {
    match t.key.as_str() {
        "lost_flow" => "lost flow".into(),
        "effective_flow" => "flow".into(),
        "heat_rise" => "heat rise".into(),
        "leak_conductance" => "leak".into(),
        "case_drain" => "case drain".into(),
        "reservoir_temp" => "oil temperature".into(),
        "kv40" => "KV40".into(),
        "cleanliness" => "ISO 4406".into(),
        "water" => "water".into(),
        "acid_rise" => "acid number".into(),
        _ => t.label.to_lowercase(),
    }
}

fn fleet_row(u: &UnitStatus, sys: UnitSystem) -> FleetRow {
    let trend = match leading_tile(u).and_then(|t| t.trend.as_ref().map(|tr| (t, tr))) {
        Some((t, tr)) => {
            let mut s = format!("{}: {}", short_label(t), arrow(tr.direction));
            if let Some(f) = &tr.forecast {
                s.push_str(&format!(
                    ", {} by about {}",
                    f.state.as_str(),
                    f.date.format("%Y-%m-%d")
                ));
            }
            s
        }
        None => "not enough points".into(),
    };
    FleetRow {
        tag: u.unit.clone(),
        name: [u.machine.as_str(), u.machine_name.as_str()]
            .iter()
            .filter(|s| !s.is_empty())
            .copied()
            .collect::<Vec<_>>()
            .join(" · "),
        state: state_text(u.state),
        // A flagged or not-judged unit reads as on the fleet board; a steady one by its key
        // figures, as in `sumpbook status`.
        figures: if u.health.flags.is_empty() && u.state != State::NotJudged {
            key_figures(u, sys)
        } else {
            let key = key_figures(u, sys);
            let board = super::status::board_figures(u, sys);
            if key.is_empty() {
                board
            } else {
                format!("{board}; {key}")
            }
        },
        trend,
        oil_life: u
            .health
            .indicators
            .oil_life_used_pct
            .map(|p| format!("{p:.0}%"))
            .unwrap_or_else(|| "—".into()),
        next_due: u
            .next_due
            .as_ref()
            .map(|w| {
                format!(
                    "{} {} ({})",
                    w.kind.label(),
                    w.due,
                    work_status(w.days_overdue, None)
                )
            })
            .unwrap_or_else(|| "—".into()),
    }
}

fn pump_text(unit: &Unit, sys: UnitSystem) -> String {
    let kind = match unit.pump_kind {
        crate::model::PumpKind::Gear => "gear",
        crate::model::PumpKind::Vane => "vane",
        crate::model::PumpKind::PistonFixed => "fixed piston",
        crate::model::PumpKind::PistonVariable => "variable piston",
    };
    match unit.rated_flow {
        Some(q) => format!("{kind}, {} rated", format(Quantity::Flow(q), sys)),
        None => kind.to_string(),
    }
}

fn stroke_text(unit: &Unit, sys: UnitSystem) -> String {
    let Some(s) = unit.stroke else {
        return "not set".into();
    };
    let len = |l: Length| format(Quantity::Length(l), sys);
    let dir = match s.direction {
        StrokeDirection::Extend => "extend",
        StrokeDirection::Retract => "retract",
    };
    let rod = match (s.direction, s.rod) {
        (StrokeDirection::Retract, Some(r)) => format!(", rod {}", len(r)),
        _ => String::new(),
    };
    format!("{dir}, bore {}{rod}, stroke {}", len(s.bore), len(s.length))
}

fn fluid_text(f: &Fluid, sys: UnitSystem) -> (String, String) {
    let mut name = f.name.clone();
    if let Some(vg) = f.iso_vg {
        name.push_str(&format!(", ISO VG {vg}"));
    }
    if !f.base_type.is_empty() {
        name.push_str(&format!(" ({})", f.base_type));
    }
    let mut new = Vec::new();
    if let Some(v) = f.kv40_new {
        new.push(format!("KV40 {}", format(Quantity::Viscosity(v), sys)));
    }
    if let Some(v) = f.kv100_new {
        new.push(format!("KV100 {}", format(Quantity::Viscosity(v), sys)));
    }
    if let Some(a) = f.acid_new_mgkoh_g {
        new.push(format!("acid {a:.2} mg KOH/g"));
    }
    (
        name,
        if new.is_empty() {
            "not recorded".into()
        } else {
            new.join(" · ")
        },
    )
}

fn baseline_text(u: &UnitStatus, sys: UnitSystem) -> String {
    let b = &u.health.baseline;
    if b.is_empty() {
        return "none yet (needs the first checks of the era)".into();
    }
    let mut sources: Vec<String> = Vec::new();
    for v in &b.values {
        let s = match &v.source {
            BaselineSource::Checks {
                check_ids,
                from,
                to,
            } => {
                format!(
                    "first {} checks of the era, {} – {}",
                    check_ids.len(),
                    from.format("%Y-%m-%d"),
                    to.format("%Y-%m-%d")
                )
            }
            BaselineSource::Manual { by, at } => {
                format!("entered by {by} on {}", at.format("%Y-%m-%d"))
            }
        };
        if !sources.contains(&s) {
            sources.push(s);
        }
    }
    let mut values = Vec::new();
    for (ind, dim, name) in [
        (BaselineIndicator::EffectiveFlow, Dim::Flow, "flow"),
        (BaselineIndicator::HeatRise, Dim::TempDiff, "heat rise"),
        (BaselineIndicator::CaseDrain, Dim::Flow, "case drain"),
    ] {
        if let Some(v) = b.get(ind) {
            values.push(format!(
                "{name} {}",
                plus_minus(dim, v.value, v.spread, sys)
            ));
        }
    }
    format!("{}; {}", values.join(", "), sources.join("; "))
}

/// `value ± spread unit`, the unit written once: `104.6 ± 2.15 L/min`.
fn plus_minus(dim: Dim, value: f64, spread: f64, sys: UnitSystem) -> String {
    let v = figures::text(dim, value, sys);
    let s = figures::change(dim, spread, sys);
    let s = s.trim_start_matches(['+', '±', '−']);
    match (v.split_once(' '), s.split_once(' ')) {
        (Some((vn, vu)), Some((sn, su))) if vu == su => format!("{vn} ± {sn} {vu}"),
        _ => format!("{v} ± {s}"),
    }
}

fn in_period(at: DateTime<Utc>, from: NaiveDate, to: NaiveDate) -> bool {
    let d = at.date_naive();
    d >= from && d <= to
}

fn indicator_rows(
    u: &UnitStatus,
    from: NaiveDate,
    to: NaiveDate,
    sys: UnitSystem,
) -> Vec<IndicatorRow> {
    let target = u.health.indicators.iso4406_target.clone();
    u.health
        .tiles
        .iter()
        .filter(|t| t.value.is_some() || t.text.is_some() || t.state == State::NotJudged)
        .map(|t| {
            let mut latest = match (&t.text, t.value) {
                (Some(text), Some(v)) if t.key == "cleanliness" => {
                    format!("{text}, {} over target", figures::text(t.dim, v, sys))
                }
                (Some(text), _) => text.clone(),
                (None, Some(v)) => figures::text(t.dim, v, sys),
                (None, None) => u
                    .health
                    .not_judged
                    .iter()
                    .find(|n| n.key == t.key)
                    .map(|n| format!("— {}", n.until))
                    .unwrap_or_else(|| "—".into()),
            };
            if let Some(q) = questioned_mark(u, &t.key) {
                latest.push_str(&format!(" ({q})"));
            }
            let baseline = match (t.key.as_str(), t.baseline) {
                ("kv40", Some(b)) => format!("{} new oil", figures::text(t.dim, b, sys)),
                ("cleanliness", _) => target
                    .as_ref()
                    .map(|c| format!("target {c}"))
                    .unwrap_or_else(|| "—".into()),
                ("lost_flow" | "acid_rise", _) => "—".into(),
                (_, Some(b)) => match t.baseline_spread.filter(|s| *s > 0.0) {
                    Some(s) => plus_minus(t.dim, b, s, sys),
                    None => figures::text(t.dim, b, sys),
                },
                (_, None) => "—".into(),
            };
            let limits = limits_text(t, sys);
            let points: Vec<(DateTime<Utc>, f64)> = u
                .health
                .series
                .iter()
                .find(|s| s.key == t.key)
                .map(|s| {
                    s.points
                        .iter()
                        .filter(|p| in_period(p.at, from, to))
                        .map(|p| (p.at, p.value))
                        .collect()
                })
                .unwrap_or_default();
            let mut change = match (points.first(), points.last()) {
                (Some(a), Some(b)) if points.len() > 1 => figures::change(t.dim, b.1 - a.1, sys),
                _ => "—".into(),
            };
            if let Some(tr) = &t.trend {
                change.push_str(&format!(" {}", figures::arrow(tr.direction)));
            }
            IndicatorRow {
                name: t.label.clone(),
                state: state_text(t.state),
                latest,
                baseline,
                limits,
                change,
            }
        })
        .collect()
}

/// "watch / act" limits with the unit written once: `60.0 / 70.0 °C`, `43.7–48.3 / 41.4–50.6 cSt`.
fn limits_text(t: &Tile, sys: UnitSystem) -> String {
    if t.watch.is_empty() && t.act.is_empty() {
        return "—".into();
    }
    let mut unit = String::new();
    let mut list = |v: &[f64]| -> String {
        let parts: Vec<String> = v
            .iter()
            .map(|x| {
                let text = figures::text(t.dim, *x, sys);
                match text.split_once(' ') {
                    Some((n, u)) => {
                        unit = u.to_string();
                        n.to_string()
                    }
                    None => text,
                }
            })
            .collect();
        if parts.is_empty() {
            "—".into()
        } else {
            parts.join("–")
        }
    };
    let (w, a) = (list(&t.watch), list(&t.act));
    if unit.is_empty() {
        format!("{w} / {a}")
    } else {
        format!("{w} / {a} {unit}")
    }
}

fn event_code(kind: EventKind) -> Option<(&'static str, &'static str)> {
    match kind {
        EventKind::FluidChange => Some(("FC", "fluid change")),
        EventKind::FilterChange => Some(("FL", "filter change")),
        EventKind::Rebuild => Some(("RB", "rebuild")),
        EventKind::Repair => Some(("RP", "repair")),
        EventKind::CoolerClean => Some(("CC", "cooler clean")),
        // Top-ups and notes are too many to mark; they are in the unit's history.
        EventKind::TopUp | EventKind::Note => None,
    }
}

fn charts(
    u: &UnitStatus,
    events: &[crate::model::Event],
    from: NaiveDate,
    to: NaiveDate,
    sys: UnitSystem,
) -> Vec<Chart> {
    let marks: Vec<EventMark> = events
        .iter()
        .filter(|e| in_period(e.done_at, from, to))
        .filter_map(|e| {
            let (code, what) = event_code(e.kind)?;
            Some(EventMark {
                at: e.done_at,
                code: code.into(),
                label: format!("{what} {}", e.done_at.format("%Y-%m-%d")),
            })
        })
        .collect();
    let find = |key: &str| u.health.series.iter().find(|s| s.key == key);
    let points = |s: &crate::health::Series| -> Vec<(DateTime<Utc>, f64)> {
        s.points
            .iter()
            .filter(|p| in_period(p.at, from, to))
            .map(|p| (p.at, figures::value(s.dim, p.value, sys)))
            .collect()
    };
    let limits = |s: &crate::health::Series| -> Vec<LimitLine> {
        let mut out = Vec::new();
        for (vals, level, word) in [(&s.watch, Mark::Watch, "watch"), (&s.act, Mark::Act, "act")] {
            for v in vals {
                let shown = figures::value(s.dim, *v, sys);
                out.push(LimitLine {
                    value: shown,
                    level,
                    label: format!("{word} {}", trim_number(shown)),
                });
            }
        }
        out
    };
    let band = |s: &crate::health::Series, label: &str| -> Option<Band> {
        let b = s.baseline?;
        let spread = s.baseline_spread.unwrap_or(0.0);
        let (lo, hi) = (
            figures::value(s.dim, b - 2.0 * spread, sys),
            figures::value(s.dim, b + 2.0 * spread, sys),
        );
        Some(Band {
            low: lo.min(hi),
            high: lo.max(hi),
            centre: Some(figures::value(s.dim, b, sys)),
            label: label.into(),
        })
    };
    let empty = |what: &str| format!("no {what} in this period");
    let mut out = Vec::new();

    // Effective flow carries the baseline band; lost flow is its complement.
    if let Some(s) = find("effective_flow") {
        out.push(Chart {
            title: "Effective flow of the timed stroke".into(),
            unit: chart_unit(s.dim, sys),
            from,
            to,
            series: vec![Series {
                label: "effective flow".into(),
                points: points(s),
            }],
            band: band(s, "baseline ± 2σ"),
            limits: limits(s),
            events: marks.clone(),
            empty_note: empty("timed strokes"),
        });
    }
    if let Some(s) = find("heat_rise") {
        out.push(Chart {
            title: "Heat rise (oil − ambient)".into(),
            unit: chart_unit(s.dim, sys),
            from,
            to,
            series: vec![Series {
                label: "heat rise".into(),
                points: points(s),
            }],
            band: band(s, "baseline ± 2σ"),
            limits: limits(s),
            events: marks.clone(),
            empty_note: empty("checks with both temperatures"),
        });
    }
    if let Some(s) = find("kv40") {
        // The ISO VG band of the fluid, where the samples give it, is the band to stay in.
        let vg = u.health.samples.iter().rev().find_map(|p| p.vg_band);
        let band = match vg {
            Some((lo, hi)) => Some(Band {
                low: figures::value(Dim::Viscosity, lo, sys),
                high: figures::value(Dim::Viscosity, hi, sys),
                centre: s.baseline.map(|b| figures::value(s.dim, b, sys)),
                label: "ISO VG band · new oil".into(),
            }),
            None => band(s, "new oil"),
        };
        out.push(Chart {
            title: "KV40".into(),
            unit: chart_unit(s.dim, sys),
            from,
            to,
            series: vec![Series {
                label: "KV40".into(),
                points: points(s),
            }],
            band,
            limits: limits(s),
            events: marks.clone(),
            empty_note: empty("viscosity results"),
        });
    }
    let sizes = [
        ("iso4406_4um", "≥4 µm(c)"),
        ("iso4406_6um", "≥6 µm(c)"),
        ("iso4406_14um", "≥14 µm(c)"),
    ];
    let mut series = Vec::new();
    let mut targets = Vec::new();
    for (key, label) in sizes {
        if let Some(s) = find(key) {
            series.push(Series {
                label: label.into(),
                points: points(s),
            });
            if let Some(t) = s.baseline {
                targets.push(LimitLine {
                    value: t,
                    level: Mark::None,
                    label: format!("target {label} {}", trim_number(t)),
                });
            }
        }
    }
    out.push(Chart {
        title: "Cleanliness".into(),
        unit: "ISO 4406 scale number".into(),
        from,
        to,
        series,
        band: None,
        limits: targets,
        events: marks,
        empty_note: empty("particle counts"),
    });
    out
}

fn unit_section(
    u: &UnitStatus,
    unit: Option<&Unit>,
    machine: Option<&Machine>,
    events: &[crate::model::Event],
    from: NaiveDate,
    to: NaiveDate,
    sys: UnitSystem,
) -> UnitSection {
    // The machine's name heads the page; here its tag and kind.
    let machine_text = if u.machine_kind.is_empty() {
        u.machine.clone()
    } else {
        format!("{}, {}", u.machine, u.machine_kind)
    };
    let mut identity = vec![("Machine".to_string(), machine_text)];
    if let Some(m) = machine.filter(|m| !m.notes.trim().is_empty()) {
        identity.push(("Notes".into(), m.notes.trim().to_string()));
    }
    if let Some(unit) = unit {
        identity.push(("Pump".into(), pump_text(unit, sys)));
        if let Some(p) = unit.relief {
            identity.push((
                "Relief".into(),
                format(Quantity::Pressure(Pressure(p.si())), sys),
            ));
        }
        if let Some(v) = unit.reservoir {
            identity.push((
                "Reservoir".into(),
                format(Quantity::Volume(Volume(v.si())), sys),
            ));
        }
        let mut sensitive = unit.sensitive_component.as_str().replace('_', " ");
        if let Some(t) = &u.health.indicators.iso4406_target {
            sensitive.push_str(&format!(" (target {t})"));
        }
        identity.push(("Most sensitive".into(), sensitive));
        identity.push(("Timed stroke".into(), stroke_text(unit, sys)));
    }
    let mut fluid = Vec::new();
    match &u.health.fluid {
        Some(f) => {
            let (name, new) = fluid_text(f, sys);
            fluid.push(("Fluid".to_string(), name));
            fluid.push(("New oil".to_string(), new));
        }
        None => fluid.push(("Fluid".to_string(), "not recorded".to_string())),
    }
    if let Some(era) = u.health.eras.last() {
        let mut text = format!(
            "{} ({})",
            era.start.format("%Y-%m-%d"),
            era.started_by.as_str()
        );
        if let Some(p) = u.health.indicators.oil_life_used_pct {
            text.push_str(&format!("; oil life used {p:.0}%"));
        }
        fluid.push(("Era since".into(), text));
    }

    let waiting: Vec<&crate::health::NotJudged> =
        u.health.not_judged.iter().filter(|n| n.expected).collect();
    let summary = if u.health.flags.is_empty() && !waiting.is_empty() {
        format!(
            "Not judged yet: {} indicator{} wait{} for readings or a baseline (below); nothing is said \
             about them until then.",
            waiting.len(),
            if waiting.len() == 1 { "" } else { "s" },
            if waiting.len() == 1 { "s" } else { "" }
        )
    } else if u.health.flags.is_empty() {
        "No flags: every indicator is within its baseline band and limits.".to_string()
    } else {
        let n = u.health.flags.len();
        format!(
            "{n} flag{}: {}.",
            if n == 1 { "" } else { "s" },
            u.health
                .flags
                .iter()
                .map(|f| f.kind.as_str().replace('_', " "))
                .collect::<Vec<_>>()
                .join(", ")
        )
    };
    UnitSection {
        tag: u.unit.clone(),
        name: u.machine_name.clone(),
        state: state_text(u.state),
        summary,
        identity,
        fluid,
        baseline: baseline_text(u, sys),
        indicators: indicator_rows(u, from, to, sys),
        charts: charts(u, events, from, to, sys),
        remarks: u
            .health
            .not_judged
            .iter()
            .filter(|n| n.expected)
            .map(|n| {
                format!(
                    "Not judged yet — {}: {}; judged {}.",
                    n.label, n.missing, n.until
                )
            })
            .chain(questioned_remarks(u))
            .collect(),
        flags: u
            .health
            .flags
            .iter()
            .map(|f| finding(&u.unit, f, sys))
            .collect(),
        work: u
            .health
            .work
            .iter()
            .map(|w| WorkItem {
                unit_tag: u.unit.clone(),
                task: w.kind.label().to_string(),
                due: w.due.to_string(),
                status: work_status(w.days_overdue, w.pulled_forward.as_deref()),
                mark: (w.state > State::Steady).then(|| mark(w.state)),
            })
            .collect(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn work_status_reads_naturally() {
        assert_eq!(work_status(5, None), "overdue 5 days");
        assert_eq!(work_status(1, None), "overdue 1 day");
        assert_eq!(work_status(0, None), "due today");
        assert_eq!(
            work_status(-12, Some("acid number act")),
            "in 12 days; brought forward: acid number act"
        );
    }

    #[test]
    fn chart_labels_keep_their_digits() {
        assert_eq!(trim_number(130.6), "131");
        assert_eq!(trim_number(10.0), "10");
        assert_eq!(trim_number(96.24), "96.2");
        assert_eq!(trim_number(3.51), "3.51");
        assert_eq!(trim_number(0.0), "0");
    }

    #[test]
    fn the_period_defaults_and_refuses_a_reversed_range() {
        let now: DateTime<Utc> = "2024-06-30T10:00:00Z".parse().unwrap();
        let mut o = ReportOptions {
            out: "r.pdf".into(),
            units: vec![],
            from: None,
            to: None,
            paper: Paper::A4,
            prepared_by: String::new(),
            replace: false,
        };
        let (f, t) = period(&o, now).unwrap();
        assert_eq!(t, now.date_naive());
        assert_eq!((t - f).num_days(), DEFAULT_PERIOD_DAYS);
        assert_eq!(evaluation_instant(None, now), now);
        o.from = NaiveDate::from_ymd_opt(2024, 7, 1);
        assert!(matches!(period(&o, now), Err(AppError::BadInput(_))));
        let past = NaiveDate::from_ymd_opt(2024, 3, 31).unwrap();
        assert_eq!(
            evaluation_instant(Some(past), now).to_rfc3339(),
            "2024-03-31T23:59:59+00:00"
        );
    }
}
