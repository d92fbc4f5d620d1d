//! Display helpers of the desktop app: the health engine's SI figures in the shop's units
//! (through `app::figures`), states as the `.slint` side's `HealthState`, dates.
//!
//! Conversion only; nothing here decides a state or a limit.

use chrono::{DateTime, NaiveDate, Utc};

use crate::app::figures;
use crate::app::local_time::Zone;
use crate::app::vocab::Dim;
use crate::app::vocab::State;
use crate::gui::ui::HealthState;
use crate::units::UnitSystem;

/// The health engine's state as the `.slint` state marks take it, one for one.
impl From<State> for HealthState {
    fn from(s: State) -> HealthState {
        match s {
            State::Steady => HealthState::Steady,
            State::Watch => HealthState::Watch,
            State::Act => HealthState::Act,
            State::NotJudged => HealthState::NotJudged,
        }
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
