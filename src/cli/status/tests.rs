//! Tests of the command line's date and limit parsing.

use super::*;

#[test]
fn dates_for_at() {
    let utc = crate::app::local_time::Zone::default();
    assert_eq!(
        parse_at_end_of_day("2024-03-04", utc).unwrap().to_rfc3339(),
        "2024-03-04T23:59:59+00:00"
    );
    assert_eq!(
        parse_at_end_of_day("2024-03-04T08:00:00Z", utc)
            .unwrap()
            .to_rfc3339(),
        "2024-03-04T08:00:00+00:00"
    );
    // In New York (EST, UTC-5 in early March; US Energy Policy Act of 2005) the day ends five
    // hours later in UTC, and a record's date alone is noon there.
    let ny = crate::app::local_time::Zone::named("America/New_York").unwrap();
    assert_eq!(
        parse_at_end_of_day("2024-03-04", ny).unwrap().to_rfc3339(),
        "2024-03-05T04:59:59+00:00"
    );
    assert_eq!(
        parse_when("2024-03-04", ny).unwrap().to_rfc3339(),
        "2024-03-04T17:00:00+00:00"
    );
    assert!(parse_at_end_of_day("03/04/2024", utc).is_err());
    assert_eq!(parse_at_end_of_day("nonsense", utc).unwrap_err().code, 2);
}
