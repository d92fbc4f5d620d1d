//! Tests of the CSV importer on small files.

use super::*;
use std::io::Read;

#[test]
fn iso_times_are_read_and_ambiguous_ones_refused() {
    let t = |s: &str| parse_when(s, Default::default()).map(|t| crate::store::fmt_time_stamp(&t));
    // A date alone is noon of that day in the shop's zone (here UTC).
    assert_eq!(t("2025-03-04").unwrap(), "2025-03-04T12:00:00Z");
    assert_eq!(t("2025-03-04T07:30:00Z").unwrap(), "2025-03-04T07:30:00Z");
    assert_eq!(t("2025-03-04 07:30").unwrap(), "2025-03-04T07:30:00Z");
    assert_eq!(
        t("2025-03-04T08:30:00+01:00").unwrap(),
        "2025-03-04T07:30:00Z"
    );
    assert_eq!(
        t("2025-03-04T02:30:00-0500").unwrap(),
        "2025-03-04T07:30:00Z"
    );
    assert_eq!(t("2025-03-04T07:30:00").unwrap(), "2025-03-04T07:30:00Z");
    assert!(
        t("03/04/2025").unwrap_err().contains("ambiguous")
            || t("03/04/2025").unwrap_err().contains("either way")
    );
    assert!(t("2025-02-30").is_err());
    assert!(t("2025-03-04T07:30:00.5Z").unwrap_err().contains("second"));
    assert!(t("2025-03-04T25:00").is_err());
    assert!(t("2025-03-04T07:30:00+25:00").is_err());
    assert!(t("4 March 2025").is_err());
    // In a New York shop a time without an offset is New York's wall clock (EST, UTC-5, in
    // March before the second Sunday: US Energy Policy Act of 2005); Z and offsets stay.
    let ny = crate::app::local_time::Zone::named("America/New_York").unwrap();
    let n = |s: &str| parse_when(s, ny).map(|t| crate::store::fmt_time_stamp(&t));
    assert_eq!(n("2025-03-04 07:30").unwrap(), "2025-03-04T12:30:00Z");
    assert_eq!(n("2025-03-04").unwrap(), "2025-03-04T17:00:00Z");
    assert_eq!(n("2025-03-04T07:30:00Z").unwrap(), "2025-03-04T07:30:00Z");
    assert!(n("2025-03-09 02:30")
        .unwrap_err()
        .contains("does not exist"));
}

#[test]
fn significant_digits_are_counted_as_written() {
    assert_eq!(significant_digits("172.123456789012345"), 18);
    assert_eq!(significant_digits("-0.0012500"), 3);
    assert_eq!(significant_digits("1.5e3"), 2);
    assert_eq!(significant_digits("120"), 2);
    assert_eq!(significant_digits("0"), 0);
}

#[test]
fn numbers_need_a_decimal_point_and_must_be_finite() {
    assert_eq!(parse_number("-4.5").unwrap(), -4.5);
    assert_eq!(parse_number("1e3").unwrap(), 1000.0);
    assert!(parse_number("4,5").unwrap_err().contains("decimal point"));
    assert!(parse_number("NaN").is_err());
    assert!(parse_number("inf").is_err());
    assert!(parse_number("12 bar").is_err());
}

#[test]
fn delimiter_comes_from_the_header_line() {
    assert_eq!(detect_delimiter(b"unit_tag,taken_at\n"), b',');
    assert_eq!(detect_delimiter(b"unit_tag;taken_at;note\n"), b';');
    assert_eq!(detect_delimiter(b"unit_tag\ttaken_at\n"), b'\t');
    assert_eq!(detect_delimiter(b"\"a;b\",c\n"), b',');
}

/// Reads `body` (after the header `a,b,c`) through the guard; the place of an open quote.
fn guarded(body: &[u8]) -> Result<(), (u64, usize, bool)> {
    let mut g = QuoteGuard::new(body, b',', b"a,b,c\n");
    let mut sink = Vec::new();
    match g.read_to_end(&mut sink) {
        Ok(_) => Ok(()),
        Err(e) => {
            let q = quote_left_open(&e).expect("only an open quote fails");
            Err((q.line, q.field, q.at_end))
        }
    }
}

#[test]
fn quotes_are_followed_as_the_csv_reader_reads_them() {
    // Closed quotes, doubled quotes, line breaks inside quotes, a quote inside a plain cell.
    assert_eq!(guarded(b"1,\"x, y\",3\n4,\"say \"\"hi\"\"\",6\n"), Ok(()));
    assert_eq!(guarded(b"1,\"two\nlines\",3\r\n4,5,6\r\n"), Ok(()));
    assert_eq!(guarded(b"1,5\" bore,3\n"), Ok(()));
    assert_eq!(guarded(b""), Ok(()));
    // Open at the end: line 3 (the header is line 1), third cell.
    assert_eq!(guarded(b"1,2,3\n4,5,\"never closed\n"), Err((3, 2, true)));
    assert_eq!(
        guarded(b"1,2,3\n4,\"open\n5,6,7\n8,9,10\n"),
        Err((3, 1, true))
    );
    // A quote that runs on past the record limit is stopped there, not read to the end.
    let mut long = b"1,\"".to_vec();
    long.extend(std::iter::repeat_n(b"x,y,z\n".as_slice(), MAX_RECORD_BYTES / 6 + 10).flatten());
    long.extend_from_slice(b"\",3\n");
    assert_eq!(guarded(&long), Err((2, 1, false)));
    // The header line itself can open a quote.
    let mut g = QuoteGuard::new(&b"still the header\",c\n1,2,3\n"[..], b',', b"a,\"b\n");
    let mut sink = Vec::new();
    assert!(g.read_to_end(&mut sink).is_ok());
}
