//! The report's fleet page rows: each unit's state, key figures, leading tile and findings. It
//! must not read the shop or evaluate.

use super::*;

use crate::app::figures;
use crate::app::status::UnitStatus;
use crate::health::indicators::Tile;
use crate::health::{Flag, State};
use crate::report::{Finding, FleetRow};
use crate::units::{TempDiff, UnitSystem};

pub(super) fn finding(tag: &str, f: &Flag, sys: UnitSystem, zone: Zone) -> Finding {
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
            format!("{} {}{note}", a.by, zone.show_date(a.at))
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
            UnitSystem::Us => (TempDiff(v).f_steps(), "°F"),
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

pub(super) fn fleet_row(u: &UnitStatus, sys: UnitSystem, zone: Zone) -> FleetRow {
    let trend = match leading_tile(u).and_then(|t| t.trend.as_ref().map(|tr| (t, tr))) {
        Some((t, tr)) => {
            let mut s = format!("{}: {}", short_label(t), arrow(tr.direction));
            if let Some(f) = &tr.forecast {
                s.push_str(&format!(
                    ", {} by about {}",
                    f.state.as_str(),
                    zone.show_date(f.date)
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
            let board = crate::app::status::board_figures(u, sys);
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
