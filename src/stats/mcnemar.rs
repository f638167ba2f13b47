//! McNemar's test of two classifiers on the same rows, from the discordant
//! counts b (A right, B wrong) and c (A wrong, B right).
//!
//! Invariants: b + c < 25 uses the exact binomial test (the statistic is
//! then `None`), otherwise the chi-square with Edwards' continuity
//! correction; p is two-sided and in [0, 1].

use serde::Serialize;
use statrs::distribution::{ChiSquared, ContinuousCDF};

use super::error::StatsError;

/// Below this many discordant pairs the exact binomial test is used
/// (METHODS.md; a common rule of thumb, e.g. Fagerland, Lydersen and Laake
/// 2013, BMC Medical Research Methodology 13:91 [mem]).
pub const EXACT_BELOW: u64 = 25;

/// Which form of McNemar's test was used.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum McNemarMethod {
    ExactBinomial,
    CorrectedChiSquare,
}

/// The result of [`mcnemar`].
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct McNemar {
    pub b: u64,
    pub c: u64,
    pub method: McNemarMethod,
    /// The corrected chi-square (1 df); `None` for the exact test.
    pub statistic: Option<f64>,
    /// Two-sided p value.
    pub p: f64,
}

/// McNemar (1947), Psychometrika 12:153-157, with Edwards' (1948)
/// continuity correction: chi2 = max(|b - c| - 1, 0)^2 / (b + c), 1 df. The
/// max keeps b = c at chi2 = 0 (p = 1) instead of the formula's 1/(b + c).
/// With b + c < 25: the exact test, p = min(1, 2 P(X <= min(b, c))) for
/// X ~ Binomial(b + c, 1/2), computed in exact integer arithmetic; b = c = 0
/// (no discordant pairs, no evidence either way) gives p = 1.
pub fn mcnemar(b: u64, c: u64) -> Result<McNemar, StatsError> {
    let n = b
        .checked_add(c)
        .ok_or_else(|| StatsError::Invalid("mcnemar counts are too large to add".into()))?;
    if n < EXACT_BELOW {
        return Ok(McNemar {
            b,
            c,
            method: McNemarMethod::ExactBinomial,
            statistic: None,
            p: exact_p(b.min(c), n),
        });
    }
    let excess = (b.abs_diff(c) as f64 - 1.0).max(0.0);
    let chi2 = excess * excess / n as f64;
    let dist = ChiSquared::new(1.0).map_err(|e| StatsError::Invalid(format!("chi2(1): {e}")))?;
    Ok(McNemar {
        b,
        c,
        method: McNemarMethod::CorrectedChiSquare,
        statistic: Some(chi2),
        p: dist.sf(chi2).clamp(0.0, 1.0),
    })
}

/// 2 P(X <= k), X ~ Binomial(n, 1/2), n < 25: binomial coefficients and
/// 2^n are exact in u64 and in f64 (below 2^53), so only the final
/// division rounds.
fn exact_p(k: u64, n: u64) -> f64 {
    let mut coefficient: u64 = 1;
    let mut tail: u64 = 0;
    for i in 0..=k {
        tail += coefficient;
        coefficient = coefficient * (n - i) / (i + 1);
    }
    (2.0 * tail as f64 / (1u64 << n) as f64).min(1.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn agresti_table() {
        // [pub] Agresti (1990), Categorical Data Analysis, pp. 350-354,
        // table 794/150/86/570: chi2 = 16.818, p = 4.115e-05.
        let r = mcnemar(150, 86).unwrap();
        assert_eq!(r.method, McNemarMethod::CorrectedChiSquare);
        assert!((r.statistic.unwrap() - 16.818).abs() < 5e-4);
        assert!((r.p - 4.115e-05).abs() < 5e-9);
        // [ref] statsmodels 0.15.0 mcnemar(exact=False): p 4.114562281345944e-05.
        assert!((r.p - 4.114562281345944e-05).abs() < 1e-12);
    }

    #[test]
    fn exact_binomial_matches_statsmodels() {
        // [ref] statsmodels 0.15.0 mcnemar(exact=True) p values; they are
        // dyadic rationals, so equality is exact.
        let cases = [
            (3, 10, 0.09228515625),
            (0, 5, 0.0625),
            (7, 7, 1.0),
            (12, 12, 1.0),
            (1, 0, 1.0),
            (0, 0, 1.0),
        ];
        for (b, c, p) in cases {
            let r = mcnemar(b, c).unwrap();
            assert_eq!(r.method, McNemarMethod::ExactBinomial);
            assert_eq!((r.p, r.statistic), (p, None), "{b}/{c}");
        }
        // [ref] statsmodels 0.15.0: 10/14 gives 0.5412561893463135.
        assert!((mcnemar(10, 14).unwrap().p - 0.5412561893463135).abs() < 1e-15);
    }

    #[test]
    fn equal_large_counts_give_no_evidence() {
        // By the max(|b-c| - 1, 0) form documented above: b = c gives p = 1.
        let r = mcnemar(20, 20).unwrap();
        assert_eq!((r.statistic, r.p), (Some(0.0), 1.0));
        assert!(mcnemar(u64::MAX, 1).is_err());
    }
}
