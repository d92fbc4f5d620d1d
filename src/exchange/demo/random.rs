//! Random numbers of the demo: SplitMix64 with normal deviates by Irwin–Hall, written out so the
//! demo cannot change with a dependency. It must not know the shop.

/// SplitMix64 (Steele, Lea and Flood, 2014): tiny, fast and fully specified, so the stream is
/// the same on every platform and with every crate version.
#[derive(Clone, Debug)]
pub struct SplitMix64(u64);

impl SplitMix64 {
    pub fn new(seed: u64) -> Self {
        SplitMix64(seed)
    }

    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1).
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// Approximately standard normal: the sum of twelve uniforms less six.
    pub fn normal(&mut self) -> f64 {
        (0..12).map(|_| self.uniform()).sum::<f64>() - 6.0
    }
}

pub(super) fn round_to(x: f64, step: f64) -> f64 {
    let r = (x / step).round() * step;
    // Tidy the float so that 0.1 steps print as 12.3, not 12.300000000000001.
    crate::store::columns::tidy(r)
}
