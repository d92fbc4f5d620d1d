//! Questioned readings in the report: the remark under a unit and the mark beside each figure a
//! questioned reading feeds. It must not read the shop or evaluate.

use crate::app::local_time::Zone;
use crate::app::status::UnitStatus;
use crate::health::screen::{Field as ScreenField, Record};
use crate::health::SuspectReading;

/// A questioned reading in words: record, time, field, reason, and who confirmed it.
pub(super) fn questioned_text(q: &SuspectReading, zone: Zone) -> String {
    let record = match q.record {
        Record::Check => "check",
        Record::Sample => "sample",
    };
    let state = match &q.confirmed {
        None => "not confirmed: left out of baselines and detectors".to_string(),
        Some(c) => {
            let (by, at) = crate::app::status::confirmed_by_text(c);
            format!("confirmed by {by} {}", zone.show_date(at))
        }
    };
    format!(
        "{record} of {}, {}: {} ({state})",
        zone.show_marked(q.at),
        q.field.label(),
        q.reason
    )
}

/// One line on the unit's questioned readings that are not confirmed: how many, and the
/// latest one (record, time, field), so the unit keeps to its page; `sumpbook status --unit`
/// and the app list each with its reason.
pub(super) fn questioned_remarks(u: &UnitStatus, zone: Zone) -> Vec<String> {
    let open: Vec<&SuspectReading> = u
        .health
        .suspects
        .iter()
        .filter(|q| q.confirmed.is_none())
        .collect();
    let Some(q) = open.last() else {
        return Vec::new();
    };
    let record = match q.record {
        Record::Check => "check",
        Record::Sample => "sample",
    };
    let n = open.len();
    vec![format!(
        "Questioned, not confirmed: {n} reading{} (latest: {} of {}), left out of baselines and \
         detectors until confirmed.",
        if n == 1 { "" } else { "s" },
        q.field.label(),
        format!("{record} {}", zone.show_marked(q.at))
    )]
}

/// Which questionable fields feed an indicator (tile key).
fn feeds(field: ScreenField, key: &str) -> bool {
    use ScreenField as F;
    match field {
        F::StrokeTime => matches!(
            key,
            "lost_flow" | "effective_flow" | "corrected_flow" | "leak_conductance"
        ),
        F::Pressure => matches!(key, "leak_conductance" | "corrected_flow"),
        F::ReservoirTemp => matches!(
            key,
            "reservoir_temp" | "heat_rise" | "corrected_flow" | "leak_conductance" | "case_drain"
        ),
        F::AmbientTemp => key == "heat_rise",
        F::CaseDrain => key == "case_drain",
        F::Kv40 | F::ViscReading => key == "kv40",
        F::Water => key == "water",
        F::Acid => key == "acid_rise",
        F::Count4 | F::Count6 | F::Count14 => key == "cleanliness",
    }
}

/// A mark for an indicator whose latest figure rests on (or had to leave out) a questioned
/// field of the unit's latest check or sample.
pub(super) fn questioned_mark(u: &UnitStatus, key: &str) -> Option<String> {
    let last_check = u.health.last_check;
    let last_sample = u.health.last_sample;
    let q = u.health.suspects.iter().rev().find(|q| {
        let latest = match q.record {
            Record::Check => last_check == Some(q.at),
            Record::Sample => last_sample == Some(q.at),
        };
        latest && feeds(q.field, key)
    })?;
    Some(match &q.confirmed {
        None => format!("latest {} questioned, left out", q.field.label()),
        Some(c) => format!(
            "rests on a questioned {}, confirmed by {}",
            q.field.label(),
            crate::app::status::confirmed_by_text(c).0
        ),
    })
}
