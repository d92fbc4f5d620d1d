//! The simulation's random numbers: a small fixed generator with uniform, normal and log-normal
//! draws, so a seed gives the same shop on every platform. It must not know the shop.

use crate::random::SplitMix64;

/// The crate's fixed stream (`crate::random::SplitMix64`) for the bits, and Box–Muller for
/// normal deviates so that the tails are Gaussian (a sum of uniforms
/// has no tail beyond a few σ, which would flatter a false-alarm rate).
#[derive(Clone, Debug)]
pub struct Rng(SplitMix64);

impl Rng {
    pub fn new(seed: u64) -> Self {
        Rng(SplitMix64::new(seed))
    }

    pub fn next_u64(&mut self) -> u64 {
        self.0.next_u64()
    }

    /// Uniform in [0, 1).
    pub fn uniform(&mut self) -> f64 {
        self.0.uniform()
    }

    /// Uniform in [lo, hi).
    pub fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.uniform()
    }

    /// Uniform integer in [lo, hi] (inclusive).
    pub fn int(&mut self, lo: usize, hi: usize) -> usize {
        if hi <= lo {
            return lo;
        }
        lo + (self.next_u64() % (hi - lo + 1) as u64) as usize
    }

    /// Standard normal (Box–Muller).
    pub fn normal(&mut self) -> f64 {
        self.0.gaussian()
    }

    pub fn chance(&mut self, p: f64) -> bool {
        self.uniform() < p
    }
}
