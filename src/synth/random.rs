//! A small deterministic random source for the synthesiser (and for seeded
//! test and benchmark instances elsewhere): SplitMix64
//! (Steele, Lea & Flood, "Fast splittable pseudorandom number generators",
//! OOPSLA 2014) with Box–Muller normal deviates. The same seed always gives
//! the same recording on every platform, which the ground truth relies on.

/// SplitMix64 generator.
#[derive(Debug, Clone)]
pub struct SplitMix64 {
    state: u64,
    spare_normal: Option<f64>,
}

impl SplitMix64 {
    pub fn new(seed: u64) -> SplitMix64 {
        SplitMix64 {
            state: seed,
            spare_normal: None,
        }
    }

    /// An independent stream derived from this seed and a label, so adding
    /// draws to one part of the synthesis does not shift another part's.
    pub fn stream(seed: u64, label: u64) -> SplitMix64 {
        let mut mixer = SplitMix64::new(seed ^ label.wrapping_mul(0xD1B5_4A32_D192_ED03));
        SplitMix64::new(mixer.next_u64())
    }

    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1), 53 bits.
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// Uniform in [low, high).
    pub fn range(&mut self, low: f64, high: f64) -> f64 {
        low + (high - low) * self.uniform()
    }

    /// Standard normal deviate (Box–Muller, both values used).
    pub fn normal(&mut self) -> f64 {
        if let Some(value) = self.spare_normal.take() {
            return value;
        }
        // 1 − u lies in (0, 1], so the logarithm is finite.
        let radius = (-2.0 * (1.0 - self.uniform()).ln()).sqrt();
        let angle = std::f64::consts::TAU * self.uniform();
        self.spare_normal = Some(radius * angle.sin());
        radius * angle.cos()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splitmix64_matches_the_published_reference_sequence() {
        // First outputs for seed 1234567, from the reference C implementation
        // by Sebastiano Vigna (prng.di.unimi.it/splitmix64.c), as quoted in
        // many test suites (from memory; checked below by its statistics too).
        let mut generator = SplitMix64::new(1_234_567);
        let first = generator.next_u64();
        assert_eq!(first, 6_457_827_717_110_365_317);
    }

    #[test]
    fn normal_deviates_have_zero_mean_and_unit_variance() {
        // Property of the standard normal distribution: mean 0, variance 1;
        // with 200 000 draws the standard error of the mean is about 0.0022.
        let mut generator = SplitMix64::new(42);
        let count = 200_000;
        let draws: Vec<f64> = (0..count).map(|_| generator.normal()).collect();
        let mean = draws.iter().sum::<f64>() / count as f64;
        let variance = draws.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / count as f64;
        assert!(mean.abs() < 0.01, "mean {mean}");
        assert!((variance - 1.0).abs() < 0.02, "variance {variance}");
    }
}
