//! Unit page charts: each indicator's series, band, limits and events turned into chart input
//! for `gui::charts`. It must not evaluate; the series come from `app`.

use super::*;

use crate::app::entry::UnitView;
use crate::app::vocab::{Dim, Series};
use crate::gui::charts::{self, ChartInput, Line, Marker};
use crate::gui::fmt::{dim_unit, dim_value};
use crate::gui::ui::{ChartData, ChartRow};
use crate::gui::{model, s};
use crate::model::EventKind;
use crate::units::UnitSystem;

fn find<'a>(v: &'a UnitView, key: &str) -> Option<&'a Series> {
    v.status.health.series.iter().find(|x| x.key == key)
}

fn event_label(k: EventKind) -> &'static str {
    match k {
        EventKind::FluidChange => "fluid",
        EventKind::TopUp => "top-up",
        EventKind::FilterChange => "filter",
        EventKind::Rebuild => "rebuild",
        EventKind::Repair => "repair",
        EventKind::CoolerClean => "cooler",
        EventKind::Note => "note",
    }
}

fn chart_from(series: &Series, sys: UnitSystem, markers: &[Marker], empty: &str) -> ChartInput {
    let conv = |x: f64| dim_value(series.dim, x, sys);
    let spread_dim = if series.dim == Dim::Temperature {
        Dim::TempDiff
    } else {
        series.dim
    };
    ChartInput {
        title: series.label.clone(),
        unit: dim_unit(series.dim, sys).to_string(),
        lines: vec![Line {
            label: String::new(),
            points: series
                .points
                .iter()
                .map(|p| (charts::day_number(p.at), conv(p.value)))
                .collect(),
        }],
        baseline: series.baseline.map(conv),
        spread: series
            .baseline_spread
            .map(|sp| dim_value(spread_dim, sp, sys))
            .filter(|sp| *sp > 0.0),
        watch: series.watch.iter().map(|x| conv(*x)).collect(),
        act: series.act.iter().map(|x| conv(*x)).collect(),
        markers: markers.to_vec(),
        empty_text: empty.to_string(),
    }
}

pub(super) fn chart_rows(v: &UnitView, sys: UnitSystem) -> (Vec<ChartRow>, String) {
    let era_start = v.status.health.eras.last().map(|e| e.start);
    let markers: Vec<Marker> = v
        .history
        .events
        .iter()
        .filter(|e| era_start.is_none_or(|s| e.done_at >= s))
        .filter(|e| !matches!(e.kind, EventKind::Note | EventKind::TopUp))
        .map(|e| Marker {
            at: charts::day_number(e.done_at),
            label: event_label(e.kind).to_string(),
        })
        .collect();
    let sample_markers: Vec<Marker> = markers.clone();
    let mut inputs: Vec<ChartInput> = Vec::new();
    for (key, empty) in [
        ("effective_flow", "no timed strokes in this era"),
        (
            "lost_flow",
            "lost flow needs a baseline: the first checks of the era",
        ),
        ("heat_rise", "no oil and ambient temperatures in this era"),
        ("kv40", "no viscosity results in this era"),
        ("cleanliness", "no particle counts in this era"),
    ] {
        if let Some(series) = find(v, key) {
            let m = if key == "kv40" || key == "cleanliness" {
                &sample_markers
            } else {
                &markers
            };
            inputs.push(chart_from(series, sys, m, empty));
        }
    }
    // The code by size, one line each (shape tells them apart as well as colour).
    let sizes: Vec<&Series> = ["iso4406_4um", "iso4406_6um", "iso4406_14um"]
        .iter()
        .filter_map(|k| find(v, k))
        .collect();
    if !sizes.is_empty() {
        inputs.push(ChartInput {
            title: "ISO 4406 code by size".into(),
            unit: "scale number".into(),
            lines: sizes
                .iter()
                .map(|s| Line {
                    label: s.label.trim_start_matches("ISO 4406 ").to_string(),
                    points: s
                        .points
                        .iter()
                        .map(|p| (charts::day_number(p.at), p.value))
                        .collect(),
                })
                .collect(),
            markers: sample_markers.clone(),
            ..ChartInput::default()
        });
    }
    let images: Vec<ChartData> = inputs
        .iter()
        .map(|i| {
            let image = charts::render(i, CHART_W, CHART_H).unwrap_or_default();
            let note = match (i.lines.first().and_then(|l| l.points.last()), i.act.first()) {
                (Some(p), Some(a)) => format!("latest {:.2} {}, act limit {:.2}", p.1, i.unit, a),
                (Some(p), None) => format!("latest {:.2} {}", p.1, i.unit),
                _ => i.empty_text.clone(),
            };
            ChartData {
                title: s(&i.title),
                image,
                note: s(note),
            }
        })
        .collect();
    let rows = images
        .chunks(2)
        .map(|c| ChartRow {
            charts: model(c.to_vec()),
        })
        .collect();
    let hint = match era_start {
        Some(t) => format!(
            "The era in force, since {}. Band: baseline ± one spread; dashed ochre: watch; solid red: act; \
             dashed blue: events.",
            crate::gui::fmt::date(t, v.zone)
        ),
        None => "No era yet: charts appear with the first checks.".into(),
    };
    (rows, hint)
}
