//! `sumpbook status`, `due`, `ack`, `log-event` and `limits`: the health engine's findings and
//! the actions on them, on the command line.
//!
//! Parses what was typed (dates, quantities with units, flag and event kinds), calls
//! `app::status` and `app::work`, and prints a compact table in the shop's unit system or the
//! JSON of the issue. No rules here.

use std::io::Write;

use chrono::{DateTime, NaiveDate, NaiveTime, Utc};
use clap::{Args, Subcommand};

use super::Failure;
use crate::app::figures;
use crate::app::shop::Shop;
use crate::app::status::{self, FleetStatus, UnitStatus};
use crate::app::work::{self, DueBucket, DueList, EventInput, LimitRow};
use crate::health::indicators::Tile;
use crate::health::plan::CAUTION_SHORT;
use crate::health::screen::Record;
use crate::health::{BaselineSource, Flag, FlagKind, NotJudged, State, SuspectReading};
use crate::model::EventKind;
use crate::quantity::{format, parse_temperature, parse_volume, Quantity};
use crate::units::UnitSystem;

#[derive(Args, Debug, Clone, PartialEq)]
pub struct StatusArgs {
    /// Only this unit (by tag), with its tiles, baseline and work.
    #[arg(long, value_name = "TAG")]
    pub unit: Option<String>,
    /// Print JSON instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Evaluate the shop as it stood at the end of this date (YYYY-MM-DD, or a UTC time
    /// YYYY-MM-DDTHH:MM:SSZ): only what was recorded by then is used.
    #[arg(long, value_name = "DATE")]
    pub at: Option<String>,
}

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

#[derive(Args, Debug, Clone, PartialEq)]
pub struct LogEventArgs {
    /// Unit tag.
    #[arg(value_name = "UNIT")]
    pub unit: String,
    /// fluid_change, top_up, filter_change, rebuild, repair, cooler_clean or note.
    #[arg(value_name = "KIND")]
    pub kind: String,
    /// When it was done: YYYY-MM-DD (taken as 12:00 UTC) or YYYY-MM-DDTHH:MM:SSZ; default now.
    #[arg(long, value_name = "DATE")]
    pub at: Option<String>,
    /// Oil put in, with its unit: 20l, 5.3gal.
    #[arg(long, value_name = "VOLUME")]
    pub volume: Option<String>,
    /// The fluid put in (by name); default the unit's fluid in service.
    #[arg(long, value_name = "NAME")]
    pub fluid: Option<String>,
    /// Who did it.
    #[arg(long, value_name = "NAME", default_value = "")]
    pub by: String,
    /// What was done, in a few words.
    #[arg(long, value_name = "TEXT", default_value = "")]
    pub note: String,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

#[derive(Args, Debug, Clone, PartialEq)]
pub struct LimitsArgs {
    #[command(subcommand)]
    pub action: Option<LimitsAction>,
    /// The limits in force for this unit (its overrides over the shop's).
    #[arg(long, value_name = "TAG")]
    pub unit: Option<String>,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

#[derive(Subcommand, Debug, Clone, PartialEq)]
pub enum LimitsAction {
    /// Set a shop default, or with --unit an override for one unit.
    Set {
        /// Limit key, as `sumpbook limits` lists them.
        #[arg(value_name = "KEY")]
        key: String,
        /// Watch limit, in the key's unit (°C keys also take 140F).
        #[arg(long, value_name = "X", allow_hyphen_values = true)]
        watch: Option<String>,
        /// Act limit (for a single setting such as an interval: its value).
        #[arg(long, value_name = "Y", allow_hyphen_values = true)]
        act: Option<String>,
        /// The value of a single setting (same as --act).
        #[arg(
            long,
            value_name = "V",
            conflicts_with = "act",
            allow_hyphen_values = true
        )]
        value: Option<String>,
        /// Override for this unit only (by tag); without it the shop default is set.
        #[arg(long, value_name = "TAG")]
        unit: Option<String>,
        /// Who makes the change (kept in the edit history); default the login name.
        #[arg(long, value_name = "NAME")]
        by: Option<String>,
    },
    /// Remove a stored shop default or unit override.
    Reset {
        /// Limit key, as `sumpbook limits` lists them.
        #[arg(value_name = "KEY")]
        key: String,
        /// Remove this unit's override (by tag); without it the shop default is removed.
        #[arg(long, value_name = "TAG")]
        unit: Option<String>,
        /// Who makes the change (kept in the edit history); default the login name.
        #[arg(long, value_name = "NAME")]
        by: Option<String>,
    },
}

/// `--at` of status and due: the end of the day given, or the instant given.
pub fn parse_at_end_of_day(s: &str) -> Result<DateTime<Utc>, Failure> {
    parse_when(s, NaiveTime::from_hms_opt(23, 59, 59))
}

fn parse_when(s: &str, day_time: Option<NaiveTime>) -> Result<DateTime<Utc>, Failure> {
    let s = s.trim();
    if let Ok(t) = DateTime::parse_from_rfc3339(s) {
        return Ok(t.with_timezone(&Utc));
    }
    match (NaiveDate::parse_from_str(s, "%Y-%m-%d"), day_time) {
        (Ok(d), Some(t)) => Ok(d.and_time(t).and_utc()),
        _ => Err(Failure::bad_input(format!(
            "`{s}` is not a date; expected YYYY-MM-DD or YYYY-MM-DDTHH:MM:SSZ"
        ))),
    }
}

fn json_out<T: serde::Serialize>(out: &mut dyn Write, v: &T) -> Result<(), Failure> {
    serde_json::to_writer_pretty(&mut *out, v)
        .map_err(|e| Failure::failed(format!("cannot write JSON: {e}")))?;
    writeln!(out)?;
    Ok(())
}

fn state_word(s: State) -> &'static str {
    // Distinct in text as well as meaning: capitals for act.
    match s {
        State::Steady => "steady",
        State::NotJudged => "not judged yet",
        State::Watch => "watch",
        State::Act => "ACT",
    }
}

fn dash() -> String {
    "—".into()
}

fn arrow(t: &Tile) -> &'static str {
    t.trend
        .as_ref()
        .map_or(" ", |t| figures::arrow(t.direction))
}

fn pad(s: &str, w: usize) -> String {
    let n = s.chars().count();
    if n >= w {
        format!("{s} ")
    } else {
        format!("{s}{}", " ".repeat(w - n))
    }
}

fn fleet_table(out: &mut dyn Write, f: &FleetStatus) -> Result<(), Failure> {
    let sys = f.unit_system;
    let when = if f.replay {
        format!("as it stood at {}", f.at.format("%Y-%m-%d %H:%M UTC"))
    } else {
        format!("now ({})", f.at.format("%Y-%m-%d %H:%M UTC"))
    };
    writeln!(out, "{} — {}", f.shop_name, when)?;
    writeln!(
        out,
        "{} units: {} act, {} watch, {} not judged yet, {} steady",
        f.units.len(),
        f.counts.act,
        f.counts.watch,
        f.counts.not_judged,
        f.counts.steady
    )?;
    writeln!(out)?;
    let cols: [(&str, usize); 11] = [
        ("UNIT", 10),
        ("MACHINE", 9),
        ("STATE", 16),
        ("LOST", 8),
        ("LEAK", 7),
        ("HEAT+", 9),
        ("KV40", 10),
        ("ISO 4406/TARGET", 19),
        ("WATER", 9),
        ("OIL LIFE", 9),
        ("NEXT DUE", 0),
    ];
    let header: String = cols
        .iter()
        .map(|(h, w)| if *w == 0 { h.to_string() } else { pad(h, *w) })
        .collect();
    writeln!(out, "{}", header.trim_end())?;
    for u in &f.units {
        let i = &u.health.indicators;
        let next = u
            .next_due
            .as_ref()
            .map(|w| {
                if w.days_overdue > 0 {
                    format!("{} {}d over", w.kind.label(), w.days_overdue)
                } else {
                    format!("{} {}", w.kind.label(), w.due)
                }
            })
            .unwrap_or_else(dash);
        let cells = [
            u.unit.clone(),
            u.machine.clone(),
            state_word(u.state).to_string(),
            i.lost_flow_pct
                .map(|v| format!("{v:.1}%"))
                .unwrap_or_else(dash),
            i.leak_conductance_ratio
                .map(|v| format!("{v:.2}×"))
                .unwrap_or_else(dash),
            i.heat_rise_drift_k
                .map(|v| figures::temp_diff(v, sys, true))
                .unwrap_or_else(dash),
            i.kv40_cst
                .map(|v| format!("{v:.1} cSt"))
                .unwrap_or_else(dash),
            match (&i.iso4406, &i.iso4406_target) {
                (Some(c), Some(t)) => format!("{c} / {t}"),
                (Some(c), None) => c.clone(),
                _ => dash(),
            },
            i.water_ppm
                .map(|v| format!("{v:.0} ppm"))
                .unwrap_or_else(dash),
            i.oil_life_used_pct
                .map(|v| format!("{v:.0}%"))
                .unwrap_or_else(dash),
            next,
        ];
        let line: String = cells
            .iter()
            .zip(cols.iter())
            .map(|(c, (_, w))| if *w == 0 { c.clone() } else { pad(c, *w) })
            .collect();
        writeln!(out, "{}", line.trim_end())?;
    }
    let flagged: Vec<&UnitStatus> = f
        .units
        .iter()
        .filter(|u| !u.health.flags.is_empty())
        .collect();
    if !flagged.is_empty() {
        writeln!(out)?;
        writeln!(out, "Flags")?;
        for u in flagged {
            for fl in &u.health.flags {
                flag_line(out, &u.unit, fl, sys)?;
            }
        }
    }
    let waiting: Vec<&UnitStatus> = f
        .units
        .iter()
        .filter(|u| u.health.not_judged.iter().any(|n| n.expected))
        .collect();
    if !waiting.is_empty() {
        writeln!(out)?;
        writeln!(
            out,
            "Not judged yet (? what is missing, and when it will be judged)"
        )?;
        for u in waiting {
            for n in u.health.not_judged.iter().filter(|n| n.expected) {
                not_judged_line(out, &u.unit, n)?;
            }
        }
    }
    let open: Vec<(&UnitStatus, &SuspectReading)> = f
        .units
        .iter()
        .flat_map(|u| {
            u.health
                .suspects
                .iter()
                .filter(|s| s.confirmed.is_none())
                .map(move |s| (u, s))
        })
        .collect();
    if !open.is_empty() {
        writeln!(out)?;
        writeln!(
            out,
            "Questioned readings, not confirmed (left out of baselines and flags; `sumpbook confirm` keeps one)"
        )?;
        for (u, s) in open {
            suspect_line(out, &u.unit, s)?;
        }
    }
    Ok(())
}

fn not_judged_line(out: &mut dyn Write, unit: &str, n: &NotJudged) -> Result<(), Failure> {
    writeln!(
        out,
        "  {}? {}: {} — {}",
        pad(unit, 10),
        n.label,
        n.missing,
        n.until
    )?;
    Ok(())
}

fn suspect_line(out: &mut dyn Write, unit: &str, s: &SuspectReading) -> Result<(), Failure> {
    let kind = match s.record {
        Record::Check => "check",
        Record::Sample => "sample",
    };
    let state = match &s.confirmed {
        None => "NOT CONFIRMED".to_string(),
        Some(c) => {
            let (by, at) = status::confirmed_by_text(c);
            format!("confirmed by {by} {}", at.format("%Y-%m-%d"))
        }
    };
    writeln!(
        out,
        "  {}{} {} {}: {}  [{state}]",
        pad(unit, 10),
        kind,
        s.at.format("%Y-%m-%dT%H:%M:%SZ"),
        s.field.label(),
        s.reason
    )?;
    Ok(())
}

fn flag_line(out: &mut dyn Write, unit: &str, f: &Flag, sys: UnitSystem) -> Result<(), Failure> {
    let seen = match &f.acknowledgement {
        Some(a) if f.acknowledged => {
            format!(
                "  [seen by {} {}{}]",
                a.by,
                a.at.format("%Y-%m-%d"),
                if a.note.is_empty() {
                    String::new()
                } else {
                    format!(": {}", a.note)
                }
            )
        }
        _ => String::new(),
    };
    writeln!(
        out,
        "  {}{}{}since {}  {}. {}{}",
        pad(unit, 10),
        pad(state_word(f.state), 7),
        pad(f.kind.as_str(), 17),
        f.since,
        figures::flag_figure(f, sys),
        f.message,
        seen
    )?;
    Ok(())
}

fn unit_page(out: &mut dyn Write, u: &UnitStatus, sys: UnitSystem) -> Result<(), Failure> {
    let h = &u.health;
    writeln!(
        out,
        "{} on {} ({}, {}) — {} at {}",
        u.unit,
        u.machine,
        u.machine_name,
        u.machine_kind,
        state_word(u.state),
        h.at.format("%Y-%m-%d %H:%M UTC")
    )?;
    if let Some(era) = h.eras.last() {
        writeln!(
            out,
            "Era since {} ({}); fluid {}",
            era.start.format("%Y-%m-%d"),
            era.started_by.as_str(),
            u.fluid.clone().unwrap_or_else(|| "not recorded".into())
        )?;
    } else {
        writeln!(out, "No checks recorded yet.")?;
    }
    if h.baseline.is_empty() {
        writeln!(out, "Baseline: not yet formed (absolute limits apply)")?;
    }
    for b in &h.baseline.values {
        let src = match &b.source {
            BaselineSource::Checks {
                check_ids,
                from,
                to,
            } => format!(
                "mean of {} checks {} – {}",
                check_ids.len(),
                from.format("%Y-%m-%d"),
                to.format("%Y-%m-%d")
            ),
            BaselineSource::Manual { by, at } => {
                format!("entered by {by} on {}", at.format("%Y-%m-%d"))
            }
        };
        writeln!(
            out,
            "Baseline {}: {src}",
            b.indicator.key().replace('_', " ")
        )?;
    }
    writeln!(out)?;
    writeln!(
        out,
        "{}{}{}{}TREND",
        pad("INDICATOR", 40),
        pad("NOW", 28),
        pad("BASELINE", 16),
        pad("STATE", 8)
    )?;
    for t in &h.tiles {
        let now = match (&t.text, t.value) {
            (Some(text), Some(v)) => format!("{text} ({})", figures::text(t.dim, v, sys)),
            (None, Some(v)) => figures::text(t.dim, v, sys),
            (Some(text), None) => text.clone(),
            (None, None) => dash(),
        };
        let base = t
            .baseline
            .map(|v| figures::text(t.dim, v, sys))
            .unwrap_or_else(dash);
        let trend = match &t.trend {
            Some(tr) => {
                let mut s = format!(
                    "{} {}/week",
                    arrow(t),
                    figures::change(t.dim, tr.slope_per_week, sys)
                );
                if let Some(f) = &tr.forecast {
                    s.push_str(&format!(
                        ", {} by {}",
                        f.state.as_str(),
                        f.date.format("%Y-%m-%d")
                    ));
                }
                s
            }
            None => String::new(),
        };
        writeln!(
            out,
            "{}{}{}{}{}",
            pad(&t.label, 40),
            pad(&now, 28),
            pad(&base, 16),
            pad(state_word(t.state), 8),
            trend
        )?;
    }
    writeln!(out)?;
    if h.flags.is_empty() {
        writeln!(out, "No flags.")?;
    } else {
        writeln!(out, "Flags")?;
        for f in &h.flags {
            flag_line(out, &u.unit, f, sys)?;
        }
    }
    if !h.not_judged.is_empty() {
        writeln!(out)?;
        writeln!(out, "Not judged yet")?;
        for n in &h.not_judged {
            not_judged_line(out, &u.unit, n)?;
        }
    }
    if !h.suspects.is_empty() {
        writeln!(out)?;
        writeln!(out, "Questioned readings")?;
        for s in &h.suspects {
            suspect_line(out, &u.unit, s)?;
        }
    }
    writeln!(out)?;
    writeln!(out, "Work")?;
    for w in &h.work {
        let when = if w.days_overdue > 0 {
            format!("{} days over", w.days_overdue)
        } else if w.days_overdue == 0 {
            "due today".into()
        } else {
            format!("in {} days", -w.days_overdue)
        };
        writeln!(
            out,
            "  {}due {}  {}  ({})",
            pad(w.kind.label(), 18),
            w.due,
            when,
            w.basis
        )?;
        if let Some(p) = &w.pulled_forward {
            writeln!(out, "  {}pulled forward: {p}", pad("", 18))?;
        }
    }
    if h.work.iter().any(|w| w.caution.is_some()) {
        writeln!(out, "  Safety: {CAUTION_SHORT}")?;
    }
    Ok(())
}

pub fn run_status(shop: &Shop, args: &StatusArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let at = args.at.as_deref().map(parse_at_end_of_day).transpose()?;
    match &args.unit {
        Some(tag) => {
            let u = status::unit_status_of(shop, tag, at)?;
            let sys = shop
                .store()
                .settings()
                .map(|s| s.unit_system)
                .unwrap_or_default();
            if args.json {
                json_out(out, &u.to_json_view(sys))
            } else {
                unit_page(out, &u, sys)
            }
        }
        None => {
            let f = status::fleet_status(shop, at)?;
            if args.json {
                json_out(out, &f.to_json_view())
            } else {
                fleet_table(out, &f)
            }
        }
    }
}

fn due_table(out: &mut dyn Write, d: &DueList) -> Result<(), Failure> {
    let scope = match d.within_days {
        Some(n) => format!("overdue and due within {n} days"),
        None => "all planned work".into(),
    };
    writeln!(out, "Work due at {} — {scope}", d.at.format("%Y-%m-%d"))?;
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
        let when = if i.days_overdue > 0 {
            format!("{} days over", i.days_overdue)
        } else if i.days_overdue == 0 {
            "today".into()
        } else {
            format!("in {} days", -i.days_overdue)
        };
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
    let at = args.at.as_deref().map(parse_at_end_of_day).transpose()?;
    let d = work::due_list_in(shop.store(), at, args.within)?;
    if args.json {
        json_out(out, &d)
    } else {
        due_table(out, &d)
    }
}

pub fn run_ack(shop: &Shop, args: &AckArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let kind: FlagKind = args.kind.parse().map_err(Failure::bad_input)?;
    let r = work::ack_in(
        shop.store(),
        &args.unit,
        kind,
        &args.by,
        &args.note,
        Utc::now(),
    )?;
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

pub fn run_log_event(shop: &Shop, args: &LogEventArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let kind: EventKind = args.kind.parse().map_err(Failure::bad_input)?;
    let at = args
        .at
        .as_deref()
        .map(|s| parse_when(s, NaiveTime::from_hms_opt(12, 0, 0)))
        .transpose()?;
    let volume = args
        .volume
        .as_deref()
        .map(|v| parse_volume(v).map_err(|e| Failure::bad_input(format!("--volume: {e}"))))
        .transpose()?;
    let input = EventInput {
        kind,
        at,
        volume,
        fluid: args.fluid.clone(),
        by: args.by.clone(),
        note: args.note.clone(),
    };
    let r = work::log_event_in(shop.store(), &args.unit, &input, Utc::now())?;
    if args.json {
        return json_out(out, &r);
    }
    let sys = shop
        .store()
        .settings()
        .map(|s| s.unit_system)
        .unwrap_or_default();
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
        r.event.done_at.format("%Y-%m-%d %H:%M UTC")
    )?;
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

fn limit_number(key: &str, text: &str, what: &str) -> Result<f64, Failure> {
    let t = text.trim();
    if let Ok(v) = t.parse::<f64>() {
        if v.is_finite() {
            return Ok(v);
        }
    }
    // Temperature keys are in °C; they also take a temperature with its unit (140F).
    if key.ends_with("_c") {
        if let Ok(q) = parse_temperature(t) {
            return Ok(q.c());
        }
    }
    Err(Failure::bad_input(format!("{what} `{t}` is not a number")))
}

/// A limit as typed: no trailing zeros (`1.30` → `1.3`).
fn plain(v: f64) -> String {
    let s = format!("{v:.4}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".into()
    } else {
        s.to_string()
    }
}

fn limits_table(out: &mut dyn Write, scope: &str, rows: &[LimitRow]) -> Result<(), Failure> {
    writeln!(out, "Limits in force for {scope} (built-in defaults are common practice; override with `limits set`)")?;
    writeln!(
        out,
        "{}{}{}{}{}{}RANGE",
        pad("KEY", 27),
        pad("", 3),
        pad("WATCH", 10),
        pad("ACT", 10),
        pad("UNIT", 15),
        pad("FROM", 16)
    )?;
    for r in rows {
        let v = |x: Option<f64>| x.map(plain).unwrap_or_else(dash);
        let from = if r.shape == "value" {
            format!("{:?}", r.act_origin).to_lowercase()
        } else {
            format!("{:?}/{:?}", r.watch_origin, r.act_origin).to_lowercase()
        };
        writeln!(
            out,
            "{}{}{}{}{}{}{}",
            pad(&r.key, 27),
            pad(r.compare.as_deref().unwrap_or("="), 3),
            pad(
                &if r.shape == "value" {
                    String::new()
                } else {
                    v(r.watch)
                },
                10
            ),
            pad(&v(r.act), 10),
            pad(&r.unit, 15),
            pad(&from, 16),
            r.range
        )?;
    }
    Ok(())
}

fn who(by: &Option<String>) -> String {
    by.clone()
        .filter(|b| !b.trim().is_empty())
        .or_else(|| {
            std::env::var("USER")
                .ok()
                .or_else(|| std::env::var("USERNAME").ok())
        })
        .unwrap_or_else(|| "command line".into())
}

pub fn run_limits(shop: &Shop, args: &LimitsArgs, out: &mut dyn Write) -> Result<(), Failure> {
    match &args.action {
        None => {
            let v = work::limits_in(shop.store(), args.unit.as_deref())?;
            if args.json {
                return json_out(out, &v);
            }
            let scope = v
                .unit
                .as_ref()
                .map(|u| format!("unit {u}"))
                .unwrap_or_else(|| "the shop".into());
            limits_table(out, &scope, &v.rows)
        }
        Some(LimitsAction::Set {
            key,
            watch,
            act,
            value,
            unit,
            by,
        }) => {
            let watch = watch
                .as_deref()
                .map(|w| limit_number(key, w, "--watch"))
                .transpose()?;
            let act = act
                .as_deref()
                .or(value.as_deref())
                .map(|a| limit_number(key, a, "--act"))
                .transpose()?;
            let r = work::set_limit_in(shop.store(), key, watch, act, unit.as_deref(), &who(by))?;
            if args.json {
                return json_out(out, &r);
            }
            let scope = unit
                .as_ref()
                .map(|u| format!("unit {u}"))
                .unwrap_or_else(|| "the shop".into());
            limits_table(out, &scope, std::slice::from_ref(&r))
        }
        Some(LimitsAction::Reset { key, unit, by }) => {
            let removed = work::reset_limit_in(shop.store(), key, unit.as_deref(), &who(by))?;
            let scope = unit
                .as_ref()
                .map(|u| format!("unit {u}"))
                .unwrap_or_else(|| "the shop".into());
            if removed {
                writeln!(
                    out,
                    "Removed the stored {key} for {scope}; the default applies again."
                )?;
            } else {
                writeln!(out, "No stored {key} for {scope}; nothing changed.")?;
            }
            Ok(())
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dates_for_at() {
        assert_eq!(
            parse_at_end_of_day("2024-03-04").unwrap().to_rfc3339(),
            "2024-03-04T23:59:59+00:00"
        );
        assert_eq!(
            parse_at_end_of_day("2024-03-04T08:00:00Z")
                .unwrap()
                .to_rfc3339(),
            "2024-03-04T08:00:00+00:00"
        );
        assert!(parse_at_end_of_day("03/04/2024").is_err());
        assert_eq!(parse_at_end_of_day("nonsense").unwrap_err().code, 2);
    }

    #[test]
    fn limit_numbers_take_temperatures_for_celsius_keys() {
        assert_eq!(limit_number("water_ppm", "250", "--watch").unwrap(), 250.0);
        // 140 °F = (140 − 32)/1.8 = 60 °C (definition of the Fahrenheit scale).
        assert!((limit_number("reservoir_temp_c", "140F", "--watch").unwrap() - 60.0).abs() < 1e-9);
        assert!(limit_number("water_ppm", "140F", "--watch").is_err());
    }
}

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
    let r = work::set_baseline_in(
        shop.store(),
        &args.unit,
        &args.indicator,
        &args.value,
        &args.spread,
        &args.by,
        Utc::now(),
    )?;
    if args.json {
        return json_out(out, &r);
    }
    writeln!(
        out,
        "Baseline {} of {} for the era since {} entered by {}; `sumpbook status --unit {}` now measures against it.",
        r.indicator,
        r.unit,
        r.era_start.format("%Y-%m-%d"),
        r.by,
        r.unit
    )?;
    Ok(())
}
