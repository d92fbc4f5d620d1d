//! The report's charts of one unit: series clipped to the period, bands, limit lines and event
//! marks for `report::charts`. It must not read the shop or draw.

use super::*;

use chrono::{DateTime, NaiveDate, Utc};

use crate::app::figures;
use crate::app::status::UnitStatus;
use crate::health::indicators::Dim;
use crate::report::charts::{Band, Chart, EventMark, LimitLine, Series};
use crate::report::Mark;
use crate::units::UnitSystem;

pub(super) fn charts(
    u: &UnitStatus,
    events: &[crate::model::Event],
    (from, to): (NaiveDate, NaiveDate),
    sys: UnitSystem,
    zone: Zone,
) -> Vec<Chart> {
    let marks: Vec<EventMark> = events
        .iter()
        .filter(|e| in_period(e.done_at, from, to, zone))
        .filter_map(|e| {
            let (code, what) = event_code(e.kind)?;
            Some(EventMark {
                at: e.done_at,
                code: code.into(),
                label: format!("{what} {}", zone.show_date(e.done_at)),
            })
        })
        .collect();
    let find = |key: &str| u.health.series.iter().find(|s| s.key == key);
    let points = |s: &crate::health::Series| -> Vec<(DateTime<Utc>, f64)> {
        s.points
            .iter()
            .filter(|p| in_period(p.at, from, to, zone))
            .map(|p| (p.at, figures::value(s.dim, p.value, sys)))
            .collect()
    };
    let limits = |s: &crate::health::Series| -> Vec<LimitLine> {
        let mut out = Vec::new();
        for (vals, level, word) in [(&s.watch, Mark::Watch, "watch"), (&s.act, Mark::Act, "act")] {
            for v in vals {
                let shown = figures::value(s.dim, *v, sys);
                out.push(LimitLine {
                    value: shown,
                    level,
                    label: format!("{word} {}", trim_number(shown)),
                });
            }
        }
        out
    };
    let band = |s: &crate::health::Series, label: &str| -> Option<Band> {
        let b = s.baseline?;
        let spread = s.baseline_spread.unwrap_or(0.0);
        let (lo, hi) = (
            figures::value(s.dim, b - 2.0 * spread, sys),
            figures::value(s.dim, b + 2.0 * spread, sys),
        );
        Some(Band {
            low: lo.min(hi),
            high: lo.max(hi),
            centre: Some(figures::value(s.dim, b, sys)),
            label: label.into(),
        })
    };
    let empty = |what: &str| format!("no {what} in this period");
    let mut out = Vec::new();

    // Effective flow carries the baseline band; lost flow is its complement.
    if let Some(s) = find("effective_flow") {
        out.push(Chart {
            title: "Effective flow of the timed stroke".into(),
            unit: chart_unit(s.dim, sys),
            from,
            to,
            series: vec![Series {
                label: "effective flow".into(),
                points: points(s),
            }],
            band: band(s, "baseline ± 2σ"),
            limits: limits(s),
            events: marks.clone(),
            empty_note: empty("timed strokes"),
        });
    }
    if let Some(s) = find("heat_rise") {
        out.push(Chart {
            // At the baseline's pressure and oil where the engine moves it there, as its
            // baseline, limits and flag take it.
            title: s.label.clone(),
            unit: chart_unit(s.dim, sys),
            from,
            to,
            series: vec![Series {
                label: "heat rise".into(),
                points: points(s),
            }],
            band: band(s, "baseline ± 2σ"),
            limits: limits(s),
            events: marks.clone(),
            empty_note: empty("checks with both temperatures"),
        });
    }
    if let Some(s) = find("kv40") {
        // The ISO VG band of the fluid, where the samples give it, is the band to stay in.
        let vg = u.health.samples.iter().rev().find_map(|p| p.vg_band);
        let band = match vg {
            Some((lo, hi)) => Some(Band {
                low: figures::value(Dim::Viscosity, lo, sys),
                high: figures::value(Dim::Viscosity, hi, sys),
                centre: s.baseline.map(|b| figures::value(s.dim, b, sys)),
                label: "ISO VG band · new oil".into(),
            }),
            None => band(s, "new oil"),
        };
        out.push(Chart {
            title: "KV40".into(),
            unit: chart_unit(s.dim, sys),
            from,
            to,
            series: vec![Series {
                label: "KV40".into(),
                points: points(s),
            }],
            band,
            limits: limits(s),
            events: marks.clone(),
            empty_note: empty("viscosity results"),
        });
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
            series.push(Series {
                label: label.into(),
                points: points(s),
            });
            if let Some(t) = s.baseline {
                targets.push(LimitLine {
                    value: t,
                    level: Mark::None,
                    label: format!("target {label} {}", trim_number(t)),
                });
            }
        }
    }
    out.push(Chart {
        title: "Cleanliness".into(),
        unit: "ISO 4406 scale number".into(),
        from,
        to,
        series,
        band: None,
        limits: targets,
        events: marks,
        empty_note: empty("particle counts"),
    });
    out
}
