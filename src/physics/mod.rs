//! The engineering core: pure functions of fluid power, viscosity, cleanliness, oil life and
//! trend statistics, each checked against a named outside source in the tests.
//!
//! Inputs and outputs are the SI newtypes of `units`; nothing here reads files, SQL or the UI,
//! and nothing here decides a unit's health state (that is the health engine's job). Errors
//! are [`PhysicsError`], whose messages say what is wrong and what is expected.

pub mod cleanliness;
pub mod energy;
pub mod hydraulics;
pub mod oil_life;
pub mod stats;
pub mod viscosity;

/// Why a computation cannot be done with the inputs given.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum PhysicsError {
    #[error("{what} must be a finite number, got {value}")]
    NotFinite { what: &'static str, value: f64 },
    #[error("{what} must be greater than zero, got {value}")]
    NotPositive { what: &'static str, value: String },
    #[error("{what} must not be negative, got {value}")]
    Negative { what: &'static str, value: String },
    #[error("{what} is {value}; expected {expected}")]
    OutOfRange {
        what: &'static str,
        value: String,
        expected: String,
    },
    #[error("the rod ({rod}) must be thinner than the bore ({bore})")]
    RodNotThinnerThanBore { bore: String, rod: String },
    #[error("a retracting stroke needs the rod diameter: the oil fills the annulus between bore and rod")]
    RodMissing,
    #[error("KV100 ({kv100}) must be below KV40 ({kv40}): oil thins as it warms")]
    Kv100NotBelowKv40 { kv40: String, kv100: String },
    #[error("the viscosity index is not defined for KV100 below 2 mm²/s (cSt); got {kv100}")]
    Kv100BelowTwo { kv100: String },
    #[error(
        "viscosity must fall as temperature rises: {low_t} at {t_low} but {high_t} at {t_high}"
    )]
    ViscosityNotFalling {
        t_low: String,
        low_t: String,
        t_high: String,
        high_t: String,
    },
    #[error("the two viscosity points must be at different temperatures (both at {at})")]
    SameTemperature { at: String },
    #[error(
        "particle counts must not rise with size: got {counts} at ≥4/≥6/≥14 µm(c); expected counts \
         that fall or stay level from ≥4 to ≥14 µm, since every particle ≥14 µm is also counted at ≥6 and ≥4 µm"
    )]
    CountsRisingWithSize { counts: String },
    #[error("`{input}` is not an ISO 4406 code: {reason}; expected three scale numbers such as 18/16/13, -/16/13 or ≥19/16/13")]
    BadCode { input: String, reason: String },
    #[error("the hour meter goes back from {from} h to {to} h; expected readings in time order")]
    HoursDecreasing { from: f64, to: f64 },
    #[error("need at least {need} points, got {got}")]
    TooFewPoints { need: usize, got: usize },
    #[error("all points are at the same time; a slope needs at least two different times")]
    NoSpreadInX,
    #[error("built-in data is damaged: {0}")]
    Data(String),
}

pub(crate) fn finite(what: &'static str, v: f64) -> Result<f64, PhysicsError> {
    if v.is_finite() {
        Ok(v)
    } else {
        Err(PhysicsError::NotFinite { what, value: v })
    }
}

/// `v` when finite and > 0; `shown` renders it with its unit for the message.
pub(crate) fn positive(
    what: &'static str,
    v: f64,
    shown: impl Fn(f64) -> String,
) -> Result<f64, PhysicsError> {
    finite(what, v)?;
    if v > 0.0 {
        Ok(v)
    } else {
        Err(PhysicsError::NotPositive {
            what,
            value: shown(v),
        })
    }
}

/// `v` when finite and ≥ 0.
pub(crate) fn non_negative(
    what: &'static str,
    v: f64,
    shown: impl Fn(f64) -> String,
) -> Result<f64, PhysicsError> {
    finite(what, v)?;
    if v >= 0.0 {
        Ok(v)
    } else {
        Err(PhysicsError::Negative {
            what,
            value: shown(v),
        })
    }
}

/// A number for a message: six significant digits, no trailing zeros.
pub(crate) fn num(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v}");
    }
    let decimals = (5.0 - v.abs().log10().floor()).clamp(0.0, 15.0) as usize;
    let text = format!("{v:.decimals$}");
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

pub(crate) fn show_mm(si: f64) -> String {
    format!("{} mm", num(si * 1000.0))
}

pub(crate) fn show_cst(si: f64) -> String {
    format!("{} cSt", num(si * 1.0e6))
}

pub(crate) fn show_c(kelvin: f64) -> String {
    format!("{} °C", num(kelvin - crate::units::KELVIN_AT_0C))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn message_numbers_are_short() {
        assert_eq!(num(0.1 * 1000.0), "100");
        assert_eq!(num(92.4296472453428), "92.4296");
        assert_eq!(num(-0.00012345678), "-0.000123457");
        assert_eq!(num(0.0), "0");
        assert_eq!(show_cst(46.0e-6), "46 cSt");
    }
}
