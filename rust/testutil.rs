//! Test helpers shared by the core's unit tests (compiled only for `cargo test`).

/// splitmix64: deterministic test randomness, so the tests need no extra crate.
pub(crate) struct Rng(pub(crate) u64);

impl Rng {
    /// Uniform in [0, 1).
    pub(crate) fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }

    /// Uniform in [-s, s).
    pub(crate) fn sym(&mut self, s: f64) -> f64 {
        (2.0 * self.next() - 1.0) * s
    }

    /// A point with each coordinate uniform in [-s, s).
    pub(crate) fn point(&mut self, s: f64) -> [f64; 3] {
        [self.sym(s), self.sym(s), self.sym(s)]
    }
}
