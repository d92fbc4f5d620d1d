//! Tests of the command line's date and limit parsing.

use super::*;

#[test]
fn dates_for_at() {
    assert_eq!(
        parse_at_end_of_day("2024-03-04").unwrap().to_rfc3339(),
        "2024-03-04T23:59:59+00:00"
    );
    assert_eq!(
        parse_at_end_of_day("2024-03-04T08:00:00Z")
            .unwrap()
            .to_rfc3339(),
        "2024-03-04T08:00:00+00:00"
    );
    assert!(parse_at_end_of_day("03/04/2024").is_err());
    assert_eq!(parse_at_end_of_day("nonsense").unwrap_err().code, 2);
}
