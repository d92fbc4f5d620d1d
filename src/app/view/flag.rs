//! A flag as every face shows it: its state, what drifted, the usual next step, the figure
//! that raised it against its limit (and baseline), since when, and who has seen it. Nothing
//! here judges; the flag comes from the engine through `app::status`.

use chrono::NaiveDate;

use super::words::{state_mark, state_word, StateMark};
use crate::app::figures;
use crate::app::local_time::Zone;
use crate::health::{Flag, FlagKind, State};
use crate::units::UnitSystem;

/// One flag, display-ready.
#[derive(Clone, Debug, PartialEq)]
pub struct FlagView {
    pub kind: FlagKind,
    /// The flag's key (`heat_rise`, `water`, …), as acknowledged and in JSON.
    pub kind_key: &'static str,
    pub state: State,
    pub state_word: &'static str,
    pub mark: StateMark,
    /// What drifted and by how much, in a sentence.
    pub what: String,
    /// What a technician usually checks or does next.
    pub next_step: String,
    /// `what` and `next_step` together.
    pub message: String,
    /// The figure that raised it against the limit reached, in the shop's units: `heat rise
    /// over baseline +11.2 K (act at +10.0 K)`.
    pub figure: String,
    pub since: NaiveDate,
    /// `seen by A. Person on 2026-03-02: note`, once acknowledged.
    pub seen: Option<String>,
}

/// A flag in the shop's units, its dates in the shop's time zone.
pub fn flag_view(f: &Flag, sys: UnitSystem, zone: Zone) -> FlagView {
    FlagView {
        kind: f.kind,
        kind_key: f.kind.as_str(),
        state: f.state,
        state_word: state_word(f.state),
        mark: state_mark(f.state),
        what: f.what.clone(),
        next_step: f.next_step.clone(),
        message: f.message.clone(),
        figure: figures::flag_figure(f, sys),
        since: f.since,
        seen: seen_text(f, zone),
    }
}

/// Who has seen flag `f`, when and with what note, once it is acknowledged: `seen by A.
/// Person on 2026-03-02: note`.
pub fn seen_text(f: &Flag, zone: Zone) -> Option<String> {
    match &f.acknowledgement {
        Some(a) if f.acknowledged => Some(format!(
            "seen by {} on {}{}",
            a.by,
            zone.show_date(a.at),
            if a.note.trim().is_empty() {
                String::new()
            } else {
                format!(": {}", a.note.trim())
            }
        )),
        _ => None,
    }
}
