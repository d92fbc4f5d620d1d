//! Values: reading a cell's date-time or number as written in a CSV file. It must not know
//! columns, bounds or the store.

use chrono::{DateTime, Utc};

use crate::app::local_time::{self, Zone};

/// Reads a cell's date or date-time in the shop's time zone `zone` (`app::local_time`: a time
/// without an offset is the shop's wall clock, a date alone is noon there).
pub fn parse_when(input: &str, zone: Zone) -> Result<DateTime<Utc>, String> {
    let s = input.trim();
    // What export writes (UTC with Z) is read without the general parser.
    if s.len() == 20 {
        if let Ok(t) = crate::store::parse_time(s) {
            return Ok(t);
        }
    }
    local_time::read(s, zone).map_err(|e| e.to_string())
}

/// How many significant digits a number is written with (`0.0012500` → 3, `1.5e3` → 2).
pub fn significant_digits(text: &str) -> usize {
    let t = text.trim().trim_start_matches(['+', '-']);
    let mantissa = t.split(['e', 'E']).next().unwrap_or("");
    let digits: String = mantissa.chars().filter(char::is_ascii_digit).collect();
    digits.trim_start_matches('0').trim_end_matches('0').len()
}

/// Parses a number written with a decimal point.
pub fn parse_number(s: &str) -> Result<f64, String> {
    if s.contains(',') {
        return Err(format!(
            "`{s}` is not a number (use a decimal point, not a comma)"
        ));
    }
    match s.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        _ => Err(format!("`{s}` is not a number")),
    }
}
