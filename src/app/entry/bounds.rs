//! Bounds: what the forms refuse as physically impossible and the thresholds at which they ask
//! about an unusual value (docs/engineering.md, "Physical bounds of readings"). It must not read
//! or write the shop.

use super::*;

use crate::quantity::Kind;
use crate::units::{Temperature, UnitSystem};

/// Lowest and highest oil or air temperature accepted, °C (docs/engineering.md, "Physical bounds
/// of readings").
pub const TEMP_MIN_C: f64 = crate::bounds::TEMP_C.0;
pub const TEMP_MAX_C: f64 = crate::bounds::TEMP_C.1;
/// Highest working pressure accepted, bar (the one bounds table's).
pub const PRESSURE_MAX_BAR: f64 = crate::bounds::PRESSURE_BAR.hi;
/// Longest timed stroke accepted, s (the one bounds table's).
pub const STROKE_MAX_S: f64 = crate::bounds::STROKE_TIME_S.hi;

// Unusual (common practice, no published source). A reading far from the unit's recent ones,
// a pressure above the relief setting, air warmer than the oil and a case drain above rated
// flow are the screening's questions (`health::screen`), asked the same way at import.
/// Oil above this is rare in a running press and more often a misread (°C).
pub(super) const OIL_HOT_C: f64 = 90.0;
/// Workshop air outside this range is asked about (°C).
pub(super) const AMBIENT_RANGE_C: (f64, f64) = (-20.0, 50.0);
/// Shorter than a person can time with a stopwatch (s).
pub(super) const STROKE_MIN_HAND_S: f64 = 0.3;

pub(super) fn bound_temp(
    key: &str,
    label: &str,
    t: f64,
    system: UnitSystem,
    out: &mut Vec<Problem>,
) -> bool {
    let c = Temperature(t).c();
    let lo = Temperature::from_c(TEMP_MIN_C).si();
    let hi = Temperature::from_c(TEMP_MAX_C).si();
    if !(TEMP_MIN_C..=TEMP_MAX_C).contains(&c) {
        out.push(Problem::refused(
            key,
            format!(
                "{label} {} is outside {} to {}, the range sumpbook accepts for oil or air; check the reading",
                show(Kind::Temperature, t, system),
                show(Kind::Temperature, lo, system),
                show(Kind::Temperature, hi, system)
            ),
        ));
        return false;
    }
    true
}
