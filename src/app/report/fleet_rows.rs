//! The report's fleet page rows and findings: `app::view`'s fleet lines and flag views in the
//! page engine's form, with the leading tile's trend. It must not read the shop, evaluate, or
//! word a figure of its own.

use super::*;

use crate::app::local_time::Zone;
use crate::app::status::UnitStatus;
use crate::app::view::{self, arrow, trend_word};
use crate::health::indicators::Tile;
use crate::health::{Flag, State};
use crate::report::{Finding, FleetRow, StateText};
use crate::units::UnitSystem;

pub(super) fn finding(tag: &str, f: &Flag, sys: UnitSystem, zone: Zone) -> Finding {
    let v = view::flag_view(f, sys, zone);
    Finding {
        unit_tag: tag.to_string(),
        state: StateText {
            mark: mark_of(v.mark),
            word: v.state_word.to_string(),
        },
        what: v.what,
        amount: v.figure,
        since: v.since.to_string(),
        next_step: v.next_step,
        acknowledged: v.seen,
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
    let line = view::fleet_line(u, sys);
    let trend = match leading_tile(u).and_then(|t| t.trend.as_ref().map(|tr| (t, tr))) {
        Some((t, tr)) => {
            let mut s = format!(
                "{}: {} {}",
                short_label(t),
                trend_word(tr.direction),
                arrow(tr.direction)
            );
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
        tag: line.tag.clone(),
        name: [line.machine.as_str(), line.machine_name.as_str()]
            .iter()
            .filter(|s| !s.is_empty())
            .copied()
            .collect::<Vec<_>>()
            .join(" · "),
        state: StateText {
            mark: mark_of(line.mark),
            word: line.state_word.to_string(),
        },
        // A flagged or not-judged unit reads first as on the fleet board, then by its key
        // figures, as in `sumpbook status`.
        figures: line.figures,
        trend,
        oil_life: line
            .key
            .oil_life
            .map(|f| f.cell)
            .unwrap_or_else(|| "—".into()),
        next_due: line
            .next_due
            .map(|d| format!("{} ({})", d.text, d.due))
            .unwrap_or_else(|| "—".into()),
    }
}
