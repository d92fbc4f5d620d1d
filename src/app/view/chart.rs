//! Chart specifications of a unit, for the unit page's charts and the report's alike: the
//! series in the display unit, the one baseline band (baseline ± 2 spreads, the spread being
//! the engine's robust standard deviation), the limit lines with their labels and the event
//! marks. Nothing here reads the shop or draws; `gui::charts` and `report::charts` draw these.

use chrono::{DateTime, Utc};

use crate::app::figures;
use crate::app::status::UnitStatus;
use crate::health::indicators::{Dim, Series};
use crate::health::State;
use crate::model::{Event, EventKind};
use crate::units::UnitSystem;

/// How many spreads either side of the baseline the band spans: ±2σ holds about 95 % of
/// readings of a steady unit (normal distribution, from memory), so a point outside it is
/// worth a look though not yet a flag.
pub const BAND_SPREADS: f64 = 2.0;

/// One line of readings: times and values in the display unit.
#[derive(Clone, Debug, PartialEq)]
pub struct SeriesSpec {
    pub label: String,
    pub points: Vec<(DateTime<Utc>, f64)>,
}

/// The band a steady unit stays in, in the display unit.
#[derive(Clone, Debug, PartialEq)]
pub struct BandSpec {
    pub low: f64,
    pub high: f64,
    /// The baseline (or new-oil value) itself.
    pub centre: Option<f64>,
    pub label: String,
}

/// A horizontal line: a watch or act limit, or a target (`level` `None`).
#[derive(Clone, Debug, PartialEq)]
pub struct LimitSpec {
    pub value: f64,
    pub level: Option<State>,
    /// `watch 36.8`, `act 34`, `target ≥4 µm(c) 17`.
    pub label: String,
}

/// A maintenance event marked on the time axis.
#[derive(Clone, Debug, PartialEq)]
pub struct EventSpec {
    pub at: DateTime<Utc>,
    /// Two letters: `FC` fluid change, `FL` filter change, `RB`, `RP`, `CC`.
    pub code: &'static str,
    pub what: &'static str,
}

/// Everything one chart shows.
#[derive(Clone, Debug, PartialEq)]
pub struct ChartSpec {
    /// The indicator: `effective_flow`, `lost_flow`, `heat_rise`, `kv40`, `cleanliness`, or
    /// `iso4406` (the code by size).
    pub key: &'static str,
    pub title: String,
    /// The y axis's unit.
    pub unit: String,
    pub series: Vec<SeriesSpec>,
    pub band: Option<BandSpec>,
    pub limits: Vec<LimitSpec>,
    pub events: Vec<EventSpec>,
    /// Shown when there is nothing to draw.
    pub empty_note: String,
    /// The latest reading against the act limit (`latest 36.4 L/min, act at 30.0 L/min`), or
    /// the empty note.
    pub note: String,
}

/// The stretch of time the charts cover: the era in force on the unit page, the report's
/// period on paper.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Window<'a> {
    pub from: Option<DateTime<Utc>>,
    pub to: Option<DateTime<Utc>>,
    /// `era`, `period`: as the empty notes say it.
    pub name: &'a str,
}

impl Window<'_> {
    fn holds(&self, t: DateTime<Utc>) -> bool {
        self.from.is_none_or(|f| t >= f) && self.to.is_none_or(|e| t <= e)
    }
}

/// The code and words of an event kind worth marking on a chart; top-ups and notes are too
/// many to mark (they are in the unit's history).
pub fn event_code(kind: EventKind) -> Option<(&'static str, &'static str)> {
    match kind {
        EventKind::FluidChange => Some(("FC", "fluid change")),
        EventKind::FilterChange => Some(("FL", "filter change")),
        EventKind::Rebuild => Some(("RB", "rebuild")),
        EventKind::Repair => Some(("RP", "repair")),
        EventKind::CoolerClean => Some(("CC", "cooler clean")),
        EventKind::TopUp | EventKind::Note => None,
    }
}

/// The unit a chart's axis is in.
pub fn chart_unit(dim: Dim, sys: UnitSystem) -> String {
    match dim {
        Dim::Ratio => "× baseline".into(),
        Dim::RangeNumber => "ISO 4406 scale number".into(),
        _ => figures::unit(dim, sys).to_string(),
    }
}

/// The baseline band of a series: baseline ± `BAND_SPREADS` spreads, in the display unit.
fn band(s: &Series, label: &str, sys: UnitSystem) -> Option<BandSpec> {
    let b = s.baseline?;
    let spread = s.baseline_spread.unwrap_or(0.0).abs();
    let (lo, hi) = (
        figures::value(s.dim, b - BAND_SPREADS * spread, sys),
        figures::value(s.dim, b + BAND_SPREADS * spread, sys),
    );
    Some(BandSpec {
        low: lo.min(hi),
        high: lo.max(hi),
        centre: Some(figures::value(s.dim, b, sys)),
        label: label.into(),
    })
}

fn limits(s: &Series, sys: UnitSystem) -> Vec<LimitSpec> {
    let mut out = Vec::new();
    for (vals, level) in [(&s.watch, State::Watch), (&s.act, State::Act)] {
        for v in vals {
            let shown = figures::value(s.dim, *v, sys);
            out.push(LimitSpec {
                value: shown,
                level: Some(level),
                label: format!("{} {}", level.as_str(), figures::significant(shown, 3, 2)),
            });
        }
    }
    out
}

/// `latest 36.4 L/min, act at 30.0 L/min` (`latest` as `what` names the reading), or `empty`.
fn note(s: &Series, what: &str, empty: &str, sys: UnitSystem) -> String {
    match (s.points.last(), s.act.first()) {
        (Some(p), Some(a)) => format!(
            "{what} {}, act at {}",
            figures::text(s.dim, p.value, sys),
            figures::text(s.dim, *a, sys)
        ),
        (Some(p), None) => format!("{what} {}", figures::text(s.dim, p.value, sys)),
        _ => empty.to_string(),
    }
}

/// The effective-flow chart with the flow corrected to the baseline's oil and pressure beside
/// the timed one: the season and the job move the timed strokes, the corrected ones move only
/// with the pump. Where the lost flow is judged on the corrected flow (its series carries the
/// limits), the band, the limit lines and the note are the corrected flow's, so the chart
/// shows the figure the lost-flow flag was raised on.
fn with_corrected(
    chart: &mut ChartSpec,
    c: &Series,
    points: Vec<(DateTime<Utc>, f64)>,
    sys: UnitSystem,
) {
    if points.is_empty() {
        return;
    }
    chart.title = "Effective flow, timed and corrected to baseline oil".into();
    chart.series[0].label = "as timed".into();
    chart.series.push(SeriesSpec {
        label: "corrected".into(),
        points,
    });
    if !(c.watch.is_empty() && c.act.is_empty()) {
        chart.band = band(c, "baseline ± 2σ", sys);
        chart.limits = limits(c, sys);
        chart.note = note(c, "latest corrected", &chart.empty_note, sys);
    }
}

/// The charts of a unit over `window`, in the shop's units: effective flow, lost flow, heat
/// rise, KV40, cleanliness over target and the ISO 4406 code by size, each where the engine
/// gives its series. A face shows those it has room for.
pub fn unit_charts(
    u: &UnitStatus,
    events: &[Event],
    window: Window<'_>,
    sys: UnitSystem,
) -> Vec<ChartSpec> {
    let marks: Vec<EventSpec> = events
        .iter()
        .filter(|e| window.holds(e.done_at))
        .filter_map(|e| {
            let (code, what) = event_code(e.kind)?;
            Some(EventSpec {
                at: e.done_at,
                code,
                what,
            })
        })
        .collect();
    let find = |key: &str| u.health.series.iter().find(|s| s.key == key);
    let points = |s: &Series| -> Vec<(DateTime<Utc>, f64)> {
        s.points
            .iter()
            .filter(|p| window.holds(p.at))
            .map(|p| (p.at, figures::value(s.dim, p.value, sys)))
            .collect()
    };
    let empty = |what: &str| format!("no {what} in this {}", window.name);
    let mut out = Vec::new();
    let plain: [(&'static str, String, &str, &str); 5] = [
        (
            "effective_flow",
            empty("timed strokes"),
            "effective flow",
            "baseline ± 2σ",
        ),
        (
            "lost_flow",
            "lost flow needs a baseline: the first checks of the era".to_string(),
            "lost flow",
            "baseline ± 2σ",
        ),
        (
            "heat_rise",
            empty("checks with both temperatures"),
            "heat rise",
            "baseline ± 2σ",
        ),
        ("kv40", empty("viscosity results"), "KV40", "new oil ± 2σ"),
        (
            "cleanliness",
            empty("particle counts"),
            "over target",
            "baseline ± 2σ",
        ),
    ];
    for (key, empty_note, label, band_label) in plain {
        let Some(s) = find(key) else { continue };
        let band = if key == "kv40" {
            // The ISO VG band of the fluid, where the samples give it, is the band to stay in.
            match u.health.samples.iter().rev().find_map(|p| p.vg_band) {
                Some((lo, hi)) => Some(BandSpec {
                    low: figures::value(Dim::Viscosity, lo, sys),
                    high: figures::value(Dim::Viscosity, hi, sys),
                    centre: s.baseline.map(|b| figures::value(s.dim, b, sys)),
                    label: "ISO VG band · new oil".into(),
                }),
                None => band(s, band_label, sys),
            }
        } else {
            band(s, band_label, sys)
        };
        let mut chart = ChartSpec {
            key,
            title: s.label.clone(),
            unit: chart_unit(s.dim, sys),
            series: vec![SeriesSpec {
                label: label.into(),
                points: points(s),
            }],
            band,
            limits: limits(s, sys),
            events: marks.clone(),
            note: note(s, "latest", &empty_note, sys),
            empty_note,
        };
        if key == "effective_flow" {
            if let Some(c) = find("corrected_flow") {
                with_corrected(&mut chart, c, points(c), sys);
            }
        }
        out.push(chart);
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
            series.push(SeriesSpec {
                label: label.into(),
                points: points(s),
            });
            if let Some(t) = s.baseline {
                targets.push(LimitSpec {
                    value: t,
                    level: None,
                    label: format!("target {label} {}", figures::significant(t, 3, 2)),
                });
            }
        }
    }
    if !series.is_empty() {
        let empty_note = empty("particle counts");
        let note = match series.iter().find_map(|s| s.points.last().map(|p| (s, p))) {
            Some((s, p)) => format!("latest {} {}", s.label, figures::significant(p.1, 3, 0)),
            None => empty_note.clone(),
        };
        out.push(ChartSpec {
            key: "iso4406",
            title: "ISO 4406 code by size".into(),
            unit: chart_unit(Dim::RangeNumber, sys),
            series,
            band: None,
            limits: targets,
            events: marks,
            empty_note,
            note,
        });
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::health::indicators::SeriesPoint;

    const LPM: f64 = 1.0 / 60_000.0;

    fn at(day: i64) -> DateTime<Utc> {
        DateTime::<Utc>::from_timestamp(day * 86_400, 0).expect("a day")
    }

    fn timed_chart() -> ChartSpec {
        ChartSpec {
            key: "effective_flow",
            title: "Effective flow as timed".into(),
            unit: "L/min".into(),
            series: vec![SeriesSpec {
                label: "effective flow".into(),
                points: vec![(at(0), 104.0), (at(7), 90.0)],
            }],
            band: None,
            limits: Vec::new(),
            events: Vec::new(),
            empty_note: "no timed strokes in this era".into(),
            note: "latest 90.0 L/min".into(),
        }
    }

    fn corrected(watch: Vec<f64>, act: Vec<f64>) -> Series {
        Series {
            key: "corrected_flow".into(),
            label: "Effective flow corrected to baseline oil".into(),
            dim: Dim::Flow,
            points: [(0, 103.8), (7, 95.5)]
                .map(|(d, v)| SeriesPoint {
                    at: at(d),
                    value: v * LPM,
                })
                .to_vec(),
            baseline: Some(104.0 * LPM),
            baseline_spread: Some(1.5 * LPM),
            watch,
            act,
        }
    }

    #[test]
    fn the_flow_chart_shows_the_corrected_flow_with_the_limits_it_is_judged_by() {
        // A corrected baseline of 104 L/min, spread 1.5: band 101–107 L/min (± 2σ), and the
        // lost flow's 8 and 15 % as flows, 95.68 and 88.4 L/min (by hand).
        let c = corrected(vec![104.0 * 0.92 * LPM], vec![104.0 * 0.85 * LPM]);
        let mut chart = timed_chart();
        let points = vec![(at(0), 103.8), (at(7), 95.5)];
        with_corrected(&mut chart, &c, points.clone(), UnitSystem::Metric);
        assert_eq!(chart.series.len(), 2);
        assert_eq!(chart.series[0].label, "as timed");
        assert_eq!(chart.series[1].points, points);
        let band = chart.band.expect("the corrected band");
        assert!((band.low - 101.0).abs() < 1e-9 && (band.high - 107.0).abs() < 1e-9);
        let lines: Vec<(f64, Option<State>)> =
            chart.limits.iter().map(|l| (l.value, l.level)).collect();
        assert_eq!(lines.len(), 2);
        assert!((lines[0].0 - 95.68).abs() < 1e-9 && lines[0].1 == Some(State::Watch));
        assert!((lines[1].0 - 88.4).abs() < 1e-9 && lines[1].1 == Some(State::Act));
        assert!(
            chart.note.starts_with("latest corrected 95.5"),
            "{}",
            chart.note
        );
    }

    #[test]
    fn a_corrected_flow_the_lost_flow_is_not_judged_on_leaves_the_limits_alone() {
        // The lost flow judged on the timed flow (a hand-entered baseline): the corrected
        // series is drawn, the timed flow's band and note stand.
        let mut chart = timed_chart();
        with_corrected(
            &mut chart,
            &corrected(Vec::new(), Vec::new()),
            vec![(at(0), 103.8)],
            UnitSystem::Metric,
        );
        assert_eq!(chart.series.len(), 2);
        assert!(chart.band.is_none() && chart.limits.is_empty());
        assert_eq!(chart.note, "latest 90.0 L/min");
        // No corrected point in the window: the chart is left as it was.
        let mut chart = timed_chart();
        with_corrected(
            &mut chart,
            &corrected(Vec::new(), Vec::new()),
            Vec::new(),
            UnitSystem::Metric,
        );
        assert_eq!(chart, timed_chart());
    }
}
