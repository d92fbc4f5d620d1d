//! Values: reading a cell's date-time or number as written in a CSV file. It must not know
//! columns, bounds or the store.

use chrono::{DateTime, FixedOffset, NaiveDate, NaiveTime, TimeZone, Timelike, Utc};

/// Parses an ISO 8601 date or date-time; see the module documentation of `exchange`.
pub fn parse_when(input: &str) -> Result<DateTime<Utc>, String> {
    let t = parse_when_inner(input)?;
    // chrono reads second 60 as a leap second (a nanosecond part of one second or more);
    // the shop keeps civil time without leap seconds.
    if t.nanosecond() >= 1_000_000_000 {
        return Err(format!(
            "`{}`: second 60 is a leap second, which is not a valid time here; write :59 or \
             the first second of the next minute",
            input.trim()
        ));
    }
    Ok(t)
}

fn parse_when_inner(input: &str) -> Result<DateTime<Utc>, String> {
    let s = input.trim();
    if s.len() == 20 {
        if let Ok(t) = crate::store::parse_time(s) {
            return Ok(t);
        }
    }
    let refuse = || {
        format!(
            "`{s}` is not an ISO 8601 date or time; write YYYY-MM-DD or YYYY-MM-DDTHH:MM:SSZ \
             (dates like 03/04/2025 are refused: day and month could be either way round)"
        )
    };
    let bytes = s.as_bytes();
    if bytes.len() < 10 || !s.is_char_boundary(10) {
        return Err(refuse());
    }
    let (date_part, rest) = s.split_at(10);
    let db = date_part.as_bytes();
    let digits = |r: std::ops::Range<usize>| db[r].iter().all(u8::is_ascii_digit);
    if !(digits(0..4) && db[4] == b'-' && digits(5..7) && db[7] == b'-' && digits(8..10)) {
        return Err(refuse());
    }
    let date = NaiveDate::parse_from_str(date_part, "%Y-%m-%d")
        .map_err(|_| format!("`{date_part}` is not a calendar date"))?;
    if rest.is_empty() {
        return Ok(date.and_time(NaiveTime::MIN).and_utc());
    }
    let rest = rest.strip_prefix(['T', 't', ' ']).ok_or_else(refuse)?;
    // Split the clock time from the zone suffix.
    let zone_at = rest.find(['Z', 'z', '+', '-']).unwrap_or(rest.len());
    let (clock, zone) = rest.split_at(zone_at);
    if clock.contains('.') || clock.contains(',') {
        return Err(format!(
            "`{s}`: times are kept to the second; leave out the fraction of a second"
        ));
    }
    let time = match clock.len() {
        5 => NaiveTime::parse_from_str(clock, "%H:%M"),
        8 => NaiveTime::parse_from_str(clock, "%H:%M:%S"),
        _ => return Err(refuse()),
    }
    .map_err(|_| format!("`{clock}` is not a time of day (HH:MM or HH:MM:SS)"))?;
    let naive = date.and_time(time);
    let offset_secs = match zone {
        "" | "Z" | "z" => 0,
        z => {
            let sign = if z.starts_with('-') { -1 } else { 1 };
            let body = &z[1..];
            let (h, m) = match body.len() {
                2 => (body, "00"),
                4 if body.bytes().all(|b| b.is_ascii_digit()) => body.split_at(2),
                5 if body.as_bytes()[2] == b':' => (&body[..2], &body[3..]),
                _ => {
                    return Err(format!(
                        "`{z}` is not a time-zone offset (Z, +01:00, -05:00)"
                    ))
                }
            };
            let (Ok(h), Ok(m)) = (h.parse::<i32>(), m.parse::<i32>()) else {
                return Err(format!(
                    "`{z}` is not a time-zone offset (Z, +01:00, -05:00)"
                ));
            };
            if h > 23 || m > 59 {
                return Err(format!(
                    "`{z}` is not a time-zone offset (Z, +01:00, -05:00)"
                ));
            }
            sign * (h * 3600 + m * 60)
        }
    };
    let offset = FixedOffset::east_opt(offset_secs).ok_or_else(refuse)?;
    let local = offset
        .from_local_datetime(&naive)
        .single()
        .ok_or_else(refuse)?;
    Ok(local.with_timezone(&Utc))
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
