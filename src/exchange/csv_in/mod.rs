//! CSV import of the unit register, checks, samples and events into a shop.
//!
//! Reads a file as one stream (memory does not grow with its size) and writes through one
//! [`Bulk`] transaction. Every cell is checked against its column's rules before any SQL, so
//! messages say `FILE:LINE: COLUMN: reason` in the file's own terms. By default the import is
//! all-or-nothing: one bad row and nothing is written, with every bad row reported. With
//! keep-going, good rows go in and each refused row is written to `FILE.rejects.csv` in the
//! same format with a `reject_reason` column (written whole beside it and put in place when the
//! import succeeds; an earlier rejects file stays when nothing is refused). A row whose key (unit + time, + kind for events,
//! the unit tag for the register) is already stored adds nothing when the values it gives agree
//! with the stored ones, and is refused when they differ: stored data is never overwritten.
//! A `reject_reason` column (a corrected rejects file) is ignored; a line longer than 1 MiB
//! stops the import (nothing is written). No SQL here; the store does that.

mod column_specs;
mod header;
mod import;
mod importer;
mod rejects;
mod row_reader;
mod sample_event_rows;
mod stream_guard;
#[cfg(test)]
mod tests;
mod unit_rows;
mod values;

pub(crate) use column_specs::*;
use header::*;
pub use import::*;
use importer::*;
pub use rejects::*;
use row_reader::*;
pub use stream_guard::*;
pub use values::*;
