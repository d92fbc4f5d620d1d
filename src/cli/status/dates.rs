//! Dates: reading `--at` and the other dates typed on the command line, in the shop's time zone
//! (`app::local_time`). It must not judge or print.

use chrono::{DateTime, Utc};

use crate::app::local_time::{self, Zone};
use crate::cli::Failure;

/// `--at` of status and due: the end of the day given (in the shop's zone), or the instant
/// given.
pub fn parse_at_end_of_day(s: &str, zone: Zone) -> Result<DateTime<Utc>, Failure> {
    local_time::read_day_end(s, zone).map_err(|e| Failure::bad_input(format!("--at: {e}")))
}

/// `--at` of a record: the instant given, or noon of the day given (in the shop's zone).
pub(super) fn parse_when(s: &str, zone: Zone) -> Result<DateTime<Utc>, Failure> {
    local_time::read(s, zone).map_err(|e| Failure::bad_input(format!("--at: {e}")))
}
