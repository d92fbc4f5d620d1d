//! Display: a quantity in a unit system with the fewest decimals that read back to the same
//! value. It must not parse.

use super::*;

use crate::units::UnitSystem;

/// Decimals that keep at least three significant digits of `v`, never fewer than `min`.
/// Values too small to show in twelve decimals are shown as zero.
fn decimals_for(v: f64, min: usize) -> usize {
    if v == 0.0 || !v.is_finite() {
        return min;
    }
    let needed = 2.0 - v.abs().log10().floor();
    if needed > 12.0 {
        min
    } else if needed > min as f64 {
        needed as usize
    } else {
        min
    }
}

fn tidy_zero(text: String) -> String {
    let is_negative_zero = text.starts_with('-') && text[1..].chars().all(|c| c == '0' || c == '.');
    if is_negative_zero {
        text[1..].to_string()
    } else {
        text
    }
}

/// `v` with the decimals [`decimals_for`] asks, judged on the rounded value so that a value
/// rounding up to the next power of ten (0.09999 → 0.100) is shown as that value would be.
fn display_number(v: f64, min: usize) -> String {
    let d = decimals_for(v, min);
    let first = format!("{v:.d$}");
    let rounded: f64 = first.parse().unwrap_or(v);
    let d2 = decimals_for(rounded, min);
    tidy_zero(within_precision(
        v,
        if d2 == d { first } else { format!("{v:.d2$}") },
    ))
}

/// Significant digits a double carries through a round trip of text.
const MAX_DIGITS: usize = 15;

/// `text` (the display of `v`) cut back to [`MAX_DIGITS`] significant digits, in exponent form
/// when the integer part alone is longer: more digits are past a double's precision, and reading
/// them back can land on a neighbouring value that displays differently.
fn within_precision(v: f64, text: String) -> String {
    let digits = text.bytes().filter(u8::is_ascii_digit).count();
    let leading_zeros = text
        .trim_start_matches('-')
        .bytes()
        .take_while(|&b| b == b'0' || b == b'.')
        .filter(|&b| b == b'0')
        .count();
    if digits - leading_zeros <= MAX_DIGITS {
        return text;
    }
    let int_digits = text
        .trim_start_matches('-')
        .split('.')
        .next()
        .map_or(0, str::len);
    if int_digits < MAX_DIGITS {
        let d = MAX_DIGITS - int_digits;
        format!("{v:.d$}")
    } else {
        let e = MAX_DIGITS - 1;
        format!("{v:.e$e}")
    }
}

/// The display of a temperature `v` in `unit`, never rounded below absolute zero (0.001 K shown
/// in °F to one decimal would be `-459.7`, colder than anything; it is shown as `-459.6`).
fn display_temperature(v: f64, unit: Unit) -> String {
    let text = display_number(v, unit.decimals());
    match text.parse::<f64>() {
        Ok(shown) if unit.to_si(shown) < 0.0 => {
            let d = text.split('.').nth(1).map_or(0, str::len);
            let step = 10f64.powi(-(d as i32));
            let up = (v / step).ceil() * step;
            tidy_zero(format!("{up:.d$}"))
        }
        _ => text,
    }
}

/// The number of a display of `v` in `unit`.
fn display_value(v: f64, unit: Unit) -> String {
    if unit.kind() == Kind::Temperature {
        display_temperature(v, unit)
    } else {
        display_number(v, unit.decimals())
    }
}

/// Formats a quantity in `unit` for display: `172.4 bar`, `140.0 °F`; `None` when the unit is
/// of another kind. Shows the unit's usual decimals, more where needed to keep three
/// significant digits.
pub fn format_in(q: Quantity, unit: Unit) -> Option<String> {
    let v = q.value_in(unit)?;
    Some(format!("{} {}", display_value(v, unit), unit.symbol()))
}

/// Formats a quantity for display in the shop's unit system (metric: °C bar L/min mm L cSt;
/// US: °F psi GPM in gal cSt). [`parse`] reads the result back to the displayed precision,
/// and `format(parse(format(x)))` equals `format(x)`.
pub fn format(q: Quantity, system: UnitSystem) -> String {
    let unit = q.kind().display_unit(system);
    let v = unit.from_si(q.si());
    format!("{} {}", display_value(v, unit), unit.symbol())
}

/// Formats a quantity with the shortest decimal that reads back to the same number in the
/// display unit, for files and machine output: `parse(format_exact(x))` equals `x` to within
/// the rounding of one unit conversion.
pub fn format_exact(q: Quantity, system: UnitSystem) -> String {
    let unit = q.kind().display_unit(system);
    format!("{} {}", unit.from_si(q.si()), unit.symbol())
}
