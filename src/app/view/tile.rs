//! A unit's indicator tiles as every face shows them (the unit page's tiles, `status --unit`'s
//! table, the report's indicator table): the value, the baseline with its spread, the limits
//! with the unit written once, the trend in words and its arrow. Nothing here judges; the
//! tiles come from the engine through `app::status`.

use super::words::{arrow, state_mark, state_word, trend_word, StateMark};
use crate::app::figures;
use crate::app::local_time::Zone;
use crate::app::status::UnitStatus;
use crate::health::indicators::{Dim, Tile};
use crate::health::State;
use crate::units::UnitSystem;

/// One tile, display-ready.
#[derive(Clone, Debug, PartialEq)]
pub struct TileView {
    /// The indicator: `lost_flow`, `effective_flow`, `heat_rise`, …
    pub key: String,
    pub label: String,
    pub state: State,
    pub state_word: &'static str,
    pub mark: StateMark,
    /// The latest value with its unit, or `not judged yet` / `no data`.
    pub value: String,
    /// Whether `value` is a figure (not a placeholder).
    pub has_value: bool,
    /// `40.0 ± 0.8 L/min`, `46.0 cSt new oil`, `target 17/15/12`, or `—`.
    pub baseline: String,
    /// `60.0 / 70.0 °C` (watch / act, [`LIMITS_HEAD`]), `43.7–48.3 / 41.4–50.6 cSt`, or `—`.
    pub limits: String,
    /// The trend's arrow, empty without a trend.
    pub arrow: &'static str,
    /// `rising +0.20 L/min/week; act by about 2026-04-01`, `judged after 3 more checks`, …
    pub trend: String,
}

/// `value ± spread unit`, the unit written once: `104.6 ± 2.15 L/min`. The spread is a
/// difference (a temperature's spread is in K or °F steps).
pub fn plus_minus(dim: Dim, value: f64, spread: f64, sys: UnitSystem) -> String {
    let v = figures::text(dim, value, sys);
    let s = figures::change(dim, spread, sys);
    let s = s.trim_start_matches(['+', '±', '−']);
    match (v.split_once(' '), s.split_once(' ')) {
        (Some((vn, vu)), Some((sn, su))) if vu == su => format!("{vn} ± {sn} {vu}"),
        _ => format!("{v} ± {s}"),
    }
}

/// What the two figures of [`TileView::limits`] are.
pub const LIMITS_HEAD: &str = "watch / act";

/// Watch and act limits with the unit written once: `60.0 / 70.0 °C`, `43.7–48.3 /
/// 41.4–50.6 cSt` (two-sided), `— / 70.0 °C` (no watch limit); `—` without limits.
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

/// A tile of `u` in the shop's units.
pub fn tile_view(t: &Tile, u: &UnitStatus, sys: UnitSystem, zone: Zone) -> TileView {
    let (value, has_value) = match (&t.text, t.value) {
        (Some(text), Some(v)) if t.key == "cleanliness" => (
            format!("{text}, {} over target", figures::text(t.dim, v, sys)),
            true,
        ),
        (Some(text), Some(v)) => (format!("{text} ({})", figures::text(t.dim, v, sys)), true),
        (Some(text), None) => (text.clone(), true),
        (None, Some(v)) => (figures::text(t.dim, v, sys), true),
        (None, None) if t.state == State::NotJudged => ("not judged yet".into(), false),
        (None, None) => ("no data".into(), false),
    };
    let baseline = match (t.key.as_str(), t.baseline) {
        ("kv40", Some(b)) => format!("{} new oil", figures::text(t.dim, b, sys)),
        ("cleanliness", _) => u
            .health
            .indicators
            .iso4406_target
            .as_ref()
            .map(|c| format!("target {c}"))
            .unwrap_or_else(|| "—".into()),
        // Lost flow and the acid number's rise are measured from the baseline already.
        ("lost_flow" | "acid_rise", _) => "—".into(),
        (_, Some(b)) => match t.baseline_spread.filter(|s| *s > 0.0) {
            Some(s) => plus_minus(t.dim, b, s, sys),
            None => figures::text(t.dim, b, sys),
        },
        (_, None) => "—".into(),
    };
    let (arrow, trend) = match &t.trend {
        None if t.state == State::NotJudged => (
            "",
            u.health
                .not_judged
                .iter()
                .find(|n| n.key == t.key)
                .map(|n| format!("judged {}", n.until))
                .unwrap_or_else(|| "not judged yet".to_string()),
        ),
        None => ("", "too few points for a trend".to_string()),
        Some(tr) => {
            let mut text = format!(
                "{} {}/week",
                trend_word(tr.direction),
                figures::change(t.dim, tr.slope_per_week, sys)
            );
            if let Some(f) = &tr.forecast {
                text.push_str(&format!(
                    "; {} by about {}",
                    f.state.as_str(),
                    zone.show_date(f.date)
                ));
            }
            (arrow(tr.direction), text)
        }
    };
    TileView {
        key: t.key.clone(),
        label: t.label.clone(),
        state: t.state,
        state_word: state_word(t.state),
        mark: state_mark(t.state),
        value,
        has_value,
        baseline,
        limits: limits_text(t, sys),
        arrow,
        trend,
    }
}

/// Every tile of `u`, in the engine's order.
pub fn unit_tiles(u: &UnitStatus, sys: UnitSystem, zone: Zone) -> Vec<TileView> {
    u.health
        .tiles
        .iter()
        .map(|t| tile_view(t, u, sys, zone))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_spread_is_a_difference_and_the_unit_is_written_once() {
        // 40 °C ± 1 K reads 104.0 ± 1.8 °F: t_F = t_C × 9/5 + 32, a step of 1 K is 9/5 °F
        // (NIST SP 811 definitions).
        let t = crate::units::Temperature::from_c(40.0).0;
        assert_eq!(
            plus_minus(Dim::Temperature, t, 1.0, UnitSystem::Us),
            "104.0 ± 1.8 °F"
        );
        assert_eq!(
            plus_minus(Dim::Temperature, t, 1.0, UnitSystem::Metric),
            "40.0 °C ± 1.0 K"
        );
    }
}
