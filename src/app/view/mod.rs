//! The presentation layer: plain display structs and words, built from the one evaluation
//! (`app::status`) in the shop's units, for every face. The command line, the desktop app and
//! the PDF report build their output from these, so each figure, band and word is decided
//! once and screen and paper agree by construction.
//!
//! Display only: nothing here reads the shop, decides a state or a limit, prints, or knows
//! slint or the PDF's layout. Numbers are converted through `app::figures` (`units` and
//! `quantity` below it).

mod chart;
mod flag;
mod fleet;
mod tile;
mod words;

pub use chart::*;
pub use flag::*;
pub use fleet::*;
pub use tile::*;
pub use words::*;
