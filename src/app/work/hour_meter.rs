//! The hour-meter rule every form shares (the walk-round check, marking work done, recording
//! work on the command line): what a typed hour meter is asked about against the unit's other
//! readings, checks and work done alike. It only words questions; it reads and writes nothing.

use chrono::{DateTime, Utc};

use crate::app::local_time::Zone;
use crate::store::events::HourMeterAround;

/// The questions an hour meter `h` read at `at` raises against the unit's readings just before
/// and just after it (`around`, checks and work done): lower than the one before or higher than
/// the one after (a meter replaced in between, or a slip), or more hours run than the clock
/// allows since the one before (an hour of slack for clocks and rounding). Each asks; none
/// refuses, since a replaced meter is a real event the person can confirm.
pub(crate) fn hour_meter_questions(
    h: f64,
    at: DateTime<Utc>,
    around: &HourMeterAround,
    zone: Zone,
) -> Vec<String> {
    let mut asked = Vec::new();
    if let Some((before, when)) = around.before {
        let elapsed_h = (at - when).num_seconds() as f64 / 3600.0;
        if h < before {
            asked.push(format!(
                "the hour meter {h} h is below the {before} h read at {}; was the meter \
                 replaced? (an hour meter only counts up; otherwise check the figure or the date)",
                zone.show_marked(when)
            ));
        } else if h - before > elapsed_h + 1.0 {
            asked.push(format!(
                "the hour meter {h} h is {} h more than the {before} h read at {}, but only \
                 {:.0} h have passed; is the reading right?",
                h - before,
                zone.show_marked(when),
                elapsed_h.max(0.0)
            ));
        }
    }
    if let Some((after, when)) = around.after {
        if h > after {
            asked.push(format!(
                "the hour meter {h} h is above the {after} h read later, at {}; was the meter \
                 replaced since? (otherwise check the figure or the date)",
                zone.show_marked(when)
            ));
        }
    }
    asked
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::{Duration, TimeZone};

    fn t0() -> DateTime<Utc> {
        Utc.with_ymd_and_hms(2026, 3, 2, 8, 0, 0).unwrap()
    }

    fn around(before: Option<f64>, after: Option<f64>) -> HourMeterAround {
        HourMeterAround {
            before: before.map(|h| (h, t0())),
            after: after.map(|h| (h, t0() + Duration::days(14))),
        }
    }

    // The arithmetic is counting: a week is 168 h of clock time (from memory).
    #[test]
    fn a_reading_between_its_neighbours_within_the_clock_asks_nothing() {
        let at = t0() + Duration::days(7);
        let a = around(Some(1000.0), Some(1400.0));
        assert!(hour_meter_questions(1168.0, at, &a, Zone::default()).is_empty());
        assert!(hour_meter_questions(1000.0, at, &a, Zone::default()).is_empty());
    }

    #[test]
    fn lower_than_before_higher_than_after_or_faster_than_the_clock_is_asked() {
        let at = t0() + Duration::days(7);
        let a = around(Some(1000.0), Some(1400.0));
        let below = hour_meter_questions(12.0, at, &a, Zone::default());
        assert_eq!(below.len(), 1);
        assert!(below[0].contains("is below the 1000 h"), "{below:?}");
        assert!(below[0].contains("was the meter replaced?"), "{below:?}");
        // 168 h passed: 169 run is within the hour of slack, 170 is not.
        assert!(hour_meter_questions(1169.0, at, &a, Zone::default()).is_empty());
        let fast = hour_meter_questions(1170.0, at, &a, Zone::default());
        assert_eq!(fast.len(), 1);
        assert!(fast[0].contains("only 168 h have passed"), "{fast:?}");
        let above = hour_meter_questions(1401.0, at, &around(None, Some(1400.0)), Zone::default());
        assert_eq!(above.len(), 1);
        assert!(above[0].contains("is above the 1400 h"), "{above:?}");
    }
}
