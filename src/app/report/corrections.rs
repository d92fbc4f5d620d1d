//! Corrected readings in the report: the mark beside a figure that rests on a reading changed
//! after it was entered, the same on the baseline, and the unit's list of the period's
//! corrections (what, old → new, who, when, why). It must not read the shop or evaluate.

use chrono::NaiveDate;

use crate::app::edit_trail::{EditAction, UnitEdits};
use crate::app::local_time::Zone;
use crate::app::status::UnitStatus;
use crate::health::BaselineSource;
use crate::report::Correction;

/// The record an indicator's latest figure is worked out from: `check` or `sample`.
fn record_of(key: &str) -> Option<&'static str> {
    match key {
        "lost_flow" | "effective_flow" | "corrected_flow" | "heat_rise" | "leak_conductance"
        | "case_drain" | "reservoir_temp" => Some("check"),
        "kv40" | "cleanliness" | "water" | "acid_rise" => Some("sample"),
        _ => None,
    }
}

/// A mark for an indicator whose latest figure rests on the unit's latest check or sample
/// when that reading was corrected after it was entered ("check corrected"): short, so that
/// the indicator table keeps its rows; the report's notes say what it means.
pub(super) fn corrected_mark(u: &UnitStatus, edits: &UnitEdits, key: &str) -> Option<String> {
    let record = record_of(key)?;
    let latest = match record {
        "check" => u
            .health
            .checks
            .iter()
            .rev()
            .find(|c| Some(c.at) == u.health.last_check)
            .map(|c| c.check_id),
        _ => u
            .health
            .samples
            .iter()
            .rev()
            .find(|s| Some(s.at) == u.health.last_sample)
            .map(|s| s.sample_id),
    }?;
    edits
        .corrected(record)
        .binary_search(&latest)
        .is_ok()
        .then(|| format!("{record} corrected"))
}

/// How many of the checks the baseline was computed from were corrected after entry, in words
/// for the end of the baseline line; `None` when none was.
pub(super) fn baseline_corrected(u: &UnitStatus, edits: &UnitEdits) -> Option<String> {
    let corrected = edits.corrected("check");
    let mut ids: Vec<i64> = u
        .health
        .baseline
        .values
        .iter()
        .filter_map(|v| match &v.source {
            BaselineSource::Checks { check_ids, .. } => Some(check_ids.iter().copied()),
            BaselineSource::Manual { .. } => None,
        })
        .flatten()
        .filter(|id| corrected.binary_search(id).is_ok())
        .collect();
    ids.sort_unstable();
    ids.dedup();
    match ids.len() {
        0 => None,
        1 => Some("1 of its checks corrected".into()),
        n => Some(format!("{n} of its checks corrected")),
    }
}

/// The corrections, deletions and restores of the unit's readings made in the period (by the
/// shop's calendar) or made since to a reading taken in it, oldest first, each with every
/// field old → new.
pub(super) fn period_corrections(
    edits: &UnitEdits,
    (from, to): (NaiveDate, NaiveDate),
    zone: Zone,
) -> Vec<Correction> {
    edits
        .of_readings_between(zone.day_start(from), zone.day_end(to))
        .into_iter()
        .map(|e| {
            // A deletion or a restore moves the whole reading: it is named, and its values
            // are in the unit's edit trail (`sumpbook history UNIT`), not repeated here.
            let (what, changes) = match e.action {
                EditAction::Changed => (
                    "changed",
                    e.changes
                        .iter()
                        .map(|c| match &c.new_shown {
                            Some(new) => format!("{}: {} → {new}", c.label, c.old_shown),
                            None => format!("{}: {}", c.label, c.old_shown),
                        })
                        .collect::<Vec<_>>()
                        .join("; "),
                ),
                EditAction::Deleted => (
                    "deleted",
                    format!(
                        "removed; its values kept in the edit trail (edit {})",
                        e.edit_id
                    ),
                ),
                EditAction::Restored => (
                    "put back",
                    format!("put back as it was (edit {})", e.edit_id),
                ),
            };
            Correction {
                when: e.at_shown.clone(),
                record: format!("{} ({what})", e.record_text),
                changes,
                by: e.by.clone(),
                why: if e.reason.trim().is_empty() {
                    "no reason given".into()
                } else {
                    e.reason.clone()
                },
            }
        })
        .collect()
}
