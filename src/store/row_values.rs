//! How times, names of a closed set and confirmations are written to a column and read back
//! from one: times as `YYYY-MM-DDTHH:MM:SSZ` text to the second, names as their text.

use chrono::{DateTime, Datelike, NaiveDate, Timelike, Utc};

use super::db::Row;
use super::StoreError;

/// Formats a time for a column: `YYYY-MM-DDTHH:MM:SSZ`. Sub-second parts are refused, not
/// dropped, because stored readings are evidence.
pub fn fmt_time(field: &str, t: &DateTime<Utc>) -> Result<String, StoreError> {
    if t.nanosecond() != 0 {
        return Err(StoreError::Invalid {
            field: field.into(),
            reason: "times are kept to the second; fractions of a second are not stored".into(),
        });
    }
    Ok(fmt_time_stamp(t))
}

/// Formats a time to the second, dropping any fraction: for stamps the program makes itself
/// (edit times, acknowledgement times), not for readings.
pub fn fmt_time_stamp(t: &DateTime<Utc>) -> String {
    let year = t.year();
    if (0..=9999).contains(&year) {
        // Digit by digit: an import formats a million of these, and `write!` took a twentieth
        // of its time.
        let two = |v: u32| [b'0' + (v / 10 % 10) as u8, b'0' + (v % 10) as u8];
        let y = year as u32;
        let [y1, y2] = two(y / 100);
        let [y3, y4] = two(y % 100);
        let [m1, m2] = two(t.month());
        let [d1, d2] = two(t.day());
        let [h1, h2] = two(t.hour());
        let [i1, i2] = two(t.minute());
        let [s1, s2] = two(t.second());
        let b = [
            y1, y2, y3, y4, b'-', m1, m2, b'-', d1, d2, b'T', h1, h2, b':', i1, i2, b':', s1, s2,
            b'Z',
        ];
        return b.iter().map(|&c| char::from(c)).collect();
    }
    let mut s = String::with_capacity(20);
    use std::fmt::Write;
    // Writing to a String cannot fail.
    let _ = write!(
        s,
        "{:04}-{:02}-{:02}T{:02}:{:02}:{:02}Z",
        t.year(),
        t.month(),
        t.day(),
        t.hour(),
        t.minute(),
        t.second()
    );
    s
}

/// Parses a stored `YYYY-MM-DDTHH:MM:SSZ`.
pub fn parse_time(s: &str) -> Result<DateTime<Utc>, StoreError> {
    let bad = || StoreError::Corrupt(format!("`{s}` is not a stored time"));
    let b = s.as_bytes();
    if b.len() != 20
        || b[4] != b'-'
        || b[7] != b'-'
        || b[10] != b'T'
        || b[13] != b':'
        || b[16] != b':'
        || b[19] != b'Z'
    {
        return Err(bad());
    }
    let num = |range: std::ops::Range<usize>| -> Result<u32, StoreError> {
        let mut v = 0u32;
        for &c in &b[range] {
            if !c.is_ascii_digit() {
                return Err(bad());
            }
            v = v * 10 + u32::from(c - b'0');
        }
        Ok(v)
    };
    let year = i32::try_from(num(0..4)?).map_err(|_| bad())?;
    let date = NaiveDate::from_ymd_opt(year, num(5..7)?, num(8..10)?).ok_or_else(bad)?;
    let dt = date
        .and_hms_opt(num(11..13)?, num(14..16)?, num(17..19)?)
        .ok_or_else(bad)?;
    Ok(dt.and_utc())
}

/// A column time read from a row, as a model time.
pub(super) fn time_col(row: &Row<'_>, idx: usize) -> Result<DateTime<Utc>, StoreError> {
    let Some(s) = row.text(idx)? else {
        return Err(StoreError::Corrupt(format!(
            "column {idx} holds no time where one is required"
        )));
    };
    parse_time(s)
}

/// A text column holding one of a closed set of names.
pub(super) fn enum_col<T: std::str::FromStr<Err = String>>(
    row: &Row<'_>,
    idx: usize,
) -> Result<T, StoreError> {
    let Some(s) = row.text(idx)? else {
        return Err(StoreError::Corrupt(format!(
            "column {idx} holds no value where one is required"
        )));
    };
    s.parse::<T>().map_err(StoreError::Corrupt)
}

pub(super) fn opt_enum_col<T: std::str::FromStr<Err = String>>(
    row: &Row<'_>,
    idx: usize,
) -> Result<Option<T>, StoreError> {
    row.text(idx)?
        .map(|s| s.parse::<T>().map_err(StoreError::Corrupt))
        .transpose()
}

/// Who confirmed a questioned reading and when, from the two columns `confirmed_by` and
/// `confirmed_at` at `idx` and `idx + 1` (both NULL when nobody has).
pub(super) fn confirmation_cols(
    row: &Row<'_>,
    idx: usize,
) -> Result<Option<crate::model::Confirmation>, StoreError> {
    let Some(by) = row.text(idx)? else {
        return Ok(None);
    };
    let by = by.to_string();
    Ok(Some(crate::model::Confirmation {
        by,
        at: time_col(row, idx + 1)?,
    }))
}

/// The `confirmed_at` column text of a confirmation (`None` when there is none).
pub(super) fn confirmation_time(
    c: &Option<crate::model::Confirmation>,
) -> Result<Option<String>, StoreError> {
    c.as_ref()
        .map(|k| fmt_time("confirmed_at", &k.at))
        .transpose()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn time_stamps_are_written_like_the_format_string_would() {
        // Each digit position, the year 0 and 9999 edges, and the fallback beyond them.
        for text in [
            "2024-02-29T23:59:07Z",
            "0000-01-01T00:00:00Z",
            "0999-10-09T09:08:01Z",
            "9999-12-31T23:59:59Z",
            "1970-01-01T00:00:00Z",
        ] {
            let t = parse_time(text).unwrap();
            assert_eq!(fmt_time_stamp(&t), text);
            let by_format = format!(
                "{:04}-{:02}-{:02}T{:02}:{:02}:{:02}Z",
                t.year(),
                t.month(),
                t.day(),
                t.hour(),
                t.minute(),
                t.second()
            );
            assert_eq!(fmt_time_stamp(&t), by_format);
        }
        let far = NaiveDate::from_ymd_opt(12345, 6, 7)
            .unwrap()
            .and_hms_opt(8, 9, 10)
            .unwrap()
            .and_utc();
        assert_eq!(fmt_time_stamp(&far), "12345-06-07T08:09:10Z");
    }

    #[test]
    fn stored_times_round_trip_and_sort_as_text() {
        let t = parse_time("2024-02-29T23:59:07Z").unwrap();
        assert_eq!(fmt_time("taken_at", &t).unwrap(), "2024-02-29T23:59:07Z");
        assert!(parse_time("2025-02-29T00:00:00Z").is_err());
        assert!(parse_time("2025-01-01 00:00:00Z").is_err());
        let frac = t + chrono::Duration::milliseconds(5);
        assert!(
            matches!(fmt_time("taken_at", &frac), Err(StoreError::Invalid { field, .. }) if field == "taken_at")
        );
        assert_eq!(fmt_time_stamp(&frac), "2024-02-29T23:59:07Z");
    }
}
