//! Unbiased bounded integer draws from a source of 64 random bits.
//!
//! Invariant: depends only on a `FnMut() -> u64` bit source (in production
//! `resample::Stream::next_u64`), so the draws are exactly as portable and
//! reproducible as the stream itself.

/// A uniform integer in `[0, bound)`, `bound >= 1`, by Lemire's widening
/// multiply with rejection: Lemire (2019), "Fast random integer generation
/// in an interval", ACM Transactions on Modeling and Computer Simulation
/// 29(1):3. Draws whose low half falls below 2^64 mod bound are rejected, so
/// every value is equally likely (no modulo bias).
pub(super) fn below(bits: &mut impl FnMut() -> u64, bound: u64) -> u64 {
    debug_assert!(bound >= 1, "callers guarantee a non-empty range");
    let mut product = u128::from(bits()) * u128::from(bound);
    if (product as u64) < bound {
        let threshold = bound.wrapping_neg() % bound;
        while (product as u64) < threshold {
            product = u128::from(bits()) * u128::from(bound);
        }
    }
    (product >> 64) as u64
}

#[cfg(test)]
pub(super) mod tests {
    use super::*;

    /// SplitMix64, a test-only bit source: Steele, Lea, Flood (2014), "Fast
    /// splittable pseudorandom number generators", OOPSLA (constants from
    /// memory [mem]). Used so the statistical tests of this module do not
    /// depend on the placeholder `resample::Stream`.
    pub(in crate::stats) fn splitmix(seed: u64) -> impl FnMut() -> u64 {
        let mut state = seed;
        move || {
            state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
            let mut z = state;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            z ^ (z >> 31)
        }
    }

    fn scripted(values: Vec<u64>) -> impl FnMut() -> u64 {
        let mut it = values.into_iter();
        move || it.next().unwrap_or(0)
    }

    #[test]
    fn rejection_consumes_another_draw() {
        // For bound 3, 2^64 mod 3 = 1, so only x = 0 (low half 0) is rejected;
        // the next draw u64::MAX maps to floor(3 * MAX / 2^64) = 2 (Lemire 2019).
        let mut bits = scripted(vec![0, u64::MAX]);
        assert_eq!(below(&mut bits, 3), 2);
        // Without rejection x = 2^63 maps to floor(3/2) = 1.
        let mut bits = scripted(vec![1 << 63]);
        assert_eq!(below(&mut bits, 3), 1);
    }

    #[test]
    fn bound_one_is_always_zero_and_large_bounds_stay_in_range() {
        let mut bits = splitmix(1);
        for _ in 0..100 {
            assert_eq!(below(&mut bits, 1), 0);
            let big = (1u64 << 63) + 1;
            assert!(below(&mut bits, big) < big);
        }
    }

    #[test]
    fn draws_are_uniform() {
        // Chi-square goodness of fit, 5 df; the 0.999 quantile is 20.515
        // (scipy 1.17.1 chi2.ppf(0.999, 5) = 20.515005652432873) [ref].
        let mut bits = splitmix(42);
        let mut counts = [0u64; 6];
        for _ in 0..60_000 {
            counts[below(&mut bits, 6) as usize] += 1;
        }
        let chi2: f64 = counts
            .iter()
            .map(|&c| (c as f64 - 10_000.0).powi(2) / 10_000.0)
            .sum();
        assert!(chi2 < 20.515, "chi2 {chi2} counts {counts:?}");
    }
}
