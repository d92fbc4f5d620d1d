//! The report's charts of one unit: `app::view`'s chart specifications over the report's
//! period, in the page engine's form. It must not read the shop, draw, or decide a band or a
//! label of its own.

use chrono::NaiveDate;

use crate::app::local_time::Zone;
use crate::app::status::UnitStatus;
use crate::app::view::{self, ChartSpec, Window};
use crate::health::State;
use crate::report::charts::{Band, Chart, EventMark, LimitLine, Series};
use crate::report::Mark;
use crate::units::UnitSystem;

/// The charts a unit page of the report has room for, in this order.
const PRINTED: [&str; 4] = ["effective_flow", "heat_rise", "kv40", "iso4406"];

fn printed(c: ChartSpec, (from, to): (NaiveDate, NaiveDate), zone: Zone) -> Chart {
    Chart {
        title: c.title,
        unit: c.unit,
        from,
        to,
        series: c
            .series
            .into_iter()
            .map(|s| Series {
                label: s.label,
                points: s.points,
            })
            .collect(),
        band: c.band.map(|b| Band {
            low: b.low,
            high: b.high,
            centre: b.centre,
            label: b.label,
        }),
        limits: c
            .limits
            .into_iter()
            .map(|l| LimitLine {
                value: l.value,
                level: match l.level {
                    Some(State::Act) => Mark::Act,
                    Some(_) => Mark::Watch,
                    None => Mark::None,
                },
                label: l.label,
            })
            .collect(),
        events: c
            .events
            .into_iter()
            .map(|e| EventMark {
                at: e.at,
                code: e.code.into(),
                label: format!("{} {}", e.what, zone.show_date(e.at)),
            })
            .collect(),
        empty_note: c.empty_note,
    }
}

pub(super) fn charts(
    u: &UnitStatus,
    events: &[crate::model::Event],
    (from, to): (NaiveDate, NaiveDate),
    sys: UnitSystem,
    zone: Zone,
) -> Vec<Chart> {
    let window = Window {
        from: Some(zone.day_start(from)),
        to: Some(zone.day_end(to)),
        name: "period",
    };
    let mut specs = view::unit_charts(u, events, window, sys);
    let mut out = Vec::new();
    for key in PRINTED {
        if let Some(i) = specs.iter().position(|c| c.key == key) {
            out.push(printed(specs.swap_remove(i), (from, to), zone));
        }
    }
    out
}
