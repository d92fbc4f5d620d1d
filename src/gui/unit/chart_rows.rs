//! Unit page charts: `app::view`'s chart specifications of the era in force drawn by
//! `gui::charts`, two to a row. It must not evaluate or decide a band, limit or label; those
//! come from `app::view`.

use super::*;

use crate::app::entry::UnitView;
use crate::app::view::{self, Window};
use crate::gui::charts;
use crate::gui::ui::{ChartData, ChartRow};
use crate::gui::{model, s};
use crate::units::UnitSystem;

pub(super) fn chart_rows(v: &UnitView, sys: UnitSystem) -> (Vec<ChartRow>, String) {
    let era_start = v.status.health.eras.last().map(|e| e.start);
    let window = Window {
        from: era_start,
        to: None,
        name: "era",
    };
    let specs = view::unit_charts(&v.status, &v.history.events, window, sys);
    let images: Vec<ChartData> = specs
        .iter()
        .map(|c| ChartData {
            title: s(&c.title),
            image: charts::render(c, CHART_W, CHART_H).unwrap_or_default(),
            note: s(&c.note),
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
            "The era in force, since {}. Band: baseline ± 2σ (the ISO VG band for KV40 where \
             known); dashed ochre: watch; solid red: act; dashed blue: events.",
            crate::gui::fmt::date(t, v.zone)
        ),
        None => "No era yet: charts appear with the first checks.".into(),
    };
    (rows, hint)
}
