//! `sumpbook status`: the fleet table and one unit's page (tiles, flags, questioned readings,
//! baseline and work) in the shop's unit system, or their JSON. No rules here; `app::status`
//! evaluates.

use super::*;
use std::io::Write;

use clap::Args;

use crate::app::local_time::Zone;
use crate::app::shop::Shop;
use crate::app::status::{self, FleetStatus, UnitStatus};
use crate::app::view;
use crate::app::vocab::Record;
use crate::app::vocab::CAUTION_SHORT;
use crate::app::vocab::{BaselineSource, Flag, NotJudged, SuspectReading};
use crate::cli::Failure;
use crate::units::UnitSystem;

#[derive(Args, Debug, Clone, PartialEq)]
pub struct StatusArgs {
    /// Only this unit (by tag), with its tiles, baseline and work.
    #[arg(long, value_name = "TAG")]
    pub unit: Option<String>,
    /// Print JSON instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Evaluate the shop as it stood at the end of this date in the shop's time zone
    /// (YYYY-MM-DD), or at a time (YYYY-MM-DD HH:MM there, or with Z or an offset): only what
    /// was recorded by then is used.
    #[arg(long, value_name = "DATE")]
    pub at: Option<String>,
}

fn fleet_table(out: &mut dyn Write, f: &FleetStatus, zone: Zone) -> Result<(), Failure> {
    let sys = f.unit_system;
    let when = if f.replay {
        format!("as it stood at {}", zone.show_marked(f.at))
    } else {
        format!("now ({})", zone.show_marked(f.at))
    };
    writeln!(out, "{} — {}", f.shop_name, when)?;
    writeln!(out, "{}", view::counts_line(f.units.len(), &f.counts))?;
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
    // The cells the board shows (`view::key_figures`, `view::due_view`), written into one
    // line kept between units: the table is most of what a status with everything kept does.
    let mut line = String::new();
    for u in &f.units {
        let k = view::key_figures(u, sys);
        let due = u.next_due.as_ref().map(|w| view::due_view(w).text);
        fn cell(f: &Option<view::KeyFigure>) -> Option<&str> {
            f.as_ref().map(|f| f.cell.as_str())
        }
        let cells = [
            Some(u.unit.as_str()),
            Some(u.machine.as_str()),
            Some(state_word(u.state)),
            cell(&k.lost_flow),
            cell(&k.leak),
            cell(&k.heat_rise),
            cell(&k.kv40),
            cell(&k.iso4406),
            cell(&k.water),
            cell(&k.oil_life),
            due.as_deref(),
        ];
        line.clear();
        for (c, (_, w)) in cells.iter().zip(cols.iter()) {
            let c = c.unwrap_or(DASH);
            if *w == 0 {
                line.push_str(c);
            } else {
                push_pad(&mut line, c, *w);
            }
        }
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
                flag_line(out, &u.unit, fl, sys, zone)?;
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
            "Questioned readings, not confirmed (left out of baselines and detectors; `sumpbook confirm` keeps one)"
        )?;
        for (u, s) in open {
            suspect_line(out, &u.unit, s, zone)?;
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

fn suspect_line(
    out: &mut dyn Write,
    unit: &str,
    s: &SuspectReading,
    zone: Zone,
) -> Result<(), Failure> {
    let kind = match s.record {
        Record::Check => "check",
        Record::Sample => "sample",
    };
    let state = match &s.confirmed {
        None => "NOT CONFIRMED".to_string(),
        Some(c) => {
            let (by, at) = status::confirmed_by_text(c);
            format!("confirmed by {by} {}", zone.show_date(at))
        }
    };
    writeln!(
        out,
        "  {}{} {} {}: {}  [{state}]",
        pad(unit, 10),
        kind,
        zone.show_exact(s.at),
        s.field.label(),
        s.reason
    )?;
    Ok(())
}

fn flag_line(
    out: &mut dyn Write,
    unit: &str,
    f: &Flag,
    sys: UnitSystem,
    zone: Zone,
) -> Result<(), Failure> {
    // The parts of `view::flag_view` this line shows, without copying the rest.
    let seen = view::seen_text(f, zone)
        .map(|s| format!("  [{s}]"))
        .unwrap_or_default();
    writeln!(
        out,
        "  {}{}{}since {}  {}. {}{}",
        pad(unit, 10),
        pad(state_word(f.state), 7),
        pad(f.kind.as_str(), 17),
        f.since,
        crate::app::figures::flag_figure(f, sys),
        f.message,
        seen
    )?;
    Ok(())
}

fn unit_page(
    out: &mut dyn Write,
    u: &UnitStatus,
    sys: UnitSystem,
    zone: Zone,
) -> Result<(), Failure> {
    let h = &u.health;
    writeln!(
        out,
        "{} on {} ({}, {}) — {} at {}",
        u.unit,
        u.machine,
        u.machine_name,
        u.machine_kind,
        state_word(u.state),
        zone.show_marked(h.at)
    )?;
    if let Some(era) = h.eras.last() {
        writeln!(
            out,
            "Era since {} ({}); fluid {}",
            zone.show_date(era.start),
            era.started_by.as_str(),
            u.fluid.clone().unwrap_or_else(|| "not recorded".into())
        )?;
    } else {
        writeln!(out, "No checks recorded yet.")?;
    }
    if h.baseline.is_empty() {
        writeln!(out, "Baseline: not yet formed (absolute limits apply)")?;
    }
    if let Some(c) = &u.waiting_cost {
        writeln!(out, "Cost of waiting: {}", c.text(sys))?;
    }
    for b in &h.baseline.values {
        let src = match &b.source {
            BaselineSource::Checks {
                check_ids,
                from,
                to,
            } => format!(
                "median of {} checks {} – {}",
                check_ids.len(),
                zone.show_date(*from),
                zone.show_date(*to)
            ),
            BaselineSource::Manual { by, at } => {
                format!("entered by {by} on {}", zone.show_date(*at))
            }
        };
        writeln!(
            out,
            "Baseline {}: {src}",
            b.indicator.key().replace('_', " ")
        )?;
    }
    if let Some(t) = h.baseline.closed_at {
        writeln!(
            out,
            "Baseline closed at the step in flow and heat of {}: later checks are judged against it, not taken into it",
            t.format("%Y-%m-%d")
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
    for t in view::unit_tiles(u, sys, zone) {
        let trend = if t.arrow.is_empty() {
            t.trend
        } else {
            format!("{} {}", t.arrow, t.trend)
        };
        writeln!(
            out,
            "{}{}{}{}{}",
            pad(&t.label, 40),
            pad(&t.value, 28),
            pad(&t.baseline, 16),
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
            flag_line(out, &u.unit, f, sys, zone)?;
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
            suspect_line(out, &u.unit, s, zone)?;
        }
    }
    writeln!(out)?;
    writeln!(out, "Work")?;
    for w in &h.work {
        let when = crate::app::view::due_words(w.days_overdue);
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
    let at = args
        .at
        .as_deref()
        .map(|s| parse_at_end_of_day(s, shop.zone()))
        .transpose()?;
    match &args.unit {
        Some(tag) => {
            let u = status::unit_status_of(shop, tag, at)?;
            let sys = shop.unit_system();
            if args.json {
                json_out(out, &u.to_json_view(sys))
            } else {
                unit_page(out, &u, sys, shop.zone())
            }
        }
        None => {
            let f = status::fleet_status(shop, at)?;
            if args.json {
                json_out(out, &f.to_json_view())
            } else {
                fleet_table(out, &f, shop.zone())
            }
        }
    }
}
