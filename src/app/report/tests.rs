//! Tests of the report's period.

use super::*;

use chrono::{DateTime, NaiveDate, Utc};

use crate::app::AppError;
use crate::report::Paper;

#[test]
fn the_period_defaults_and_refuses_a_reversed_range() {
    let now: DateTime<Utc> = "2024-06-30T10:00:00Z".parse().unwrap();
    let mut o = ReportOptions {
        out: "r.pdf".into(),
        units: vec![],
        from: None,
        to: None,
        paper: Paper::A4,
        prepared_by: String::new(),
        replace: false,
    };
    let utc = Zone::default();
    let (f, t) = period(&o, now, utc).unwrap();
    assert_eq!(t, now.date_naive());
    assert_eq!((t - f).num_days(), DEFAULT_PERIOD_DAYS);
    assert_eq!(evaluation_instant(None, now, utc), now);
    o.from = NaiveDate::from_ymd_opt(2024, 7, 1);
    assert!(matches!(period(&o, now, utc), Err(AppError::BadInput(_))));
    let past = NaiveDate::from_ymd_opt(2024, 3, 31).unwrap();
    assert_eq!(
        evaluation_instant(Some(past), now, utc).to_rfc3339(),
        "2024-03-31T23:59:59+00:00"
    );
    // In a New York shop the day ends at New York's midnight (EDT, UTC-4, on 31 March 2024:
    // US Energy Policy Act of 2005), and "today" is New York's date: at 02:00 UTC on 1 July
    // it is still 30 June there.
    let ny = Zone::named("America/New_York").unwrap();
    assert_eq!(
        evaluation_instant(Some(past), now, ny).to_rfc3339(),
        "2024-04-01T03:59:59+00:00"
    );
    o.from = None;
    let late: DateTime<Utc> = "2024-07-01T02:00:00Z".parse().unwrap();
    assert_eq!(
        period(&o, late, ny).unwrap().1,
        NaiveDate::from_ymd_opt(2024, 6, 30).unwrap()
    );
}
