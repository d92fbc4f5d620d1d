//! sumpbook: a condition log and drift watch for the hydraulic power units of a press shop.
//!
//! Code map (the direction of knowledge is physics ← health ← app → store, exchange, report;
//! cli and gui know only app):
//! - `units`, `quantity`: SI newtypes, exact conversions, parsing `2500psi`.
//! - `model`: the shop's records as plain data.
//! - `physics`: pure fluid-power, viscosity, cleanliness, oil-life and trend functions.
//! - `outfile`: output files written whole beside a user's path, never through a link.
//! - `sim`: the detection benchmark's simulated shop and its scoring (pure).
//! - `app`: one function per user action.
//! - `cli`: the command line.

pub mod app;
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
pub mod report;
pub mod sim;
pub mod store;
pub mod units;
