//! The report's indicator table of one unit: `app::view`'s tiles with the change over the
//! report's period and the questioned and corrected marks. It must not read the shop, evaluate, or word a
//! value, baseline or limit of its own.

use super::*;

use chrono::{DateTime, NaiveDate, Utc};

use crate::app::figures;
use crate::app::status::UnitStatus;
use crate::app::view;
use crate::health::State;
use crate::report::{IndicatorRow, StateText};
use crate::units::UnitSystem;

pub(super) fn indicator_rows(
    u: &UnitStatus,
    edits: &crate::app::edit_trail::UnitEdits,
    (from, to): (NaiveDate, NaiveDate),
    sys: UnitSystem,
    zone: Zone,
) -> Vec<IndicatorRow> {
    u.health
        .tiles
        .iter()
        .filter(|t| t.value.is_some() || t.text.is_some() || t.state == State::NotJudged)
        .map(|t| {
            let v = view::tile_view(t, u, sys, zone);
            let mut latest = if v.has_value {
                v.value
            } else {
                format!("— {}", v.trend)
            };
            if let Some(q) = questioned_mark(u, &t.key) {
                latest.push_str(&format!(" ({q})"));
            }
            if let Some(c) = corrected_mark(u, edits, &t.key) {
                latest.push_str(&format!(" ({c})"));
            }
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
            // The change over the report's period: the last value in it minus the first.
            let mut change = match (points.first(), points.last()) {
                (Some(a), Some(b)) if points.len() > 1 => figures::change(t.dim, b.1 - a.1, sys),
                _ => "—".into(),
            };
            if !v.arrow.is_empty() {
                change.push_str(&format!(" {}", v.arrow));
            }
            IndicatorRow {
                name: v.label,
                state: StateText {
                    mark: mark_of(v.mark),
                    word: v.state_word.to_string(),
                },
                latest,
                baseline: v.baseline,
                limits: v.limits,
                change,
            }
        })
        .collect()
}
