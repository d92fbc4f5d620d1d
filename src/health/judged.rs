//! What cannot be judged yet: for each indicator of a unit that has no reading in the era in
//! force, no baseline yet, or nothing to be measured against, what is missing and when it will
//! be judged. A unit with nothing flagged is "not judged yet", never "steady", while an
//! indicator it is expected to have is in this list.
//!
//! Pure: the history, the computed indicators and the planned work in; the list out.

use chrono::NaiveDate;
use serde::{Deserialize, Serialize};

use super::baseline::BaselineIndicator;
use super::indicators::{CheckPoint, Computed};
use super::plan::{WorkItem, WorkKind};
use crate::model::UnitHistory;

/// One indicator that cannot be judged yet.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct NotJudged {
    /// The tile key (`lost_flow`, `heat_rise`, `water`, ...).
    pub key: String,
    pub label: String,
    /// What is missing, in words.
    pub missing: String,
    /// When it will be judged, in words ("after 3 more checks", "at the next sample, due
    /// 2027-01-10").
    pub until: String,
    /// Checks still needed, where more checks are what it takes.
    pub checks_needed: Option<usize>,
    /// The date of the work that will bring the missing reading, where one is planned.
    pub due: Option<NaiveDate>,
    /// Whether the unit is expected to have this indicator: only these make the unit "not
    /// judged yet" (a case drain never logged, or a leakage too small to resolve, do not).
    pub expected: bool,
}

fn due(work: &[WorkItem], kind: WorkKind) -> Option<NaiveDate> {
    work.iter().find(|w| w.kind == kind).map(|w| w.due)
}

#[allow(clippy::too_many_arguments)]
fn nj(
    key: &str,
    label: &str,
    missing: String,
    until: String,
    checks_needed: Option<usize>,
    due: Option<NaiveDate>,
    expected: bool,
) -> NotJudged {
    NotJudged {
        key: key.into(),
        label: label.into(),
        missing,
        until,
        checks_needed,
        due,
        expected,
    }
}

fn at_next(what: &str, d: Option<NaiveDate>) -> String {
    match d {
        Some(d) => format!("at the next {what}, due {d}"),
        None => format!("at the next {what}"),
    }
}

/// Every indicator of the unit that cannot be judged at the evaluation date.
pub fn not_judged(h: &UnitHistory, c: &Computed, work: &[WorkItem]) -> Vec<NotJudged> {
    let mut out: Vec<NotJudged> = Vec::new();
    check_indicators(h, c, due(work, WorkKind::Check), &mut out);
    sample_indicators(h, c, due(work, WorkKind::Sample), &mut out);
    out
}

/// The indicators read at the walk-round check.
fn check_indicators(
    h: &UnitHistory,
    c: &Computed,
    next_check: Option<NaiveDate>,
    out: &mut Vec<NotJudged>,
) {
    let no_era = c.era.is_none();
    let has_stroke = h.unit.stroke.is_some();
    if !has_stroke {
        for (key, label) in [
            ("lost_flow", "Lost flow"),
            ("effective_flow", "Effective flow"),
        ] {
            out.push(nj(
                key,
                label,
                "no timed stroke (bore, rod, stroke length) in the unit register".into(),
                "once the timed stroke is described in Setup".into(),
                None,
                None,
                true,
            ));
        }
    } else {
        let judged = c.checks.iter().any(|p| p.lost_flow_median_pct.is_some());
        for (key, label) in [
            ("lost_flow", "Lost flow"),
            ("effective_flow", "Effective flow"),
        ] {
            baselined(
                c,
                next_check,
                Baselined {
                    ind: BaselineIndicator::EffectiveFlow,
                    key,
                    label,
                    reading: "timed stroke",
                    has: &|p| p.effective_flow.is_some(),
                    expected: true,
                },
                judged,
                out,
            );
        }
    }
    baselined(
        c,
        next_check,
        Baselined {
            ind: BaselineIndicator::HeatRise,
            key: "heat_rise",
            label: "Heat rise",
            reading: "reservoir and ambient temperature",
            has: &|p| p.heat_rise.is_some(),
            expected: true,
        },
        c.checks.iter().any(|p| p.heat_rise_drift_median.is_some()),
        out,
    );
    // Leak conductance: judged where the leakage can be resolved; not expected of every unit.
    let leak_judged =
        c.leak_resolved == Some(true) && c.checks.iter().any(|p| p.leak_ratio_median.is_some());
    if !leak_judged {
        if h.unit.rated_flow.is_none() || !has_stroke {
            out.push(nj(
                "leak_conductance",
                "Leak conductance",
                "no rated pump flow or timed stroke in the unit register".into(),
                "once both are set in Setup".into(),
                None,
                None,
                false,
            ));
        } else if c.leak_resolved == Some(false) {
            out.push(nj(
                "leak_conductance",
                "Leak conductance",
                "the leakage is too small against the stopwatch's scatter to be measured".into(),
                "when the era's checks resolve it".into(),
                None,
                None,
                false,
            ));
        } else {
            baselined(
                c,
                next_check,
                Baselined {
                    ind: BaselineIndicator::LeakConductance,
                    key: "leak_conductance",
                    label: "Leak conductance",
                    reading: "timed stroke with oil temperature and pressure",
                    has: &|p| p.leak_conductance.is_some(),
                    expected: false,
                },
                false,
                out,
            );
        }
    }
    // Case drain: expected where the unit has ever had it logged.
    let logs_drain = h.checks.iter().any(|ch| ch.case_drain.is_some());
    if logs_drain {
        baselined(
            c,
            next_check,
            Baselined {
                ind: BaselineIndicator::CaseDrain,
                key: "case_drain",
                label: "Case drain",
                reading: "case-drain flow",
                has: &|p| p.case_drain_corrected.is_some(),
                expected: true,
            },
            c.checks
                .iter()
                .any(|p| p.case_drain_rise_median_pct.is_some()),
            out,
        );
    }
    // Reservoir temperature: absolute limits, judged from any reading of the era.
    if no_era || c.checks.iter().all(|p| p.reservoir_temp.is_none()) {
        out.push(nj(
            "reservoir_temp",
            "Reservoir temperature",
            "no reservoir temperature in this era".into(),
            at_next("check", next_check),
            None,
            next_check,
            true,
        ));
    }
}

/// The indicators read from the era's fluid samples.
fn sample_indicators(
    h: &UnitHistory,
    c: &Computed,
    next_sample: Option<NaiveDate>,
    out: &mut Vec<NotJudged>,
) {
    // Samples of the era.
    let sample_missing = |what: &str| {
        if c.samples.is_empty() {
            "no fluid sample in this era".to_string()
        } else {
            format!("no {what} in this era's samples")
        }
    };
    let has_kv = c.samples.iter().any(|s| s.kv40.is_some());
    let kv_judged = c.samples.iter().any(|s| s.kv40_drift_pct.is_some());
    if !kv_judged {
        let new_known = c.fluid.as_ref().and_then(|f| f.kv40_new).is_some();
        if has_kv && !new_known {
            out.push(nj(
                "kv40",
                "KV40",
                "the new oil's KV40 (the fluid in service and its figures in Setup)".into(),
                "once the fluid is set".into(),
                None,
                None,
                true,
            ));
        } else {
            out.push(nj(
                "kv40",
                "KV40",
                sample_missing("viscosity"),
                at_next("sample", next_sample),
                None,
                next_sample,
                true,
            ));
        }
    }
    let filtered = c
        .restarts
        .iter()
        .filter(|r| r.event == crate::model::EventKind::FilterChange)
        .map(|r| r.at)
        .max();
    let counted_since_filter = c
        .samples
        .iter()
        .any(|s| s.over_target_max.is_some() && filtered.is_none_or(|f| s.at > f));
    // A filter change lifts a cleanliness flag until the next sample tells; a last count
    // within the target still stands (a new element only makes the oil cleaner).
    let over_before = c
        .samples
        .iter()
        .rev()
        .find_map(|s| s.over_target_max)
        .is_some_and(|o| o > 0);
    if let (Some(f), false, true) = (filtered, counted_since_filter, over_before) {
        out.push(nj(
            "cleanliness",
            "Cleanliness",
            format!(
                "no particle count since the filter change of {}",
                c.calendar.day(f)
            ),
            at_next("sample", next_sample),
            None,
            next_sample,
            true,
        ));
    } else if !c.samples.iter().any(|s| s.over_target_max.is_some()) {
        out.push(nj(
            "cleanliness",
            "Cleanliness",
            sample_missing("particle count or ISO 4406 code"),
            at_next("sample", next_sample),
            None,
            next_sample,
            true,
        ));
    }
    if !c.samples.iter().any(|s| s.water_ppm.is_some()) {
        out.push(nj(
            "water",
            "Water",
            sample_missing("water figure"),
            at_next("sample", next_sample),
            None,
            next_sample,
            true,
        ));
    }
    if !c.samples.iter().any(|s| s.acid_rise.is_some()) {
        // Expected where the unit's samples have ever carried an acid number.
        let expected = h.samples.iter().any(|s| s.acid_mgkoh_g.is_some());
        out.push(nj(
            "acid_rise",
            "Acid number rise",
            sample_missing("acid number"),
            at_next("sample", next_sample),
            None,
            next_sample,
            expected,
        ));
    }
}

/// An indicator judged against the era's baseline: what it is (`ind`, its tile `key` and
/// `label`), the reading it is computed from (`reading`, and `has` whether a check has it).
struct Baselined<'a> {
    ind: BaselineIndicator,
    key: &'a str,
    label: &'a str,
    reading: &'a str,
    has: &'a dyn Fn(&CheckPoint) -> bool,
    expected: bool,
}

/// What keeps a baselined indicator from being judged, unless it is `judged`: no reading in
/// the era, a baseline still forming, or no reading since it formed.
fn baselined(
    c: &Computed,
    next_check: Option<NaiveDate>,
    b: Baselined,
    judged: bool,
    out: &mut Vec<NotJudged>,
) {
    let Baselined {
        ind,
        key,
        label,
        reading,
        has,
        expected,
    } = b;
    let no_era = c.era.is_none();
    if judged {
        return;
    }
    let have = c.checks.iter().filter(|p| has(p)).count();
    if no_era || have == 0 {
        out.push(nj(
            key,
            label,
            format!("no {reading} in this era"),
            at_next("check", next_check),
            None,
            next_check,
            expected,
        ));
        return;
    }
    if c.baseline.get(ind).is_none() {
        let need = c.baseline_needs.saturating_sub(have).max(1);
        out.push(nj(
            key,
            label,
            format!(
                "the era's baseline is still forming ({have} of {} checks with a {reading})",
                c.baseline_needs
            ),
            format!(
                "after {need} more check{}",
                if need == 1 { "" } else { "s" }
            ),
            Some(need),
            next_check,
            expected,
        ));
    } else {
        out.push(nj(
            key,
            label,
            format!("no {reading} since the baseline was formed"),
            at_next("check", next_check),
            None,
            next_check,
            expected,
        ));
    }
}
