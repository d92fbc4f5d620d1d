//! Work planning (docs/engineering.md, "Work planning"): next fluid change, filter change, sample
//! and walk-round check of
//! one unit, each with its due date, what it is based on, whether condition pulled it forward,
//! and how overdue it is; and the safety cautions shown where work is prompted
//! (docs/engineering.md, "Safety").
//!
//! Pure: records, computed indicators, condition flags and limits in; work items out. Marking
//! work done is recording the event (or check, or sample), which restarts its clock here.

use chrono::{DateTime, Duration, Months, NaiveDate, Utc};
use serde::{Deserialize, Serialize};

use super::flags::{Flag, FlagKind};
use super::indicators::{hours_at, Computed};
use super::limits::{LimitKey, Limits};
use super::{Calendar, State};
use crate::model::{EventKind, FilterState, UnitHistory};

/// The cautions (docs/engineering.md, "Safety"), in full, for reports and prompts.
pub const SAFETY_CAUTIONS: [&str; 5] = [
    "Pressurised fluid can penetrate skin: seek medical help at once, even for a small wound.",
    "Relieve pressure, lower or block loads, discharge accumulators and lock out before opening a circuit or \
     taking a sample from a pressurised point.",
    "Hot oil and surfaces burn.",
    "Clean up spills and dispose of used oil and filters as local rules require.",
    "Limits in sumpbook are general guidance; the machine builder's instructions, local codes and qualified \
     people decide.",
];

/// The caution of a walk-round, where the circuit stays closed but hot and under pressure.
pub const WALK_ROUND_CAUTION: &str = "Hot oil and surfaces burn. Do not open a pressurised circuit on a \
walk-round; pressurised fluid can penetrate skin — seek medical help at once, even for a small wound.";

/// The cautions (docs/engineering.md, "Safety") in one line, for work that opens the circuit or
/// takes oil out.
pub const CAUTION_SHORT: &str = "Relieve pressure, lower or block loads, discharge accumulators and lock out first; \
oil under pressure can pierce skin (get medical help at once); hot oil burns; dispose of used oil and filters \
as local rules require.";

/// Kinds of planned work.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum WorkKind {
    FluidChange,
    FilterChange,
    Sample,
    Check,
}

impl WorkKind {
    pub fn as_str(self) -> &'static str {
        match self {
            WorkKind::FluidChange => "fluid_change",
            WorkKind::FilterChange => "filter_change",
            WorkKind::Sample => "sample",
            WorkKind::Check => "check",
        }
    }

    pub fn label(self) -> &'static str {
        match self {
            WorkKind::FluidChange => "fluid change",
            WorkKind::FilterChange => "filter change",
            WorkKind::Sample => "fluid sample",
            WorkKind::Check => "walk-round check",
        }
    }
}

/// One piece of planned work on one unit.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct WorkItem {
    pub kind: WorkKind,
    pub due: NaiveDate,
    /// What the date is based on ("every 7 days; last check 2024-05-06").
    pub basis: String,
    /// Set when the condition of the unit pulled the work forward, with what to do first.
    pub pulled_forward: Option<String>,
    /// Days past the due date at the evaluation date (negative: days still to go).
    pub days_overdue: i64,
    /// `Steady` while not overdue; `Watch` or `Act` by the `overdue_days` limits.
    pub state: State,
    /// The safety caution where the work opens the circuit or takes oil out.
    pub caution: Option<String>,
}

struct Candidate {
    due: NaiveDate,
    basis: String,
    pulled_forward: Option<String>,
}

fn earliest(c: Vec<Candidate>) -> Option<Candidate> {
    c.into_iter().min_by_key(|c| c.due)
}

/// The date `remaining` hours after the last hour-meter reading, at `per_day` hours a day.
fn date_after_hours(
    calendar: Calendar,
    last: Option<DateTime<Utc>>,
    remaining: f64,
    per_day: Option<f64>,
) -> Option<NaiveDate> {
    let per_day = per_day.filter(|r| *r > 0.0)?;
    let days = remaining / per_day;
    if !days.is_finite() || days.abs() > 36_500.0 {
        return None;
    }
    let step = Duration::try_seconds((days * 86_400.0).round() as i64)?;
    last?.checked_add_signed(step).map(|t| calendar.day(t))
}

/// `d` + `days`, or `None` beyond the calendar chrono can hold.
fn add_days(d: NaiveDate, days: i64) -> Option<NaiveDate> {
    d.checked_add_signed(Duration::try_days(days)?)
}

/// Plans the work of one unit at `at`; `flags` are its condition flags (without `overdue`).
pub fn plan(
    h: &UnitHistory,
    c: &Computed,
    flags: &[Flag],
    limits: &Limits,
    at: DateTime<Utc>,
) -> Vec<WorkItem> {
    let today = c.calendar.day(at);
    let last_reading = h
        .checks
        .iter()
        .rev()
        .find(|c| c.hours.is_some())
        .map(|c| c.taken_at);
    let unit = Planning {
        h,
        c,
        flags,
        limits,
        first_check: h.checks.first().map(|c| c.taken_at),
        last_reading,
        hours_now: last_reading.and_then(|t| hours_at(h, t)),
    };
    let items: Vec<(WorkKind, Candidate)> = [
        (WorkKind::Check, unit.check()),
        (WorkKind::Sample, unit.sample()),
        (WorkKind::FilterChange, unit.filter_change()),
        (WorkKind::FluidChange, unit.fluid_change()),
    ]
    .into_iter()
    .filter_map(|(kind, cand)| Some((kind, cand?)))
    .collect();

    let ol = limits.get(LimitKey::OverdueDays);
    let mut out: Vec<WorkItem> = items
        .into_iter()
        .map(|(kind, cand)| {
            let days_overdue = (today - cand.due).num_days();
            let state = State::from_grade(ol.grade(days_overdue as f64));
            WorkItem {
                kind,
                due: cand.due,
                basis: cand.basis,
                pulled_forward: cand.pulled_forward,
                days_overdue,
                state,
                caution: matches!(
                    kind,
                    WorkKind::FluidChange | WorkKind::FilterChange | WorkKind::Sample
                )
                .then(|| CAUTION_SHORT.to_string()),
            }
        })
        .collect();
    out.sort_by_key(|w| (w.due, w.kind));
    out
}

/// What the plan of one unit reads: its history, evaluation, flags and limits, and its hour
/// meter.
struct Planning<'a> {
    h: &'a UnitHistory,
    c: &'a Computed,
    flags: &'a [Flag],
    limits: &'a Limits,
    first_check: Option<DateTime<Utc>>,
    /// The latest check with an hour-meter reading, and the hours then.
    last_reading: Option<DateTime<Utc>>,
    hours_now: Option<f64>,
}

impl Planning<'_> {
    /// The unit's flag of kind `k` at act, if any.
    fn flag(&self, k: FlagKind) -> Option<&Flag> {
        self.flags
            .iter()
            .find(|f| f.kind == k && f.state == State::Act)
    }

    /// When work of one of `kinds` was last done.
    fn last_event(&self, kinds: &[EventKind]) -> Option<DateTime<Utc>> {
        self.h
            .events
            .iter()
            .rev()
            .find(|e| kinds.contains(&e.kind))
            .map(|e| e.done_at)
    }

    /// The next walk-round check.
    fn check(&self) -> Option<Candidate> {
        let (h, c, limits) = (self.h, self.c, self.limits);
        // Dates are added with checks: a due date past the calendar's end is no due date (a stored
        // interval from before ranges were enforced could be any number).
        let every = limits.value(LimitKey::CheckIntervalDays).round().max(1.0) as i64;
        let last_check = h.checks.last().map(|c| c.taken_at);
        let (last, due) =
            last_check.and_then(|l| Some((l, add_days(c.calendar.day(l), every)?)))?;
        Some(Candidate {
            due,
            basis: format!("every {every} days; last check {}", c.calendar.day(last)),
            pulled_forward: None,
        })
    }

    /// The next fluid sample.
    fn sample(&self) -> Option<Candidate> {
        let (h, c, limits) = (self.h, self.c, self.limits);
        let first_check = self.first_check;
        let weeks = limits.value(LimitKey::SampleIntervalWeeks).max(0.1);
        let sample_from = h
            .samples
            .last()
            .map(|s| (s.sampled_at, "last sample"))
            .or(first_check.map(|t| (t, "first check")));
        let sample_due = sample_from.and_then(|(from, what)| {
            Some((
                from,
                what,
                add_days(c.calendar.day(from), (weeks * 7.0).round() as i64)?,
            ))
        });
        let (from, what, due) = sample_due?;
        Some(Candidate {
            due,
            basis: format!(
                "every {} weeks; {what} {}",
                super::text::num(weeks, 1),
                c.calendar.day(from)
            ),
            pulled_forward: None,
        })
    }

    /// The next filter change.
    fn filter_change(&self) -> Option<Candidate> {
        let (h, c, limits) = (self.h, self.c, self.limits);
        let (first_check, last_reading, hours_now) =
            (self.first_check, self.last_reading, self.hours_now);
        // Filter change: run-hours, or at once on the indicator or on dirty oil.
        let filter_from = self.last_event(&[EventKind::FilterChange]).or(first_check);
        let from = filter_from?;
        let mut cands = Vec::new();
        let interval = limits.value(LimitKey::FilterChangeHours);
        if let (Some(now), Some(h0)) = (hours_now, hours_at(h, from)) {
            let remaining = interval - (now - h0);
            if let Some(due) =
                date_after_hours(c.calendar, last_reading, remaining, c.hours_per_day)
            {
                cands.push(Candidate {
                    due,
                    basis: format!(
                        "every {} run-hours; {} h since {}",
                        super::text::num(interval, 0),
                        super::text::num(now - h0, 0),
                        c.calendar.day(from)
                    ),
                    pulled_forward: None,
                });
            }
        }
        if let Some(ch) = h
            .checks
            .iter()
            .rev()
            .find(|ch| ch.filter.is_some())
            .filter(|ch| ch.taken_at > from)
        {
            if matches!(ch.filter, Some(FilterState::Alert | FilterState::Bypass)) {
                cands.push(Candidate {
                    due: c.calendar.day(ch.taken_at),
                    basis: format!(
                        "filter indicator at the check of {}",
                        c.calendar.day(ch.taken_at)
                    ),
                    pulled_forward: Some("the filter indicator is up: change the element".into()),
                });
            }
        }
        if let Some(f) = self
            .flag(FlagKind::Cleanliness)
            .filter(|f| f.state_since > from)
        {
            cands.push(Candidate {
                due: c.calendar.day(f.state_since),
                basis: format!("cleanliness sample of {}", c.calendar.day(f.state_since)),
                pulled_forward: Some(
                    "oil over the cleanliness target: change the filter, then resample".into(),
                ),
            });
        }
        earliest(cands)
    }

    /// The next fluid change.
    fn fluid_change(&self) -> Option<Candidate> {
        let (h, c, limits) = (self.h, self.c, self.limits);
        let (first_check, last_reading, hours_now) =
            (self.first_check, self.last_reading, self.hours_now);
        // Fluid change: run-hours, oil-life equivalent hours or calendar months, whichever first;
        // pulled forward by the condition of the oil.
        let era_start = c.era.as_ref().map(|e| e.start);
        let change_from = self.last_event(&[EventKind::FluidChange]).or(first_check);
        let from = change_from?;
        let mut cands = Vec::new();
        let months = limits.value(LimitKey::FluidChangeMonths).round().max(1.0) as u32;
        if let Some(due) = c.calendar.day(from).checked_add_months(Months::new(months)) {
            cands.push(Candidate {
                due,
                basis: format!("every {months} months; since {}", c.calendar.day(from)),
                pulled_forward: None,
            });
        }
        let interval = limits.value(LimitKey::FluidChangeHours);
        if let (Some(now), Some(h0)) = (hours_now, hours_at(h, from)) {
            if let Some(due) = date_after_hours(
                c.calendar,
                last_reading,
                interval - (now - h0),
                c.hours_per_day,
            ) {
                cands.push(Candidate {
                    due,
                    basis: format!(
                        "every {} run-hours; {} h since {}",
                        super::text::num(interval, 0),
                        super::text::num(now - h0, 0),
                        c.calendar.day(from)
                    ),
                    pulled_forward: None,
                });
            }
        }
        let life = limits.value(LimitKey::OilLifeEquivHours);
        if let Some(used) = c.summary.oil_equivalent_hours {
            if let Some(due) =
                date_after_hours(c.calendar, last_reading, life - used, c.equiv_hours_per_day)
            {
                cands.push(Candidate {
                    due,
                    basis: format!(
                        "oil life {} equivalent hours; {} used",
                        super::text::num(life, 0),
                        super::text::num(used, 0)
                    ),
                    pulled_forward: None,
                });
            }
        }
        let condition = [
            (
                FlagKind::Viscosity,
                "viscosity out of limits: confirm with a resample, then change the fluid",
            ),
            (
                FlagKind::Acid,
                "acid number up: the oil is oxidising, change the fluid",
            ),
            (
                FlagKind::Water,
                "water over the act limit: find the ingress first, then change or dry the fluid",
            ),
        ];
        for (kind, why) in condition {
            if let Some(f) = self.flag(kind) {
                cands.push(Candidate {
                    due: c.calendar.day(f.state_since),
                    basis: format!(
                        "{} sample of {}",
                        kind.as_str(),
                        c.calendar.day(f.state_since)
                    ),
                    pulled_forward: Some(why.into()),
                });
            }
        }
        // Still dirty after a filter change: the dirt is coming in, or the oil is past saving.
        if let Some(f) = self.flag(FlagKind::Cleanliness) {
            let previous_sample = c
                .samples
                .iter()
                .rev()
                .map(|s| s.at)
                .find(|t| *t < f.state_since)
                .or(era_start)
                .unwrap_or(f.state_since);
            let changed_between = h.events.iter().any(|e| {
                e.kind == EventKind::FilterChange
                    && e.done_at >= previous_sample
                    && e.done_at < f.state_since
            });
            if changed_between {
                cands.push(Candidate {
                    due: c.calendar.day(f.state_since),
                    basis: format!("cleanliness sample of {} after a filter change", c.calendar.day(f.state_since)),
                    pulled_forward: Some("still over target after a filter change: find the ingress, then change the fluid".into()),
                });
            }
        }
        earliest(cands)
    }
}
