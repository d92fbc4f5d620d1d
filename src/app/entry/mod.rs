//! Entry: the rules behind the desktop app's forms — the walk-round check, the sample with its
//! preview, the setup records, corrections of stored readings, marking work done, and the
//! import preview with progress and cancel.
//!
//! Each function takes the texts a person typed (keyed by field), judges every value (a
//! physically impossible value is refused with the reason, an unusual one asks for
//! confirmation; docs/engineering.md, "Physical bounds of readings"), and writes through the
//! store or hands back what it would mean (via the health engine). It holds no SQL and knows
//! nothing of slint; the GUI only shows the fields and verdicts it returns. Bare numbers are
//! read in the shop's unit system; a number with a unit (`140F`, `2500psi`) is read in that unit.
//!
//! The "unusual" thresholds (`bounds`) are *common practice, no published source*: they catch
//! misreadings and typing slips, and only ask; they never refuse.

mod bounds;
mod check_review;
mod corrections;
mod csv_sniff;
mod forms;
mod import_preview;
mod sample_review;
mod setup;
#[cfg(test)]
mod tests;
mod time_parse;
mod unit_work;

pub use bounds::*;
pub use check_review::*;
pub use corrections::*;
pub use csv_sniff::*;
pub use forms::*;
pub use import_preview::*;
pub use sample_review::*;
pub use setup::*;
pub use time_parse::*;
pub use unit_work::*;
