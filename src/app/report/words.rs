//! Report words: states as words and marks, due-date wording, arrows, numbers with their spread,
//! event codes. It must not read the shop or evaluate.

use chrono::{DateTime, NaiveDate, Utc};

use crate::app::figures;
use crate::app::local_time::Zone;
use crate::health::indicators::{Dim, Direction};
use crate::health::State;
use crate::model::EventKind;
use crate::report::{Mark, StateText};
use crate::units::UnitSystem;

pub(super) fn mark(s: State) -> Mark {
    match s {
        // The word says "not judged yet"; the report draws no mark of its own for it yet.
        State::Steady => Mark::Steady,
        // The open square: readings or a baseline are missing, so nothing is said yet.
        State::NotJudged => Mark::None,
        State::Watch => Mark::Watch,
        State::Act => Mark::Act,
    }
}

pub(super) fn state_text(s: State) -> StateText {
    StateText {
        mark: mark(s),
        word: s.as_str().to_string(),
    }
}

pub(super) fn work_status(days_overdue: i64, pulled_forward: Option<&str>) -> String {
    let when = figures::due_words(days_overdue);
    match pulled_forward {
        Some(why) => format!("{when}; brought forward: {why}"),
        None => when,
    }
}

/// The unit a chart's axis is in.
pub(super) fn chart_unit(dim: Dim, sys: UnitSystem) -> String {
    match dim {
        Dim::Ratio => "× baseline".into(),
        Dim::RangeNumber => "ISO 4406 scale number".into(),
        _ => figures::unit(dim, sys).to_string(),
    }
}

pub(super) fn arrow(d: Direction) -> &'static str {
    match d {
        Direction::Rising => "rising ↑",
        Direction::Falling => "falling ↓",
        Direction::Flat => "no clear trend →",
    }
}

/// About three significant figures, trailing zeros dropped: chart labels (`96.2`, `3.51`, `16`).
pub(super) fn trim_number(v: f64) -> String {
    figures::significant(v, 3, 2)
}

/// `value ± spread unit`, the unit written once: `104.6 ± 2.15 L/min`.
pub(super) fn plus_minus(dim: Dim, value: f64, spread: f64, sys: UnitSystem) -> String {
    let v = figures::text(dim, value, sys);
    let s = figures::change(dim, spread, sys);
    let s = s.trim_start_matches(['+', '±', '−']);
    match (v.split_once(' '), s.split_once(' ')) {
        (Some((vn, vu)), Some((sn, su))) if vu == su => format!("{vn} ± {sn} {vu}"),
        _ => format!("{v} ± {s}"),
    }
}

pub(super) fn in_period(at: DateTime<Utc>, from: NaiveDate, to: NaiveDate, zone: Zone) -> bool {
    let d = zone.date_of(at);
    d >= from && d <= to
}

pub(super) fn event_code(kind: EventKind) -> Option<(&'static str, &'static str)> {
    match kind {
        EventKind::FluidChange => Some(("FC", "fluid change")),
        EventKind::FilterChange => Some(("FL", "filter change")),
        EventKind::Rebuild => Some(("RB", "rebuild")),
        EventKind::Repair => Some(("RP", "repair")),
        EventKind::CoolerClean => Some(("CC", "cooler clean")),
        // Top-ups and notes are too many to mark; they are in the unit's history.
        EventKind::TopUp | EventKind::Note => None,
    }
}
