//! The report's indicator table of one unit: each tile's value, baseline, limits and trend in
//! the shop's units. It must not read the shop or evaluate.

use super::*;

use chrono::{DateTime, NaiveDate, Utc};

use crate::app::figures;
use crate::app::status::UnitStatus;
use crate::health::indicators::Tile;
use crate::health::State;
use crate::report::IndicatorRow;
use crate::units::UnitSystem;

pub(super) fn indicator_rows(
    u: &UnitStatus,
    (from, to): (NaiveDate, NaiveDate),
    sys: UnitSystem,
    zone: Zone,
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
                        .filter(|p| in_period(p.at, from, to, zone))
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
