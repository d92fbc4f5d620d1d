//! Unit page tiles: each indicator's value, limit, trend and state as a tile. It must not judge;
//! the state and figures come from `app`.

use crate::app::local_time::Zone;
use crate::app::vocab::{Dim, Direction};
use crate::app::vocab::{NotJudged, State, Tile};
use crate::gui::fmt::{dim_text, slope_text, state_num};
use crate::gui::ui::{TileData, TileRow};
use crate::gui::{model, s};
use crate::units::UnitSystem;

fn limit_text(t: &Tile, sys: UnitSystem) -> String {
    let f = |v: &Vec<f64>| {
        v.iter()
            .map(|x| dim_text(t.dim, *x, sys))
            .collect::<Vec<_>>()
            .join(" / ")
    };
    match (t.watch.is_empty(), t.act.is_empty()) {
        (true, true) => "—".into(),
        (false, true) => format!("watch {}", f(&t.watch)),
        (true, false) => format!("act {}", f(&t.act)),
        (false, false) => format!("watch {} · act {}", f(&t.watch), f(&t.act)),
    }
}

fn tile(t: &Tile, sys: UnitSystem, not_judged: &[NotJudged], zone: Zone) -> TileData {
    let waiting = not_judged.iter().find(|n| n.key == t.key);
    let (value, small) = match (&t.text, t.value) {
        (Some(text), _) => (text.clone(), text.chars().count() > 10),
        (None, Some(v)) => (dim_text(t.dim, v, sys), false),
        (None, None) if t.state == State::NotJudged => ("not judged yet".into(), true),
        (None, None) => ("no data".into(), true),
    };
    let baseline = match (t.baseline, t.baseline_spread) {
        (Some(b), Some(sp)) if sp > 0.0 => {
            let spread_dim = if t.dim == Dim::Temperature {
                Dim::TempDiff
            } else {
                t.dim
            };
            format!(
                "{} ± {}",
                dim_text(t.dim, b, sys),
                dim_text(spread_dim, sp, sys)
            )
        }
        (Some(b), _) => dim_text(t.dim, b, sys),
        (None, _) => "—".into(),
    };
    let (arrow, trend) = match &t.trend {
        None if t.state == State::NotJudged => (
            String::new(),
            waiting
                .map(|n| format!("judged {}", n.until))
                .unwrap_or_else(|| "not judged yet".to_string()),
        ),
        None => (String::new(), "trend: too few points".to_string()),
        Some(tr) => {
            let (arrow, word) = match tr.direction {
                Direction::Rising => ("▲", "rising"),
                Direction::Falling => ("▼", "falling"),
                Direction::Flat => ("▶", "flat"),
            };
            let mut text = format!("{word} {}", slope_text(t.dim, tr.slope_per_week, sys));
            if let Some(f) = &tr.forecast {
                text = format!(
                    "{text}; {} ~{}",
                    if f.state == State::Act {
                        "act"
                    } else {
                        "watch"
                    },
                    crate::gui::fmt::date(f.date, zone)
                );
            }
            (arrow.to_string(), text)
        }
    };
    TileData {
        label: s(&t.label),
        value: s(value),
        baseline: s(baseline),
        limit: s(limit_text(t, sys)),
        state: state_num(t.state),
        arrow: s(arrow),
        trend: s(trend),
        small,
    }
}

pub(super) fn tile_rows(
    tiles: &[Tile],
    sys: UnitSystem,
    not_judged: &[NotJudged],
    zone: Zone,
) -> Vec<TileRow> {
    // Three to a row; the last row is padded with blank tiles so all tiles are one width.
    tiles
        .chunks(3)
        .map(|c| {
            let mut row: Vec<TileData> = c.iter().map(|t| tile(t, sys, not_judged, zone)).collect();
            row.resize(3, TileData::default());
            TileRow { tiles: model(row) }
        })
        .collect()
}
