//! The report's page of one unit: pump, stroke, fluid and baseline texts and the section that
//! holds them. It must not read the shop or evaluate.

use super::*;

use chrono::NaiveDate;

use crate::app::status::UnitStatus;
use crate::health::indicators::Dim;
use crate::health::{BaselineIndicator, BaselineSource, State};
use crate::model::{Fluid, Machine, StrokeDirection, Unit};
use crate::quantity::{format, Quantity};
use crate::report::{UnitSection, WorkItem};
use crate::units::{Length, Pressure, UnitSystem, Volume};

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

fn baseline_text(u: &UnitStatus, sys: UnitSystem, zone: Zone) -> String {
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
                    zone.show_date(*from),
                    zone.show_date(*to)
                )
            }
            BaselineSource::Manual { by, at } => {
                format!("entered by {by} on {}", zone.show_date(*at))
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
                crate::app::view::plus_minus(dim, v.value, v.spread, sys)
            ));
        }
    }
    if let Some(t) = b.closed_at {
        sources.push(format!(
            "closed at the step in flow and heat of {}",
            t.format("%Y-%m-%d")
        ));
    }
    format!("{}; {}", values.join(", "), sources.join("; "))
}

#[allow(clippy::too_many_arguments)]
pub(super) fn unit_section(
    u: &UnitStatus,
    unit: Option<&Unit>,
    machine: Option<&Machine>,
    events: &[crate::model::Event],
    edits: &crate::app::edit_trail::UnitEdits,
    (from, to): (NaiveDate, NaiveDate),
    sys: UnitSystem,
    zone: Zone,
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
            zone.show_date(era.start),
            era.started_by.as_str()
        );
        if let Some(p) = u.health.indicators.oil_life_used_pct {
            text.push_str(&format!("; oil life used {p:.0}%"));
        }
        fluid.push(("Era since".into(), text));
    }
    if let Some(c) = &u.waiting_cost {
        fluid.push(("Cost of waiting".into(), c.short_text()));
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
        baseline: match baseline_corrected(u, edits) {
            Some(c) => format!("{}; {c}", baseline_text(u, sys, zone)),
            None => baseline_text(u, sys, zone),
        },
        indicators: indicator_rows(u, edits, (from, to), sys, zone),
        corrections: period_corrections(edits, (from, to), zone),
        // Filled by the caller, which reads what was recorded beside the events.
        work_done: Vec::new(),
        charts: charts(u, events, (from, to), sys, zone),
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
            .chain(questioned_remarks(u, zone))
            .collect(),
        flags: u
            .health
            .flags
            .iter()
            .map(|f| finding(&u.unit, f, sys, zone))
            .collect(),
        work: u
            .health
            .work
            .iter()
            .map(|w| WorkItem {
                unit_tag: u.unit.clone(),
                task: w.kind.label().to_string(),
                due: w.due.to_string(),
                status: crate::app::view::due_words_why(
                    w.days_overdue,
                    w.pulled_forward.as_deref(),
                ),
                mark: (w.state > State::Steady).then(|| mark(w.state)),
            })
            .collect(),
    }
}

/// The work done on a unit in the period, oldest first: when, what, the fluid and volume put
/// in and what was recorded beside the event (hour meter, filter part, work order), who, the
/// note. `details` by event id, `fluids` the shop's.
pub(super) fn period_work_done(
    events: &[crate::model::Event],
    details: &[(crate::model::Id, crate::model::EventDetails)],
    fluids: &[Fluid],
    (from, to): (NaiveDate, NaiveDate),
    sys: UnitSystem,
    zone: Zone,
) -> Vec<crate::report::WorkDone> {
    let (start, end) = (zone.day_start(from), zone.day_end(to));
    events
        .iter()
        .filter(|e| e.done_at >= start && e.done_at <= end)
        .map(|e| {
            let mut recorded = Vec::new();
            let fluid = e
                .fluid_id
                .and_then(|id| fluids.iter().find(|f| f.id == id))
                .map(|f| f.name.clone());
            let put_in = [e.volume.map(|v| format(Quantity::Volume(v), sys)), fluid]
                .into_iter()
                .flatten()
                .collect::<Vec<_>>()
                .join(" ");
            if !put_in.is_empty() {
                recorded.push(put_in);
            }
            if let Some((_, d)) = details.iter().find(|(id, _)| *id == e.id) {
                let words = crate::app::work::details_words(d);
                if !words.is_empty() {
                    recorded.push(words);
                }
            }
            crate::report::WorkDone {
                when: zone.show(e.done_at),
                what: e.kind.as_str().replace('_', " "),
                recorded: recorded.join(" · "),
                by: e.by.clone(),
                note: e.note.clone(),
            }
        })
        .collect()
}
