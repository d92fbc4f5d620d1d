//! Local time: the shop's clock. Reads a time as a person or a file writes it in the shop's
//! time zone, and shows a stored instant (always UTC) in that zone. Pure: it must not read the
//! store, print, or know the screens.
//!
//! The rules, the same for every form, command and file (docs/engineering.md, "Local time"):
//! - a time with `Z` or an offset (`+01:00`, `-0500`) is that instant whatever the zone;
//! - a time without one is the shop's wall-clock time;
//! - a date without a time is [`DAY_TIME`] (noon) of that day in the shop's zone, far from
//!   midnight so that the day never slips to a neighbour's when shown again;
//! - a wall-clock time that the clocks skip (the hour lost when daylight saving time begins)
//!   is refused, naming the time after the change;
//! - a wall-clock time that happens twice (the hour repeated when daylight saving time ends)
//!   is the earlier of the two; an offset written with it picks the later.

use std::str::FromStr;

use chrono::{
    DateTime, FixedOffset, LocalResult, NaiveDate, NaiveDateTime, NaiveTime, TimeZone, Timelike,
    Utc,
};
use chrono_tz::Tz;

/// The time of day a date written without a time stands for.
pub const DAY_TIME: NaiveTime = match NaiveTime::from_hms_opt(12, 0, 0) {
    Some(t) => t,
    None => NaiveTime::MIN,
};

/// Why a written time was not read.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum TimeError {
    #[error(
        "`{0}` is not an ISO 8601 date or time; write YYYY-MM-DD or YYYY-MM-DD HH:MM \
         (dates like 03/04/2025 are refused: day and month could be either way round)"
    )]
    NotATime(String),
    #[error("`{0}` is not a calendar date")]
    NotADate(String),
    #[error("`{0}` is not a time of day (HH:MM or HH:MM:SS)")]
    NotAClockTime(String),
    #[error("`{0}` is not a time-zone offset (Z, +01:00, -05:00)")]
    NotAnOffset(String),
    #[error("`{0}`: times are kept to the second; leave out the fraction of a second")]
    Fraction(String),
    #[error(
        "`{0}`: second 60 is a leap second, which is not a valid time here; write :59 or the \
         first second of the next minute"
    )]
    LeapSecond(String),
    #[error(
        "`{text}` does not exist in {zone}: the clocks go forward that night (daylight saving \
         time begins); write the time after the change ({after}) or give the offset"
    )]
    Skipped {
        text: String,
        zone: String,
        after: String,
    },
    #[error("time zone `{0}` is not known; give an IANA name such as America/New_York, Europe/Berlin or UTC")]
    UnknownZone(String),
}

/// The shop's time zone (an IANA name from the time-zone database).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Zone(Tz);

impl Default for Zone {
    fn default() -> Self {
        Zone(Tz::UTC)
    }
}

impl Zone {
    /// The zone named `name` (`America/New_York`, `UTC`), or why not.
    pub fn named(name: &str) -> Result<Zone, TimeError> {
        Tz::from_str(name.trim())
            .map(Zone)
            .map_err(|_| TimeError::UnknownZone(name.trim().to_string()))
    }

    /// The zone a shop's stored setting names; UTC if the setting is not a known name (saving
    /// refuses unknown names, so this is a file written by something else).
    pub fn of_setting(name: &str) -> Zone {
        Zone::named(name).unwrap_or_default()
    }

    pub fn name(&self) -> &'static str {
        self.0.name()
    }

    /// Every zone name a shop can choose, `UTC` first, then the database's names in order.
    pub fn choices() -> Vec<&'static str> {
        let mut names: Vec<&'static str> = chrono_tz::TZ_VARIANTS
            .iter()
            .map(|z| z.name())
            .filter(|n| *n != "UTC")
            .collect();
        names.sort_unstable();
        names.insert(0, "UTC");
        names
    }

    /// The instant of the wall-clock time `naive` here: the earlier one when the time happens
    /// twice, refused when the clocks skip it (`text` names it in the message).
    pub fn instant(&self, naive: NaiveDateTime, text: &str) -> Result<DateTime<Utc>, TimeError> {
        match self.0.from_local_datetime(&naive) {
            LocalResult::Single(t) => Ok(t.with_timezone(&Utc)),
            LocalResult::Ambiguous(earlier, _) => Ok(earlier.with_timezone(&Utc)),
            LocalResult::None => {
                // The first wall-clock minute after the gap (gaps are whole minutes).
                let after = (1..=180)
                    .map(|m| naive + chrono::Duration::minutes(m))
                    .find(|t| self.0.from_local_datetime(t).single().is_some())
                    .map(|t| t.format("%H:%M").to_string())
                    .unwrap_or_default();
                Err(TimeError::Skipped {
                    text: text.trim().to_string(),
                    zone: self.name().to_string(),
                    after,
                })
            }
        }
    }

    /// The first instant of day `d` here (the start of a report's period).
    pub fn day_start(&self, d: NaiveDate) -> DateTime<Utc> {
        self.calendar()
            .start(d)
            .unwrap_or_else(|| d.and_time(NaiveTime::MIN).and_utc())
    }

    /// The last second of day `d` here (`status --at DATE`: as the day ended).
    pub fn day_end(&self, d: NaiveDate) -> DateTime<Utc> {
        match d.succ_opt() {
            Some(next) => self.day_start(next) - chrono::Duration::seconds(1),
            None => d.and_time(NaiveTime::MIN).and_utc(),
        }
    }

    /// The engine's calendar in this zone: the days it writes due dates and flags on.
    pub fn calendar(&self) -> crate::health::Calendar {
        crate::health::Calendar::of(self.0)
    }

    /// The calendar day of instant `t` here.
    pub fn date_of(&self, t: DateTime<Utc>) -> NaiveDate {
        t.with_timezone(&self.0).date_naive()
    }

    /// `t` here, to the minute: `2026-03-04 08:00`.
    pub fn show(&self, t: DateTime<Utc>) -> String {
        t.with_timezone(&self.0)
            .format("%Y-%m-%d %H:%M")
            .to_string()
    }

    /// `t` here, to the second: `2026-03-04 08:00:00` (what a form is filled with to edit).
    pub fn show_seconds(&self, t: DateTime<Utc>) -> String {
        t.with_timezone(&self.0)
            .format("%Y-%m-%d %H:%M:%S")
            .to_string()
    }

    /// `t` here to the second with the zone's abbreviation: `2026-03-04 08:00:07 EST` (what
    /// names one reading exactly, as `confirm --at` takes it back).
    pub fn show_exact(&self, t: DateTime<Utc>) -> String {
        t.with_timezone(&self.0)
            .format("%Y-%m-%d %H:%M:%S %Z")
            .to_string()
    }

    /// `t`'s day here: `2026-03-04`.
    pub fn show_date(&self, t: DateTime<Utc>) -> String {
        self.date_of(t).format("%Y-%m-%d").to_string()
    }

    /// `t` here with the zone's abbreviation for that instant: `2026-03-04 08:00 EST`, so that
    /// a line read on its own says which clock it follows.
    pub fn show_marked(&self, t: DateTime<Utc>) -> String {
        t.with_timezone(&self.0)
            .format("%Y-%m-%d %H:%M %Z")
            .to_string()
    }
}

/// A time as written, before the zone makes it an instant.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Written {
    /// A date alone.
    Day(NaiveDate),
    /// A date and wall-clock time without an offset.
    Wall(NaiveDateTime),
    /// A date and time with `Z` or an offset: an instant.
    Instant(DateTime<Utc>),
}

/// Reads `text` (a date, a date and time, either with an offset) as an instant; see the module
/// documentation for how the zone is applied.
pub fn read(text: &str, zone: Zone) -> Result<DateTime<Utc>, TimeError> {
    let t = match written(text)? {
        Written::Instant(t) => t,
        Written::Day(d) => zone.instant(d.and_time(DAY_TIME), text)?,
        Written::Wall(n) => zone.instant(n, text)?,
    };
    Ok(t)
}

/// Reads `text` as `read` does, except that a date alone is the last second of that day here
/// (a moment to look back from, as `status --at DATE` does).
pub fn read_day_end(text: &str, zone: Zone) -> Result<DateTime<Utc>, TimeError> {
    match written(text)? {
        Written::Day(d) => Ok(zone.day_end(d)),
        _ => read(text, zone),
    }
}

fn written(input: &str) -> Result<Written, TimeError> {
    let s = input.trim();
    let refuse = || TimeError::NotATime(s.to_string());
    let db = s.as_bytes();
    if db.len() < 10 || !s.is_char_boundary(10) {
        return Err(refuse());
    }
    let (date_part, rest) = s.split_at(10);
    let digits = |r: std::ops::Range<usize>| db[r].iter().all(u8::is_ascii_digit);
    if !(digits(0..4) && db[4] == b'-' && digits(5..7) && db[7] == b'-' && digits(8..10)) {
        return Err(refuse());
    }
    let date = NaiveDate::parse_from_str(date_part, "%Y-%m-%d")
        .map_err(|_| TimeError::NotADate(date_part.to_string()))?;
    if rest.is_empty() {
        return Ok(Written::Day(date));
    }
    let rest = rest.strip_prefix(['T', 't', ' ']).ok_or_else(refuse)?;
    // The clock time, then the zone suffix if any.
    let zone_at = rest.find(['Z', 'z', '+', '-']).unwrap_or(rest.len());
    let (clock, suffix) = rest.split_at(zone_at);
    let clock = clock.trim_end();
    if clock.contains('.') || clock.contains(',') {
        return Err(TimeError::Fraction(s.to_string()));
    }
    let time = match clock.len() {
        5 => NaiveTime::parse_from_str(clock, "%H:%M"),
        8 => NaiveTime::parse_from_str(clock, "%H:%M:%S"),
        _ => return Err(refuse()),
    }
    .map_err(|_| TimeError::NotAClockTime(clock.to_string()))?;
    // chrono reads second 60 as a leap second; the shop keeps civil time without them.
    if time.nanosecond() >= 1_000_000_000 {
        return Err(TimeError::LeapSecond(s.to_string()));
    }
    let naive = date.and_time(time);
    if suffix.is_empty() {
        return Ok(Written::Wall(naive));
    }
    let offset = offset_seconds(suffix)?;
    let fixed = FixedOffset::east_opt(offset).ok_or_else(refuse)?;
    let at = fixed
        .from_local_datetime(&naive)
        .single()
        .ok_or_else(refuse)?;
    Ok(Written::Instant(at.with_timezone(&Utc)))
}

/// Seconds east of UTC of `Z`, `+01`, `+0100` or `+01:00`.
fn offset_seconds(z: &str) -> Result<i32, TimeError> {
    if z.eq_ignore_ascii_case("z") {
        return Ok(0);
    }
    let bad = || TimeError::NotAnOffset(z.to_string());
    let sign = if z.starts_with('-') { -1 } else { 1 };
    let body = &z[1..];
    let (h, m) = match body.len() {
        2 => (body, "00"),
        4 if body.bytes().all(|b| b.is_ascii_digit()) => body.split_at(2),
        5 if body.as_bytes()[2] == b':' => (&body[..2], &body[3..]),
        _ => return Err(bad()),
    };
    let (Ok(h), Ok(m)) = (h.parse::<i32>(), m.parse::<i32>()) else {
        return Err(bad());
    };
    if h > 23 || m > 59 {
        return Err(bad());
    }
    Ok(sign * (h * 3600 + m * 60))
}

#[cfg(test)]
mod tests {
    use super::*;

    // Offsets and change-over instants of America/New_York are those of the US Energy Policy
    // Act of 2005 (daylight saving time from 02:00 on the second Sunday of March to 02:00 on
    // the first Sunday of November; EST = UTC-5, EDT = UTC-4), as published in the IANA
    // time-zone database.
    fn ny() -> Zone {
        Zone::named("America/New_York").unwrap()
    }

    fn utc(s: &str) -> DateTime<Utc> {
        DateTime::parse_from_rfc3339(s).unwrap().with_timezone(&Utc)
    }

    #[test]
    fn a_wall_clock_time_is_read_in_the_shops_zone() {
        // Winter: EST, five hours behind UTC.
        assert_eq!(
            read("2026-01-15 08:00", ny()).unwrap(),
            utc("2026-01-15T13:00:00Z")
        );
        // Summer: EDT, four hours behind.
        assert_eq!(
            read("2026-07-15T08:00:30", ny()).unwrap(),
            utc("2026-07-15T12:00:30Z")
        );
        assert_eq!(
            read("2026-07-15 08:00", Zone::default()).unwrap(),
            utc("2026-07-15T08:00:00Z")
        );
    }

    #[test]
    fn an_offset_or_z_is_that_instant_whatever_the_zone() {
        assert_eq!(
            read("2026-01-15T08:00:00Z", ny()).unwrap(),
            utc("2026-01-15T08:00:00Z")
        );
        assert_eq!(
            read("2026-01-15T08:00+01:00", ny()).unwrap(),
            utc("2026-01-15T07:00:00Z")
        );
        assert_eq!(
            read("2026-01-15 08:00 -0500", ny()).unwrap(),
            utc("2026-01-15T13:00:00Z")
        );
    }

    #[test]
    fn a_date_alone_is_noon_there_and_day_end_is_its_last_second() {
        assert_eq!(
            read("2026-01-15", ny()).unwrap(),
            utc("2026-01-15T17:00:00Z")
        );
        assert_eq!(
            read_day_end("2026-01-15", ny()).unwrap(),
            utc("2026-01-16T04:59:59Z")
        );
        // The day daylight saving time begins has 23 hours; its start and end still fit.
        assert_eq!(
            ny().day_start(date(2026, 3, 8)),
            utc("2026-03-08T05:00:00Z")
        );
        assert_eq!(ny().day_end(date(2026, 3, 8)), utc("2026-03-09T03:59:59Z"));
    }

    fn date(y: i32, m: u32, d: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, d).unwrap()
    }

    #[test]
    fn a_skipped_time_is_refused_naming_the_time_after_the_change() {
        // 2026-03-08: New York's clocks go from 02:00 EST to 03:00 EDT.
        let e = read("2026-03-08 02:30", ny()).unwrap_err();
        assert_eq!(
            e,
            TimeError::Skipped {
                text: "2026-03-08 02:30".into(),
                zone: "America/New_York".into(),
                after: "03:00".into()
            }
        );
        assert!(e.to_string().contains("does not exist in America/New_York"));
        // Either side of the gap is read.
        assert_eq!(
            read("2026-03-08 01:59", ny()).unwrap(),
            utc("2026-03-08T06:59:00Z")
        );
        assert_eq!(
            read("2026-03-08 03:00", ny()).unwrap(),
            utc("2026-03-08T07:00:00Z")
        );
    }

    #[test]
    fn a_repeated_time_is_the_earlier_and_an_offset_picks_the_later() {
        // 2026-11-01: 01:00–02:00 happens twice, first in EDT (UTC-4), then in EST (UTC-5).
        assert_eq!(
            read("2026-11-01 01:30", ny()).unwrap(),
            utc("2026-11-01T05:30:00Z")
        );
        assert_eq!(
            read("2026-11-01 01:30-05:00", ny()).unwrap(),
            utc("2026-11-01T06:30:00Z")
        );
    }

    #[test]
    fn stored_instants_are_shown_in_the_zone_with_its_abbreviation() {
        let z = ny();
        assert_eq!(z.show(utc("2026-01-15T13:00:00Z")), "2026-01-15 08:00");
        assert_eq!(
            z.show_marked(utc("2026-01-15T13:00:00Z")),
            "2026-01-15 08:00 EST"
        );
        assert_eq!(
            z.show_marked(utc("2026-07-15T12:00:00Z")),
            "2026-07-15 08:00 EDT"
        );
        // The two passes of a repeated hour read alike but are told apart by the mark.
        assert_eq!(
            z.show_marked(utc("2026-11-01T05:30:00Z")),
            "2026-11-01 01:30 EDT"
        );
        assert_eq!(
            z.show_marked(utc("2026-11-01T06:30:00Z")),
            "2026-11-01 01:30 EST"
        );
        // Late evening in New York is the next day in UTC.
        assert_eq!(z.show_date(utc("2026-01-16T03:00:00Z")), "2026-01-15");
        assert_eq!(
            z.show_seconds(utc("2026-01-15T13:00:07Z")),
            "2026-01-15 08:00:07"
        );
    }

    #[test]
    fn what_is_shown_reads_back_to_the_same_instant() {
        let z = ny();
        for s in [
            "2026-01-15T13:00:07Z",
            "2026-07-15T12:00:00Z",
            "2026-03-08T07:00:00Z",
        ] {
            let t = utc(s);
            assert_eq!(read(&z.show_seconds(t), z).unwrap(), t, "{s}");
        }
    }

    #[test]
    fn bad_writing_is_refused_with_its_reason() {
        let z = ny();
        assert!(matches!(read("03/04/2025", z), Err(TimeError::NotATime(_))));
        assert!(matches!(read("2025-02-30", z), Err(TimeError::NotADate(_))));
        assert!(matches!(
            read("2025-02-03 25:00", z),
            Err(TimeError::NotAClockTime(_))
        ));
        assert!(matches!(
            read("2025-02-03 08:00:00.5", z),
            Err(TimeError::Fraction(_))
        ));
        assert!(matches!(
            read("2025-02-03T08:00+25:00", z),
            Err(TimeError::NotAnOffset(_))
        ));
        assert!(matches!(
            read("2016-12-31T23:59:60Z", z),
            Err(TimeError::LeapSecond(_))
        ));
        assert!(matches!(
            Zone::named("Mars/Olympus"),
            Err(TimeError::UnknownZone(_))
        ));
    }

    #[test]
    fn the_choices_hold_utc_first_and_the_named_zones() {
        let c = Zone::choices();
        assert_eq!(c[0], "UTC");
        assert!(c.contains(&"America/New_York") && c.contains(&"Europe/Berlin"));
        assert!(c.iter().all(|n| Zone::named(n).is_ok()));
    }
}
