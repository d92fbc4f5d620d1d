//! The detection benchmark's pure parts: a simulated shop with planted faults and the truth
//! about them (`shop`, `truth`), and the scoring of a flag timeline against that truth, for
//! sumpbook and for a fixed-limit rule (`score`).
//!
//! Pure: parameters and a seed in, model records and the truth out; timelines and the truth
//! in, figures out. No files, no SQL, no health rules (the engine is judged through its
//! `status --json` output, read by the application layer). Everything here is invented data
//! for a benchmark and is never used as a check value.

pub mod score;
pub mod shop;
pub mod truth;
