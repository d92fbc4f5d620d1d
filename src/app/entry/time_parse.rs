//! Time parsing: reading when something was done from what a person typed, in local time, and
//! showing stored instants. It must not judge readings or touch the shop.

use chrono::{DateTime, Duration, Local, NaiveDate, NaiveDateTime, SubsecRound, TimeZone, Utc};

/// computer's local time. Refused when more than an hour in the future.
pub fn read_when(text: &str, now: DateTime<Utc>) -> Result<DateTime<Utc>, String> {
    let now = now.trunc_subsecs(0);
    let t = text.trim();
    if t.is_empty() || t.eq_ignore_ascii_case("now") {
        return Ok(now);
    }
    let naive = [
        "%Y-%m-%d %H:%M:%S",
        "%Y-%m-%d %H:%M",
        "%Y-%m-%dT%H:%M:%S",
        "%Y-%m-%dT%H:%M",
    ]
    .iter()
    .find_map(|f| NaiveDateTime::parse_from_str(t, f).ok())
    .or_else(|| {
        NaiveDate::parse_from_str(t, "%Y-%m-%d")
            .ok()
            .and_then(|d| d.and_hms_opt(12, 0, 0))
    })
    .ok_or_else(|| {
        format!("`{t}` is not a date and time; write YYYY-MM-DD HH:MM (e.g. 2025-03-04 07:30)")
    })?;
    let at = Local
        .from_local_datetime(&naive)
        .earliest()
        .ok_or_else(|| format!("`{t}` does not exist in local time (a clock change)"))?
        .with_timezone(&Utc);
    if at > now + Duration::hours(1) {
        return Err(format!(
            "{t} is in the future; record readings when they are taken"
        ));
    }
    Ok(at)
}

/// A stored instant as the app shows it (local time, to the minute).
pub fn show_time(t: DateTime<Utc>) -> String {
    t.with_timezone(&Local).format("%Y-%m-%d %H:%M").to_string()
}

/// A stored instant's date as the app shows it.
pub fn show_date(t: DateTime<Utc>) -> String {
    t.with_timezone(&Local).format("%Y-%m-%d").to_string()
}
