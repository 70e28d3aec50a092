//! A small seeded pseudo-random generator (SplitMix64, Steele, Lea, Flood 2014), so every
//! random choice the engine makes (subsamples, layout start) is reproducible from the
//! settings' seed on every platform. Not for cryptography.

#[derive(Debug, Clone)]
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
    pub fn next_f64(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// Uniform integer in [0, n).
    pub fn below(&mut self, n: usize) -> usize {
        ((self.next_u64() as u128 * n as u128) >> 64) as usize
    }

    /// Standard normal draw (Box-Muller).
    pub fn normal(&mut self) -> f64 {
        let u = self.next_f64().max(f64::MIN_POSITIVE);
        let v = self.next_f64();
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }

    /// `k` distinct indices out of `0..n`, sorted (Floyd's algorithm when k is small).
    pub fn sample_indices(&mut self, n: usize, k: usize) -> Vec<usize> {
        if k >= n {
            return (0..n).collect();
        }
        let mut chosen = std::collections::HashSet::with_capacity(k);
        for j in (n - k)..n {
            let t = self.below(j + 1);
            if !chosen.insert(t) {
                chosen.insert(j);
            }
        }
        let mut v: Vec<usize> = chosen.into_iter().collect();
        v.sort_unstable();
        v
    }
}

/// A fresh seed from the platform's entropy source (`crypto.getRandomValues` in the
/// browser), for when a user asks for a new random draw. Reproduction uses the seed
/// written into the settings, never this.
pub fn fresh_seed() -> u64 {
    let mut b = [0u8; 8];
    getrandom::fill(&mut b).map(|_| u64::from_le_bytes(b) >> 11).unwrap_or(1)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sample_indices_are_distinct_sorted_and_in_range() {
        let mut r = SplitMix64::new(7);
        let s = r.sample_indices(1000, 100);
        assert_eq!(s.len(), 100);
        assert!(s.windows(2).all(|w| w[0] < w[1]));
        assert!(*s.last().unwrap() < 1000);
    }

    #[test]
    fn same_seed_same_stream() {
        let a: Vec<u64> = { let mut r = SplitMix64::new(3); (0..5).map(|_| r.next_u64()).collect() };
        let b: Vec<u64> = { let mut r = SplitMix64::new(3); (0..5).map(|_| r.next_u64()).collect() };
        assert_eq!(a, b);
    }
}
