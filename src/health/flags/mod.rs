//! Flags: each indicator judged against its limits (docs/engineering.md, "Default limits") check
//! by check, so that a flag
//! knows its state, value, limit, the date it began and a sentence a technician can act on;
//! and acknowledgements laid over them.
//!
//! Pure: the computed indicators, the planned work, the limits and a date in; flags out.

use chrono::{DateTime, NaiveDate, Utc};
use serde::{Deserialize, Serialize};

use super::baseline::BaselineIndicator;
use super::indicators::{CheckPoint, Computed, Dim, DriftPoint, Restart, SamplePoint};
use super::limits::{Limit, LimitKey, Limits};
use super::plan::WorkItem;
use super::screen::{QuestionedStroke, QuestionedTemp, QuestionedWater};
use super::text::{flow, num, seconds, tdiff, temp, visc};
use super::{Calendar, State};
use crate::model::{Acknowledgement, EventKind, FilterState, OilLevel, UnitHistory};
use crate::units::UnitSystem;

mod grade;
mod questioned;
mod raise;

use grade::*;
pub use questioned::Questioned;
use questioned::{stroke_points, water_points, WaterPoints};
pub use raise::raise;
#[cfg(test)]
mod tests;

macro_rules! flag_kinds {
    ($($variant:ident = $text:literal),+ $(,)?) => {
        /// The kinds of flag (a fixed set; the names are part of the JSON output).
        #[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
        pub enum FlagKind { $(#[serde(rename = $text)] $variant),+ }

        impl FlagKind {
            pub const ALL: &'static [FlagKind] = &[$(FlagKind::$variant),+];
            pub fn as_str(self) -> &'static str {
                match self { $(FlagKind::$variant => $text),+ }
            }
        }
    };
}

flag_kinds! {
    LostFlow = "lost_flow",
    LeakConductance = "leak_conductance",
    CaseDrain = "case_drain",
    HeatRise = "heat_rise",
    ReservoirTemp = "reservoir_temp",
    Viscosity = "viscosity",
    Cleanliness = "cleanliness",
    Water = "water",
    Acid = "acid",
    Filter = "filter",
    OilLevel = "oil_level",
    Drift = "drift",
    Overdue = "overdue",
}

impl std::fmt::Display for FlagKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

impl std::str::FromStr for FlagKind {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        FlagKind::ALL
            .iter()
            .copied()
            .find(|k| k.as_str() == s.trim())
            .ok_or_else(|| {
                format!(
                    "`{}` is not a flag kind; expected one of {}",
                    s.trim(),
                    FlagKind::ALL
                        .iter()
                        .map(|k| k.as_str())
                        .collect::<Vec<_>>()
                        .join("|")
                )
            })
    }
}

/// Who acknowledged a flag, when and with what note.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct AckInfo {
    pub by: String,
    pub at: DateTime<Utc>,
    pub note: String,
}

/// One flag raised on a unit.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Flag {
    pub kind: FlagKind,
    /// `Watch` or `Act`.
    pub state: State,
    /// The date the flag began (first check or sample of the current run at watch or worse).
    pub since: NaiveDate,
    /// When the flag reached its current state.
    pub state_since: DateTime<Utc>,
    /// One sentence: what drifted, by how much, what to check first.
    pub message: String,
    /// The first part of `message`: what drifted and by how much.
    pub what: String,
    /// The second part of `message`: what a technician usually checks or does next.
    pub next_step: String,
    pub acknowledged: bool,
    pub acknowledgement: Option<AckInfo>,
    /// The figure that raised it, in the form a tile carries figures (SI for physical
    /// dimensions, with its dimension), so every face shows the same number for it and
    /// converts it through `units`; `None` for a flag that is read, not measured (filter
    /// indicator, oil level).
    pub figure: Option<Figure>,
    /// The last maintenance in the era that restarted this flag's detectors: the flag is
    /// judged on what was read after it.
    pub restarted: Option<Restart>,
}

/// A flag's message in its two parts, `what` and `next_step`: every message is written "what
/// drifted, by how much: what to check first."
pub fn message_parts(message: &str) -> (String, String) {
    match message.split_once(": ") {
        Some((w, n)) => (w.to_string(), n.trim_end_matches('.').to_string()),
        None => (message.to_string(), String::new()),
    }
}

/// A flag's figure: the judged value, the limit it reached and the baseline it is measured
/// from, all in `dim` (SI for physical dimensions, as `Tile`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Figure {
    pub dim: Dim,
    pub value: f64,
    pub limit: Option<f64>,
    pub baseline: Option<f64>,
    /// The indicator a statistical drift was found on (a drift flag watches several), so the
    /// figure names what it measures.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub of: Option<crate::health::baseline::BaselineIndicator>,
}

/// The `overdue` flag of a unit from its planned work: the worst overdue item sets the state,
/// the earliest sets the date it began.
pub fn overdue(
    work: &[WorkItem],
    limits: &Limits,
    at: DateTime<Utc>,
    calendar: Calendar,
) -> Option<Flag> {
    let overdue: Vec<&WorkItem> = work.iter().filter(|w| w.state > State::Steady).collect();
    let worst = overdue.iter().max_by_key(|w| (w.state, w.days_overdue))?;
    let ol = limits.get(LimitKey::OverdueDays);
    let watch_days = ol.watch.unwrap_or(1.0).max(0.0) as i64;
    let act_days = ol.act.unwrap_or(14.0).max(0.0) as i64;
    let start = overdue.iter().map(|w| w.due).min().unwrap_or(worst.due)
        + chrono::Duration::days(watch_days);
    let state_since = worst.due
        + chrono::Duration::days(if worst.state == State::Act {
            act_days
        } else {
            watch_days
        });
    let list: Vec<String> = overdue
        .iter()
        .map(|w| {
            format!(
                "the {} due {} ({} days over)",
                w.kind.label(),
                w.due,
                w.days_overdue
            )
        })
        .collect();
    let g = Graded {
        at: calendar.start(state_since).unwrap_or(at),
        state: worst.state,
        value: Some(worst.days_overdue as f64),
        limit: if worst.state == State::Act {
            ol.act
        } else {
            ol.watch
        },
    };
    let verb = if list.len() > 1 { "are" } else { "is" };
    let mut message = format!(
        "{} {verb} overdue: do it, or record it done.",
        list.join(" and ")
    );
    if let Some(first) = message.get(..1) {
        message = first.to_uppercase() + &message[1..];
    }
    Some(new_flag(FlagKind::Overdue, &g, start, g.at, message))
}

/// Marks flags someone has seen: an acknowledgement of the same kind and state given since the
/// flag reached that state. A flag whose state has changed since is not acknowledged.
pub fn mark_acknowledged(flags: &mut [Flag], acks: &[Acknowledgement]) {
    for f in flags.iter_mut() {
        let seen = acks
            .iter()
            .filter(|a| {
                a.kind == f.kind.as_str() && a.state == f.state.as_str() && a.at >= f.state_since
            })
            .max_by_key(|a| (a.at, a.id));
        if let Some(a) = seen {
            f.acknowledged = true;
            f.acknowledgement = Some(AckInfo {
                by: a.by.clone(),
                at: a.at,
                note: a.note.clone(),
            });
        }
    }
}
