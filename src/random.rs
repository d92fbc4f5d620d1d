//! The one fixed random stream of the crate (SplitMix64), shared by the demo shop, the large
//! benchmark shop and the detection benchmark's simulation, so a seed gives the same shop on
//! every platform and with every crate version. It must not know the shop.

/// SplitMix64 (Steele, Lea and Flood, "Fast splittable pseudorandom number generators",
/// OOPSLA 2014): tiny and fully specified, written out here so no dependency can change a
/// demo or a benchmark's figures.
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

    /// Uniform in [0, 1): the top 53 bits, so every value is an exact double.
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// Approximately standard normal: the sum of twelve uniforms less six (Irwin–Hall). Its
    /// tails end at ±6, which is what the demo wants (no wild readings it did not plant).
    pub fn normal(&mut self) -> f64 {
        (0..12).map(|_| self.uniform()).sum::<f64>() - 6.0
    }

    /// Standard normal by Box–Muller: Gaussian tails, which the detection benchmark needs so
    /// a false-alarm rate is not flattered.
    pub fn gaussian(&mut self) -> f64 {
        let u1 = 1.0 - self.uniform();
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }
}

#[cfg(test)]
mod tests {
    use super::SplitMix64;

    /// The first outputs for seed 0 of the authors' reference C code (splitmix64.c, public
    /// domain; values from memory, and they match the published constants above).
    #[test]
    fn matches_the_reference_stream() {
        let mut r = SplitMix64::new(0);
        assert_eq!(r.next_u64(), 0xE220_A839_7B1D_CDAF);
        assert_eq!(r.next_u64(), 0x6E78_9E6A_A1B9_65F4);
        assert_eq!(r.next_u64(), 0x06C4_5D18_8009_454F);
    }

    #[test]
    fn uniform_stays_in_the_unit_interval() {
        let mut r = SplitMix64::new(42);
        for _ in 0..10_000 {
            let u = r.uniform();
            assert!((0.0..1.0).contains(&u));
        }
    }
}
