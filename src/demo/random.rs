//! Portable random draws for the generators: a ChaCha8 stream keyed by
//! BLAKE3 of a label and the seed, uniform and normal draws built from it
//! with plain IEEE arithmetic.
//!
//! Invariants: the same label and seed give the same draws on every machine
//! and every version of the crates below (ChaCha8's stream is fixed by its
//! specification; the natural logarithm is computed here from `+ - * /`,
//! not taken from the platform's maths library, whose last bit may differ).

use rand_chacha::ChaCha8Rng;
use rand_core::{Rng, SeedableRng};

/// A seeded stream of draws.
pub(crate) struct Draws {
    rng: ChaCha8Rng,
    /// The second normal of the last polar pair, not yet handed out.
    spare: Option<f64>,
}

impl Draws {
    /// The stream for `label` (what it generates) and `seed`.
    pub(crate) fn new(label: &str, seed: u64) -> Self {
        let mut hasher = blake3::Hasher::new();
        hasher.update(label.as_bytes());
        hasher.update(&seed.to_le_bytes());
        Draws {
            rng: ChaCha8Rng::from_seed(*hasher.finalize().as_bytes()),
            spare: None,
        }
    }

    /// Uniform on [0, 1), a multiple of 2^-53.
    pub(crate) fn uniform(&mut self) -> f64 {
        (self.rng.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }

    /// `true` with probability `p`.
    pub(crate) fn chance(&mut self, p: f64) -> bool {
        self.uniform() < p
    }

    /// Uniform on `0..n` without modulo bias (`n` > 0), by rejecting the
    /// top partial block of `u64` values.
    pub(crate) fn below(&mut self, n: u64) -> u64 {
        let zone = u64::MAX - (u64::MAX % n);
        loop {
            let x = self.rng.next_u64();
            if x < zone {
                return x % n;
            }
        }
    }

    /// Standard normal, by the polar form of the Box-Muller transform
    /// (Marsaglia and Bray 1964, SIAM Review 6:260-264; from memory): it
    /// needs a logarithm and a square root but no sine or cosine.
    pub(crate) fn normal(&mut self) -> f64 {
        if let Some(z) = self.spare.take() {
            return z;
        }
        loop {
            let u = 2.0 * self.uniform() - 1.0;
            let v = 2.0 * self.uniform() - 1.0;
            let s = u * u + v * v;
            if s > 0.0 && s < 1.0 {
                // sqrt is correctly rounded by IEEE 754, so portable.
                let factor = (-2.0 * ln(s) / s).sqrt();
                self.spare = Some(v * factor);
                return u * factor;
            }
        }
    }

    /// Normal with mean `mean` and standard deviation `sd`.
    pub(crate) fn gauss(&mut self, mean: f64, sd: f64) -> f64 {
        mean + sd * self.normal()
    }
}

/// Natural logarithm of a positive, normal `x`, from `+ - * /` only: split
/// `x = m 2^e` with `m` in [sqrt(1/2), sqrt(2)), then
/// `ln m = 2 atanh(t)`, `t = (m - 1)/(m + 1)`, summed as
/// `2 (t + t^3/3 + t^5/5 + ...)`; with `|t| < 0.172` eleven terms leave a
/// remainder below 2^-53 relative (a textbook series, from memory).
pub(crate) fn ln(x: f64) -> f64 {
    const MANTISSA: u64 = (1 << 52) - 1;
    let bits = x.to_bits();
    let mut exponent = ((bits >> 52) & 0x7ff) as i64 - 1023;
    let mut m = f64::from_bits((bits & MANTISSA) | (1023 << 52));
    if m > std::f64::consts::SQRT_2 {
        m /= 2.0;
        exponent += 1;
    }
    let t = (m - 1.0) / (m + 1.0);
    let t2 = t * t;
    let mut power = t;
    let mut sum = 0.0;
    for k in 0..11 {
        sum += power / (2 * k + 1) as f64;
        power *= t2;
    }
    exponent as f64 * std::f64::consts::LN_2 + 2.0 * sum
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ln_agrees_with_the_standard_library() {
        // Oracle: std's f64::ln (platform libm), within a few ulps.
        for x in [
            1e-300, 1e-16, 0.001, 0.1, 0.5, 0.7, 0.72, 0.9, 0.999999, 1.0, 1.5, 1e10,
        ] {
            let (ours, std) = (ln(x), x.ln());
            let tolerance = 4.0 * f64::EPSILON * std.abs().max(1e-300);
            assert!((ours - std).abs() <= tolerance, "ln({x}): {ours} vs {std}");
        }
        assert_eq!(ln(1.0), 0.0);
    }

    #[test]
    fn same_label_and_seed_give_the_same_stream() {
        let take = |label, seed| {
            let mut d = Draws::new(label, seed);
            (0..8).map(|_| d.normal()).collect::<Vec<_>>()
        };
        assert_eq!(take("a", 1), take("a", 1));
        assert_ne!(take("a", 1), take("a", 2));
        assert_ne!(take("a", 1), take("b", 1));
    }

    #[test]
    fn normal_draws_have_mean_zero_and_unit_variance() {
        // 200,000 draws: the sample mean has sd 1/sqrt(n) = 0.0022, the
        // sample variance sd sqrt(2/n) = 0.0032 (normal theory, common
        // practice); the bounds are five of those.
        let mut d = Draws::new("test/normal", 3);
        let n = 200_000;
        let xs: Vec<f64> = (0..n).map(|_| d.normal()).collect();
        let mean = xs.iter().sum::<f64>() / n as f64;
        let var = xs.iter().map(|x| (x - mean) * (x - mean)).sum::<f64>() / (n - 1) as f64;
        assert!(mean.abs() < 0.011, "mean {mean}");
        assert!((var - 1.0).abs() < 0.016, "variance {var}");
        let beyond = xs.iter().filter(|x| x.abs() > 1.959963984540054).count() as f64 / n as f64;
        // P(|Z| > 1.96) = 0.05 (METHODS.md's z); sd of the share 0.00049.
        assert!((beyond - 0.05).abs() < 0.0025, "tail share {beyond}");
    }

    #[test]
    fn below_stays_in_range_and_reaches_every_value() {
        let mut d = Draws::new("test/below", 5);
        let mut seen = [0usize; 7];
        for _ in 0..7_000 {
            seen[d.below(7) as usize] += 1;
        }
        assert!(seen.iter().all(|&c| c > 800), "{seen:?}");
    }
}
