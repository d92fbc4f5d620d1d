//! The report's printed form of the presentation layer's words: a state's mark as the page
//! engine draws it, the period test. The words themselves are
//! `app::view`'s. It must not read the shop or evaluate.

use chrono::{DateTime, NaiveDate, Utc};

use crate::app::local_time::Zone;
use crate::app::view::{state_mark, state_word, StateMark};
use crate::health::State;
use crate::report::{Mark, StateText};

/// The page engine's mark of a state (the open square for not judged yet).
pub(super) fn mark_of(m: StateMark) -> Mark {
    match m {
        StateMark::Steady => Mark::Steady,
        StateMark::NotJudged => Mark::None,
        StateMark::Watch => Mark::Watch,
        StateMark::Act => Mark::Act,
    }
}

pub(super) fn mark(s: State) -> Mark {
    mark_of(state_mark(s))
}

pub(super) fn state_text(s: State) -> StateText {
    StateText {
        mark: mark(s),
        word: state_word(s).to_string(),
    }
}

pub(super) fn in_period(at: DateTime<Utc>, from: NaiveDate, to: NaiveDate, zone: Zone) -> bool {
    let d = zone.date_of(at);
    d >= from && d <= to
}
