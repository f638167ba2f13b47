//! Summaries of split scores: mean, sample standard deviation (n - 1) and
//! standard error of the mean (sd / sqrt(n)).
//!
//! Invariants: every sum runs left to right in slice order, so a result
//! depends only on the values and their order; a slice of identical values
//! has exactly that value as its mean and exactly 0 as its variance (no
//! rounding residue that would turn "no spread" into a tiny spread).

use serde::Serialize;

use super::error::{StatsError, check_finite, finite};

/// Mean, sd and standard error of one candidate's split scores.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Summary {
    pub n: usize,
    pub mean: f64,
    /// Sample sd (n - 1); `None` with fewer than two values, where it is
    /// undefined.
    pub sd: Option<f64>,
    /// sd / sqrt(n); `None` with fewer than two values.
    pub se: Option<f64>,
}

/// Left-to-right sum (the fixed order every sum of this module uses).
pub(super) fn sum(values: impl IntoIterator<Item = f64>) -> f64 {
    values.into_iter().fold(0.0, |acc, v| acc + v)
}

fn all_equal(values: &[f64]) -> bool {
    values.windows(2).all(|w| w[0] == w[1])
}

fn checked(values: &[f64], needed: usize, what: &'static str) -> Result<(), StatsError> {
    if values.len() < needed {
        return Err(StatsError::TooFew {
            what,
            needed,
            got: values.len(),
        });
    }
    check_finite(values, what)
}

/// Arithmetic mean, summed left to right. Source: common practice.
pub fn mean(values: &[f64]) -> Result<f64, StatsError> {
    checked(values, 1, "a mean")?;
    if all_equal(values) {
        return Ok(values[0]);
    }
    finite(
        sum(values.iter().copied()) / values.len() as f64,
        "the mean",
    )
}

/// Sample variance with the n - 1 divisor, by two passes (mean first, then
/// the squared deviations, left to right). Source: common practice.
pub fn sample_variance(values: &[f64]) -> Result<f64, StatsError> {
    checked(values, 2, "a sample variance")?;
    if all_equal(values) {
        return Ok(0.0);
    }
    let m = mean(values)?;
    let squares = sum(values.iter().map(|v| (v - m) * (v - m)));
    finite(squares / (values.len() - 1) as f64, "the sample variance")
}

/// Sample standard deviation, sqrt of [`sample_variance`].
pub fn sample_sd(values: &[f64]) -> Result<f64, StatsError> {
    Ok(sample_variance(values)?.sqrt())
}

/// Standard error of the mean, sd / sqrt(n), as in the one-standard-error
/// rule (Hastie, Tibshirani, Friedman 2009, ESL 2nd ed., 7.10).
pub fn standard_error(values: &[f64]) -> Result<f64, StatsError> {
    Ok(sample_sd(values)? / (values.len() as f64).sqrt())
}

/// [`mean`], [`sample_sd`] and [`standard_error`] together; needs at least
/// one value, and leaves sd and se `None` when there is only one.
pub fn summarize(values: &[f64]) -> Result<Summary, StatsError> {
    let mean = mean(values)?;
    let (sd, se) = if values.len() >= 2 {
        (Some(sample_sd(values)?), Some(standard_error(values)?))
    } else {
        (None, None)
    };
    Ok(Summary {
        n: values.len(),
        mean,
        sd,
        se,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    // The ten split differences of METHODS.md ("Comparing two candidates").
    const D: [f64; 10] = [
        0.020, 0.035, -0.010, 0.015, 0.030, 0.005, 0.025, 0.010, 0.040, 0.000,
    ];

    #[test]
    fn differences_match_reference() {
        // [ref] METHODS.md, numpy 2.4.6: mean 0.017, var(ddof=1) 0.000256666667.
        assert!((mean(&D).unwrap() - 0.017).abs() < 1e-15);
        assert!((sample_variance(&D).unwrap() - 0.000256666667).abs() < 1e-12);
    }

    #[test]
    fn one_se_table_best_column() {
        // [ref] METHODS.md one-SE table, column 1: mean 0.18, SE 0.0254950976.
        let s = summarize(&[0.20, 0.25, 0.15, 0.10, 0.20]).unwrap();
        assert!((s.mean - 0.18).abs() < 1e-15);
        assert!((s.se.unwrap() - 0.0254950976).abs() < 1e-10);
    }

    #[test]
    fn identical_values_have_exact_mean_and_zero_spread() {
        // 0.1 + 0.1 + 0.1 = 0.30000000000000004 in binary; the result must
        // still be exactly 0.1 and 0 (by definition of mean and variance).
        let v = [0.1, 0.1, 0.1];
        assert_eq!(mean(&v).unwrap(), 0.1);
        assert_eq!(sample_variance(&v).unwrap(), 0.0);
    }

    #[test]
    fn undefined_cases_are_errors_not_nan() {
        let cases: [(&[f64], bool); 4] = [
            (&[], false),
            (&[1.0, f64::NAN], false),
            (&[f64::MAX, f64::MAX, 0.0], false),
            (&[1.0], true),
        ];
        for (values, mean_ok) in cases {
            assert_eq!(mean(values).is_ok(), mean_ok, "{values:?}");
            assert!(sample_sd(values).is_err(), "{values:?}");
        }
        let single = summarize(&[0.5]).unwrap();
        assert_eq!((single.sd, single.se), (None, None));
    }
}
