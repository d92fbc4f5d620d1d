//! Display helpers of the desktop app: the health engine's SI figures in the shop's units
//! (through `app::figures`), states as numbers for the `.slint` side, dates.
//!
//! Conversion only; nothing here decides a state or a limit.

use chrono::{DateTime, NaiveDate, Utc};

use crate::app::figures;
use crate::app::local_time::Zone;
use crate::app::vocab::Dim;
use crate::app::vocab::State;
use crate::units::UnitSystem;

/// The number the `.slint` state marks take: 0 steady, 1 watch, 2 act, 3 not judged yet.
pub fn state_num(s: State) -> i32 {
    match s {
        State::Steady => 0,
        State::NotJudged => 3,
        State::Watch => 1,
        State::Act => 2,
    }
}

/// A value of the health engine (SI for physical dimensions) in the display unit.
pub fn dim_value(dim: Dim, si: f64, sys: UnitSystem) -> f64 {
    figures::value(dim, si, sys)
}

/// A figure with its unit: `36.4 L/min`, `7.2 K`.
pub fn dim_text(dim: Dim, si: f64, sys: UnitSystem) -> String {
    figures::text(dim, si, sys)
}

/// `t`'s day in the shop's time zone.
pub fn date(t: DateTime<Utc>, zone: Zone) -> String {
    zone.show_date(t)
}

pub fn day(d: NaiveDate) -> String {
    d.format("%Y-%m-%d").to_string()
}
