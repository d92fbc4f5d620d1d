//! Time parsing for the forms: reading when something was done from what a person typed, in
//! the shop's time zone (`app::local_time`), and showing stored instants there. It must not
//! judge readings or touch the shop.

use chrono::{DateTime, Duration, SubsecRound, Utc};

use crate::app::local_time::{self, Zone};

/// The moment typed in a form, read in the shop's zone `zone`: blank or `now` is now, a date
/// alone is noon that day. Refused when more than an hour in the future.
pub fn read_when(text: &str, now: DateTime<Utc>, zone: Zone) -> Result<DateTime<Utc>, String> {
    let now = now.trunc_subsecs(0);
    let t = text.trim();
    if t.is_empty() || t.eq_ignore_ascii_case("now") {
        return Ok(now);
    }
    let at = local_time::read(t, zone).map_err(|e| e.to_string())?;
    if at > now + Duration::hours(1) {
        return Err(format!(
            "{t} is in the future; record readings when they are taken"
        ));
    }
    Ok(at)
}

/// A stored instant as the app shows it (the shop's time, to the minute).
pub fn show_time(t: DateTime<Utc>, zone: Zone) -> String {
    zone.show(t)
}

/// A stored instant's date as the app shows it (the shop's calendar day).
pub fn show_date(t: DateTime<Utc>, zone: Zone) -> String {
    zone.show_date(t)
}
