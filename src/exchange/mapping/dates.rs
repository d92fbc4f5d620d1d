//! The order of a file's dates: how a file writes day and month (`11/20/2026` or `20/11/2026`),
//! guessed from its cells and chosen by the user, and a date (and clock time) as written
//! rewritten as ISO 8601. Pure: it must not read files, the store or the screen.

/// How a file writes the day and the month of its dates.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum DateOrder {
    /// `2026-11-20`; a slashed date is read only when it can be read one way (`11/20/2026`).
    #[default]
    Iso,
    /// `20/11/2026`
    DayFirst,
    /// `11/20/2026`
    MonthFirst,
}

impl DateOrder {
    pub const ALL: [DateOrder; 3] = [DateOrder::Iso, DateOrder::DayFirst, DateOrder::MonthFirst];

    pub fn as_str(self) -> &'static str {
        match self {
            DateOrder::Iso => "iso",
            DateOrder::DayFirst => "day-first",
            DateOrder::MonthFirst => "month-first",
        }
    }

    /// Words for a screen.
    pub fn words(self) -> &'static str {
        match self {
            DateOrder::Iso => "year first (2026-11-20)",
            DateOrder::DayFirst => "day first (20/11/2026)",
            DateOrder::MonthFirst => "month first (11/20/2026)",
        }
    }
}

impl std::str::FromStr for DateOrder {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        let t = s.trim();
        DateOrder::ALL
            .into_iter()
            .find(|d| d.as_str() == t || d.words() == t)
            .ok_or_else(|| format!("`{t}` is not a date order: iso, day-first or month-first"))
    }
}

/// The day, month and year of a slashed or dotted date at the start of `s` (`11/20/2026`,
/// `20.11.2026`), as the two leading numbers and the year, with the rest of the text.
fn split_date(s: &str) -> Option<(u32, u32, i32, &str)> {
    let s = s.trim();
    let end = s.find([' ', 'T']).unwrap_or(s.len());
    let (date, rest) = s.split_at(end);
    let sep = date.chars().find(|c| ['/', '.'].contains(c))?;
    let parts: Vec<&str> = date.split(sep).collect();
    if parts.len() != 3 || parts.iter().any(|p| !p.bytes().all(|b| b.is_ascii_digit())) {
        return None;
    }
    if parts[0].is_empty() || parts[0].len() > 2 || parts[1].is_empty() || parts[1].len() > 2 {
        return None;
    }
    if parts[2].len() != 4 {
        return None;
    }
    Some((
        parts[0].parse().ok()?,
        parts[1].parse().ok()?,
        parts[2].parse().ok()?,
        rest,
    ))
}

/// The date order a file's date cells show: the first date whose leading number is above 12
/// shows day first, whose second is above 12 month first; ISO when every date is ISO.
pub fn guess_date_order<'a>(cells: impl IntoIterator<Item = &'a str>) -> Option<DateOrder> {
    let mut slashed = false;
    for c in cells {
        if let Some((a, b, _, _)) = split_date(c) {
            slashed = true;
            if a > 12 && b <= 12 {
                return Some(DateOrder::DayFirst);
            }
            if b > 12 && a <= 12 {
                return Some(DateOrder::MonthFirst);
            }
        }
    }
    (!slashed).then_some(DateOrder::Iso)
}

/// A date (and time) as written in a file, rewritten as ISO 8601 in the order `order` reads
/// it: `11/20/2026 8:30 PM` → `2026-11-20 20:30`. An ISO text comes back as it is. A slashed
/// date whose order cannot be told (`03/04/2026` with no order chosen) or that the chosen order
/// cannot read (`11/20/2026` read day first) is refused, saying why.
pub fn iso_date_text(input: &str, order: DateOrder) -> Result<String, String> {
    let s = input.trim();
    let Some((a, b, year, rest)) = split_date(s) else {
        return Ok(s.to_string());
    };
    let (day, month) = match order {
        DateOrder::DayFirst => (a, b),
        DateOrder::MonthFirst => (b, a),
        DateOrder::Iso if a == b || b > 12 => (b, a),
        DateOrder::Iso if a > 12 => (a, b),
        DateOrder::Iso => {
            return Err(format!(
                "`{s}` could be read day first or month first; choose the file's date order in \
                 its column mapping (day-first or month-first)"
            ))
        }
    };
    if month == 0 || month > 12 {
        return Err(format!(
            "`{s}` has no month {month} when read {}; is the mapping's date order right?",
            order.words()
        ));
    }
    let date = chrono::NaiveDate::from_ymd_opt(year, month, day)
        .ok_or_else(|| format!("`{s}` is not a calendar date"))?;
    let rest = rest.trim_start_matches(['T', ' ']).trim();
    if rest.is_empty() {
        return Ok(date.format("%Y-%m-%d").to_string());
    }
    Ok(format!("{} {}", date.format("%Y-%m-%d"), clock_24h(rest)?))
}

/// A clock time as `HH:MM` or `HH:MM:SS` with a zone suffix kept: `8:30 PM` → `20:30`.
fn clock_24h(t: &str) -> Result<String, String> {
    let lower = t.to_ascii_lowercase();
    let (body, half) = if let Some(b) = lower.strip_suffix("pm") {
        (b.trim(), Some(12))
    } else if let Some(b) = lower.strip_suffix("am") {
        (b.trim(), Some(0))
    } else {
        (t, None)
    };
    let zone_at = body
        .char_indices()
        .skip(1)
        .find(|(_, c)| matches!(c, 'Z' | 'z' | '+' | '-'))
        .map_or(body.len(), |(i, _)| i);
    let (clock, zone) = body.split_at(zone_at);
    let mut parts: Vec<u32> = Vec::new();
    for p in clock.split(':') {
        parts.push(
            p.trim()
                .parse()
                .map_err(|_| format!("`{t}` is not a time of day"))?,
        );
    }
    if !(2..=3).contains(&parts.len()) {
        return Err(format!("`{t}` is not a time of day (HH:MM or HH:MM:SS)"));
    }
    if let Some(add) = half {
        if parts[0] == 0 || parts[0] > 12 {
            return Err(format!("`{t}`: an AM/PM hour is 1 to 12"));
        }
        parts[0] = parts[0] % 12 + add;
    }
    let hms: Vec<String> = parts.iter().map(|p| format!("{p:02}")).collect();
    Ok(format!("{}{}", hms.join(":"), zone.trim()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dates_read_in_the_chosen_order_and_one_way_dates_without_one() {
        let iso = |s: &str, o| iso_date_text(s, o);
        assert_eq!(iso("11/20/2026", DateOrder::Iso).unwrap(), "2026-11-20");
        assert_eq!(iso("20/11/2026", DateOrder::Iso).unwrap(), "2026-11-20");
        assert_eq!(iso("04/04/2026", DateOrder::Iso).unwrap(), "2026-04-04");
        assert!(iso("03/04/2026", DateOrder::Iso)
            .unwrap_err()
            .contains("date order"));
        assert_eq!(
            iso("03/04/2026", DateOrder::DayFirst).unwrap(),
            "2026-04-03"
        );
        assert_eq!(
            iso("03/04/2026", DateOrder::MonthFirst).unwrap(),
            "2026-03-04"
        );
        assert_eq!(iso("3.4.2026", DateOrder::DayFirst).unwrap(), "2026-04-03");
        assert!(iso("11/20/2026", DateOrder::DayFirst)
            .unwrap_err()
            .contains("month 20"));
        assert!(iso("02/30/2026", DateOrder::MonthFirst).is_err());
        assert!(iso("1/2/26", DateOrder::MonthFirst).is_ok_and(|s| s == "1/2/26"));
        assert_eq!(
            iso("11/20/2026 8:30 PM", DateOrder::MonthFirst).unwrap(),
            "2026-11-20 20:30"
        );
        assert_eq!(
            iso("11/20/2026 12:05 am", DateOrder::MonthFirst).unwrap(),
            "2026-11-20 00:05"
        );
        assert_eq!(
            iso("20/11/2026 07:30:15Z", DateOrder::DayFirst).unwrap(),
            "2026-11-20 07:30:15Z"
        );
        assert!(iso("11/20/2026 13:00 PM", DateOrder::MonthFirst).is_err());
        assert_eq!(
            iso("2026-11-20", DateOrder::DayFirst).unwrap(),
            "2026-11-20"
        );
        assert_eq!(
            guess_date_order(["11/04/2026", "11/20/2026"]),
            Some(DateOrder::MonthFirst)
        );
        assert_eq!(guess_date_order(["20/11/2026"]), Some(DateOrder::DayFirst));
        assert_eq!(guess_date_order(["03/04/2026"]), None);
        assert_eq!(guess_date_order(["2026-03-04"]), Some(DateOrder::Iso));
        assert_eq!(
            "month-first".parse::<DateOrder>(),
            Ok(DateOrder::MonthFirst)
        );
    }
}
