//! Dates: reading `--at` and the other dates typed on the command line. It must not judge or
//! print.

use chrono::{DateTime, NaiveDate, NaiveTime, Utc};

use crate::cli::Failure;

/// `--at` of status and due: the end of the day given, or the instant given.
pub fn parse_at_end_of_day(s: &str) -> Result<DateTime<Utc>, Failure> {
    parse_when(s, NaiveTime::from_hms_opt(23, 59, 59))
}

pub(super) fn parse_when(s: &str, day_time: Option<NaiveTime>) -> Result<DateTime<Utc>, Failure> {
    let s = s.trim();
    if let Ok(t) = DateTime::parse_from_rfc3339(s) {
        return Ok(t.with_timezone(&Utc));
    }
    match (NaiveDate::parse_from_str(s, "%Y-%m-%d"), day_time) {
        (Ok(d), Some(t)) => Ok(d.and_time(t).and_utc()),
        _ => Err(Failure::bad_input(format!(
            "`{s}` is not a date; expected YYYY-MM-DD or YYYY-MM-DDTHH:MM:SSZ"
        ))),
    }
}
