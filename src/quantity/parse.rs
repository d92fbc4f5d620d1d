//! Parsing: a number and a unit from what was typed, with errors that say what was wrong and
//! what is expected, and one parser per kind. It must not format.

use super::*;

use crate::units::{
    Flow, Force, Length, Power, Pressure, Seconds, Speed, Temperature, Viscosity, Volume,
};

fn expectation(kind: Option<Kind>) -> String {
    match kind {
        Some(k) => format!("{k} such as {}", k.example()),
        None => "a number with its unit, such as 2500psi, 60C or 80mm".to_string(),
    }
}

/// Splits `text` into its leading number and the rest. `None` when it does not start with one.
fn split_number(text: &str) -> Option<(&str, &str)> {
    let bytes = text.as_bytes();
    let mut i = 0;
    if i < bytes.len() && (bytes[i] == b'+' || bytes[i] == b'-') {
        i += 1;
    }
    let int_start = i;
    while i < bytes.len() && bytes[i].is_ascii_digit() {
        i += 1;
    }
    let mut digits = i - int_start;
    if i < bytes.len() && bytes[i] == b'.' {
        i += 1;
        let frac_start = i;
        while i < bytes.len() && bytes[i].is_ascii_digit() {
            i += 1;
        }
        digits += i - frac_start;
    }
    if digits == 0 {
        return None;
    }
    // An exponent only when digits follow, so that a unit may start with `e` one day.
    if i < bytes.len() && (bytes[i] == b'e' || bytes[i] == b'E') {
        let mut j = i + 1;
        if j < bytes.len() && (bytes[j] == b'+' || bytes[j] == b'-') {
            j += 1;
        }
        let exp_start = j;
        while j < bytes.len() && bytes[j].is_ascii_digit() {
            j += 1;
        }
        if j > exp_start {
            i = j;
        }
    }
    Some(text.split_at(i))
}

fn looks_non_finite(text: &str) -> bool {
    let lower = text.trim_start_matches(['+', '-']).to_ascii_lowercase();
    lower.starts_with("nan") || lower.starts_with("inf")
}

/// The number and the unit text of `input`; the unit text is empty when none was written.
fn number_and_unit(input: &str, kind: Option<Kind>) -> Result<(f64, String), ParseError> {
    let text = input.trim();
    let expected = || expectation(kind);
    if text.is_empty() {
        return Err(ParseError::Empty {
            expected: expected(),
        });
    }
    if looks_non_finite(text) {
        return Err(ParseError::NotFinite {
            input: text.to_string(),
            expected: expected(),
        });
    }
    let Some((number, rest)) = split_number(text) else {
        return Err(ParseError::NotANumber {
            input: text.to_string(),
            expected: expected(),
        });
    };
    if rest.starts_with(',') || rest.starts_with('_') {
        return Err(ParseError::Separator {
            input: text.to_string(),
            expected: expected(),
        });
    }
    let value: f64 = number.parse().map_err(|_| ParseError::NotANumber {
        input: text.to_string(),
        expected: expected(),
    })?;
    if !value.is_finite() {
        return Err(ParseError::NotFinite {
            input: text.to_string(),
            expected: expected(),
        });
    }
    Ok((value, rest.trim().to_string()))
}

fn build(input: &str, value: f64, unit: Unit) -> Result<Quantity, ParseError> {
    let si = unit.to_si(value);
    // Finite as typed but not in every unit of its kind (`.5e307m3` is infinite in litres), or
    // so small that a unit holds it only with lost digits: it could not be shown, stored and
    // read back, so it is refused like an infinite number.
    let representable = Unit::ALL
        .iter()
        .filter(|u| u.kind() == unit.kind())
        .map(|u| u.from_si(si))
        .all(|x| {
            // A temperature is 0 in °C or °F without being lost; any other zero here is an
            // underflow of a value that was not zero.
            let lost = x == 0.0 && si != 0.0 && unit.kind() != Kind::Temperature;
            x.is_finite() && !x.is_subnormal() && !lost
        });
    if !si.is_finite() || !representable {
        return Err(ParseError::NotFinite {
            input: input.trim().to_string(),
            expected: expectation(Some(unit.kind())),
        });
    }
    if unit.kind() == Kind::Temperature && si < 0.0 {
        return Err(ParseError::BelowAbsoluteZero {
            input: input.trim().to_string(),
        });
    }
    Ok(Quantity::from_si(unit.kind(), si))
}

fn lookup_unit(input: &str, unit_text: &str, kind: Option<Kind>) -> Result<Unit, ParseError> {
    Unit::from_text(unit_text).ok_or_else(|| ParseError::UnknownUnit {
        input: input.trim().to_string(),
        unit: unit_text.to_string(),
        expected: expectation(kind),
    })
}

/// Parses a number with its unit, of any kind: `2500psi`, `172.4 bar`, `60C`, `3.15in`.
/// The unit is required.
pub fn parse(input: &str) -> Result<Quantity, ParseError> {
    let (value, unit_text) = number_and_unit(input, None)?;
    if unit_text.is_empty() {
        return Err(ParseError::NoUnit {
            input: input.trim().to_string(),
            expected: expectation(None),
        });
    }
    let unit = lookup_unit(input, &unit_text, None)?;
    build(input, value, unit)
}

/// Parses a quantity of one kind. A bare number is accepted only where the kind has a unit
/// common to both unit systems (cSt for viscosity, seconds for time); otherwise it is a
/// [`ParseError::MissingUnit`].
pub fn parse_as(input: &str, kind: Kind) -> Result<Quantity, ParseError> {
    let (value, unit_text) = number_and_unit(input, Some(kind))?;
    let unit = if unit_text.is_empty() {
        kind.bare_unit().ok_or_else(|| ParseError::MissingUnit {
            input: input.trim().to_string(),
            kind,
        })?
    } else {
        lookup_unit(input, &unit_text, Some(kind))?
    };
    if unit.kind() != kind {
        return Err(ParseError::WrongKind {
            input: input.trim().to_string(),
            found: unit.kind(),
            expected: kind,
        });
    }
    build(input, value, unit)
}

macro_rules! typed_parser {
    ($(#[$doc:meta])* $fn_name:ident, $kind:ident, $ty:ty) => {
        $(#[$doc])*
        pub fn $fn_name(input: &str) -> Result<$ty, ParseError> {
            match parse_as(input, Kind::$kind)? {
                Quantity::$kind(q) => Ok(q),
                other => Err(ParseError::WrongKind {
                    input: input.trim().to_string(),
                    found: other.kind(),
                    expected: Kind::$kind,
                }),
            }
        }
    };
}

typed_parser!(
    /// `80mm`, `3.15in`, ...
    parse_length, Length, Length
);

typed_parser!(
    /// `200L`, `52.8gal`, ...
    parse_volume, Volume, Volume
);

typed_parser!(
    /// `37.9lpm`, `12gpm`, ...
    parse_flow, Flow, Flow
);

typed_parser!(
    /// `172.4bar`, `2500psi`, ...
    parse_pressure, Pressure, Pressure
);

typed_parser!(
    /// `60C`, `140F`, `333.15K`, ...
    parse_temperature, Temperature, Temperature
);

typed_parser!(
    /// `2.5s`, `2.5` (seconds), `1.5min`, ...
    parse_time, Time, Seconds
);

typed_parser!(
    /// `46cSt`, `46` (cSt), `46mm2/s`, ...
    parse_viscosity, Viscosity, Viscosity
);

typed_parser!(
    /// `13kW`, `17.5hp`, `44530BTU/h`, ...
    parse_power, Power, Power
);

typed_parser!(
    /// `50kN`, `11240lbf`, `500N`, ...
    parse_force, Force, Force
);

typed_parser!(
    /// `4.5m/s`, `15ft/s`, ...
    parse_speed, Speed, Speed
);
