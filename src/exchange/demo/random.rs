//! Random numbers of the demo: the crate's fixed stream (`crate::random`, with normal deviates
//! by Irwin–Hall) and the rounding of a drawn value to a reading's resolution. It must not know
//! the shop.

pub use crate::random::SplitMix64;

pub(super) fn round_to(x: f64, step: f64) -> f64 {
    let r = (x / step).round() * step;
    // Tidy the float so that 0.1 steps print as 12.3, not 12.300000000000001.
    crate::store::columns::tidy(r)
}
