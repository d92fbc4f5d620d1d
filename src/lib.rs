//! sumpbook: a condition log and drift watch for the hydraulic power units of a press shop.
//!
//! Code map (the direction of knowledge is physics ← health ← app → store, exchange, report;
//! cli and gui know only app — tests/architecture.rs checks it; DEVELOPERS.md has the table):
//! - `units`, `quantity`: SI newtypes, exact conversions, parsing `2500psi`.
//! - `names`: the macro of closed sets of names written as text.
//! - `model`: the shop's records as plain data.
//! - `physics`: pure fluid-power, viscosity, cleanliness, oil-life and trend functions, with the
//!   timed stroke and the sensitive component they compute on.
//! - `health`: the rules — baselines, indicators, flags, limits, work planning, screening.
//! - `store`: the shop database (SQLite file or PostgreSQL server); the only place with SQL
//!   (`open`, `migrate`, `lock_wait`, `backup`, `transactions`, one file per table family).
//! - `exchange`: CSV in (`csv_in/`) and out, the column mapping of others' files (`mapping/`),
//!   the demo shop (`demo/`), the large benchmark shop.
//! - `report`: the PDF's page engine (`layout/`), charts (`charts/`) and pages.
//! - `random`: the one fixed random stream of the demo, the large shop and the simulation.
//! - `outfile`: output files written whole beside a user's path, never through a link.
//! - `sim`: the detection benchmark's simulated shop and its scoring (pure).
//! - `app`: one function per user action, the only door of the faces (`entry/` the form rules,
//!   `import` the one import path, `work/` due list, acks, limits and baselines, `report/` the
//!   printed report, `view/` the presentation layer every face builds its output from, `vocab`
//!   the result types).
//! - `cli`: the command line (`status/` one file per command).
//! - `gui`: the desktop app's screen adapters (`unit/` the unit page, `screenshots` the
//!   screenshot run).
//!
//! The path of one CSV row: `cli::data` → `Shop::import` (`app::import`) → `exchange::csv_in`
//! (header, cells into SI with bounds, records) → `store::bulk` in one transaction.
//!
//! The path of one figure: `store::history` → `health::evaluate` (SI) → `app::status` (one
//! evaluation) → `app::view` (the words and the figure in the shop's units, once) → the board
//! (`gui::fleet`), `status` and its JSON (`cli::status`) and the PDF (`app::report` → `report`).

pub mod app;
pub mod bounds;
pub mod cli;
pub mod exchange;
#[cfg(feature = "gui")]
pub mod gui;
pub mod health;
pub mod model;
mod names;
pub mod outfile;
pub mod physics;
pub mod quantity;
pub mod random;
pub mod report;
pub mod sim;
pub mod store;
pub mod units;
