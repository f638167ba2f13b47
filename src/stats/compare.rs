//! Comparing two candidates scored on the same splits: the naive paired t
//! over splits and the corrected resampled t of Nadeau and Bengio (2003),
//! whose repeated k-fold form is that of Bouckaert and Frank (2004).
//!
//! Invariants: the input is the per-split differences d_j = score_A -
//! score_B in split order; J = number of differences, df = J - 1; p is
//! two-sided; no outcome is infinite or NaN. Degenerate data have one
//! documented outcome each: J < 2 is [`StatsError::TooFew`]; all d_j equal
//! to 0 gives t = 0, p = 1 and the interval [0, 0]; all d_j equal to a
//! non-zero value is [`StatsError::Undefined`] (t would be infinite).

use serde::Serialize;
use statrs::distribution::{ContinuousCDF, StudentsT};

use super::error::{StatsError, check_level, finite};
use super::interval::{Interval, IntervalMethod};
use super::summary::{mean, sample_variance};

/// Which t statistic a [`TTest`] is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum TTestMethod {
    /// Uncorrected: var(d)/J, as if the splits were independent.
    Naive,
    /// Nadeau and Bengio (2003): (1/J + n2/n1) var(d).
    CorrectedResampled,
}

/// The result of a paired t comparison over splits.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TTest {
    pub method: TTestMethod,
    /// J, the number of splits.
    pub splits: usize,
    /// mean(d).
    pub mean: f64,
    /// var(d) with the J - 1 divisor.
    pub variance: f64,
    /// The factor on var(d): 1/J (naive) or 1/J + n2/n1 (corrected).
    pub variance_factor: f64,
    /// J - 1.
    pub df: usize,
    pub t: f64,
    /// Two-sided p value.
    pub p: f64,
    /// mean -/+ t_{(1+level)/2, df} sqrt(variance_factor * variance).
    pub interval: Interval,
}

/// The Student t quantile at `p` (0 < p < 1) with `df` > 0 degrees of
/// freedom (statrs 0.19.1 `StudentsT::inverse_cdf`).
pub fn t_quantile(p: f64, df: f64) -> Result<f64, StatsError> {
    if !(p > 0.0 && p < 1.0) {
        return Err(StatsError::Invalid(format!(
            "a t quantile needs a probability strictly between 0 and 1, got {p}"
        )));
    }
    Ok(students_t(df)?.inverse_cdf(p))
}

/// The two-sided tail probability 2 P(T > |t|), at most 1 (statrs 0.19.1
/// `StudentsT::sf`, which keeps precision in the far tail).
pub fn t_two_sided_p(t: f64, df: f64) -> Result<f64, StatsError> {
    let t = finite(t, "a t statistic")?;
    Ok((2.0 * students_t(df)?.sf(t.abs())).min(1.0))
}

fn students_t(df: f64) -> Result<StudentsT, StatsError> {
    if !(df.is_finite() && df > 0.0) {
        return Err(StatsError::Invalid(format!(
            "a t distribution needs finite degrees of freedom above 0, got {df}"
        )));
    }
    StudentsT::new(0.0, 1.0, df).map_err(|e| StatsError::Invalid(format!("t({df}): {e}")))
}

/// The naive paired t over splits: t = mean(d) / sqrt(var(d)/J), df = J - 1
/// (Student 1908; common practice). Shown for comparison only: splits share
/// rows, so this t is too large (Dietterich 1998; Nadeau and Bengio 2003).
pub fn naive_t(differences: &[f64], level: f64) -> Result<TTest, StatsError> {
    let factor = 1.0 / differences.len().max(1) as f64;
    t_test(differences, factor, level, TTestMethod::Naive)
}

/// The corrected resampled t of Nadeau and Bengio (2003), Machine Learning
/// 52:239-281: t = mean(d) / sqrt((1/J + n2/n1) var(d)), df = J - 1.
/// `train_rows` (n1) and `validation_rows` (n2) are row counts per split
/// (averages over the splits when they vary), not split counts.
pub fn corrected_resampled_t(
    differences: &[f64],
    train_rows: f64,
    validation_rows: f64,
    level: f64,
) -> Result<TTest, StatsError> {
    for (name, rows) in [("training", train_rows), ("validation", validation_rows)] {
        if !(rows.is_finite() && rows > 0.0) {
            return Err(StatsError::Invalid(format!(
                "the corrected t needs a positive {name} row count, got {rows}"
            )));
        }
    }
    let factor = 1.0 / differences.len().max(1) as f64 + validation_rows / train_rows;
    t_test(differences, factor, level, TTestMethod::CorrectedResampled)
}

/// The corrected t for r repeats of k-fold cross-validation, Bouckaert and
/// Frank (2004), PAKDD, LNCS 3056: J = k r differences and n2/n1 = 1/(k - 1)
/// (equal folds). `differences` must hold exactly `folds * repeats` values.
pub fn repeated_k_fold_t(
    differences: &[f64],
    folds: usize,
    repeats: usize,
    level: f64,
) -> Result<TTest, StatsError> {
    if folds < 2 || repeats < 1 || folds.checked_mul(repeats) != Some(differences.len()) {
        return Err(StatsError::Invalid(format!(
            "repeated k-fold needs folds >= 2, repeats >= 1 and folds * repeats \
             differences, got {folds} folds, {repeats} repeats, {} differences",
            differences.len()
        )));
    }
    corrected_resampled_t(differences, (folds - 1) as f64, 1.0, level)
}

fn t_test(d: &[f64], factor: f64, level: f64, method: TTestMethod) -> Result<TTest, StatsError> {
    check_level(level)?;
    if d.len() < 2 {
        return Err(StatsError::TooFew {
            what: "a t test over splits (splits)",
            needed: 2,
            got: d.len(),
        });
    }
    let (m, var) = (mean(d)?, sample_variance(d)?);
    let df = d.len() - 1;
    let scale = (factor * var).sqrt();
    let (t, p) = if scale > 0.0 {
        let t = finite(m / scale, "the t statistic")?;
        (t, t_two_sided_p(t, df as f64)?)
    } else if m == 0.0 {
        (0.0, 1.0)
    } else {
        return Err(constant_differences(m));
    };
    let interval = mean_interval(m, scale, df, level, method)?;
    Ok(TTest {
        method,
        splits: d.len(),
        mean: m,
        variance: var,
        variance_factor: factor,
        df,
        t,
        p,
        interval,
    })
}

/// mean -/+ t_{(1+level)/2, df} * scale.
fn mean_interval(
    m: f64,
    scale: f64,
    df: usize,
    level: f64,
    method: TTestMethod,
) -> Result<Interval, StatsError> {
    let half = t_quantile((1.0 + level) / 2.0, df as f64)? * scale;
    let method = match method {
        TTestMethod::Naive => IntervalMethod::StudentT,
        TTestMethod::CorrectedResampled => IntervalMethod::CorrectedResampledT,
    };
    Ok(Interval {
        low: finite(m - half, "the interval's low limit")?,
        high: finite(m + half, "the interval's high limit")?,
        level,
        method,
    })
}

fn constant_differences(m: f64) -> StatsError {
    StatsError::Undefined(format!(
        "the t statistic is infinite: the difference is {m} on every split, \
         with no spread to test it against"
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    // The ten split differences of METHODS.md.
    const D: [f64; 10] = [
        0.020, 0.035, -0.010, 0.015, 0.030, 0.005, 0.025, 0.010, 0.040, 0.000,
    ];

    fn close(got: f64, want: f64, tol: f64) {
        assert!((got - want).abs() < tol, "got {got}, want {want}");
    }

    #[test]
    fn naive_t_matches_reference() {
        // [ref] METHODS.md: naive t 3.355554, p 0.008449 (df 9); interval
        // [ref] scipy 1.17.1: 0.017 -/+ t.ppf(0.975, 9) sqrt(var/10) =
        // (0.0055393959256308505, 0.02846060407436915).
        let r = naive_t(&D, 0.95).unwrap();
        close(r.t, 3.355554, 1e-6);
        close(r.p, 0.008449, 1e-6);
        assert_eq!(r.df, 9);
        close(r.interval.low, 0.0055393959256308505, 1e-12);
        close(r.interval.high, 0.02846060407436915, 1e-12);
    }

    #[test]
    fn corrected_t_matches_reference() {
        // (n1, n2, t, p, interval low, high).
        // [ref] METHODS.md t and p; intervals [ref] scipy 1.17.1 from the
        // same formula.
        let cases = [
            (
                90.0,
                10.0,
                2.309450,
                0.046278,
                0.00034812833596479034,
                0.033651871664035216,
            ),
            (
                80.0,
                20.0,
                1.793619,
                0.106460,
                -0.00444082694587743,
                0.03844082694587743,
            ),
        ];
        for (n1, n2, t, p, low, high) in cases {
            let r = corrected_resampled_t(&D, n1, n2, 0.95).unwrap();
            close(r.t, t, 1e-6);
            close(r.p, p, 1e-6);
            close(r.interval.low, low, 1e-12);
            close(r.interval.high, high, 1e-12);
            assert_eq!(r.interval.method, IntervalMethod::CorrectedResampledT);
        }
    }

    #[test]
    fn repeated_k_fold_is_the_corrected_t_with_equal_folds() {
        // [ref] METHODS.md: read as 2 x 5-fold on 100 rows, t 1.793619,
        // p 0.106460 (Bouckaert and Frank 2004: n2/n1 = 1/(k-1)).
        let r = repeated_k_fold_t(&D, 5, 2, 0.95).unwrap();
        close(r.t, 1.793619, 1e-6);
        close(r.p, 0.106460, 1e-6);
        assert!(repeated_k_fold_t(&D, 5, 3, 0.95).is_err());
        assert!(repeated_k_fold_t(&D, 1, 10, 0.95).is_err());
    }

    #[test]
    fn t_distribution_against_scipy() {
        // [ref] scipy 1.17.1 stats.t: (df, ppf(0.975), 2 sf(2.0), sf(0.5)),
        // evaluated through statrs 0.19.1 StudentsT here; they agree to
        // about 1e-12 (seen in development), so 1e-10 absolute is asserted.
        let table = [
            (
                1.0,
                12.706204736174694,
                0.2951672353008665,
                0.35241638234956674,
            ),
            (
                2.0,
                4.302652729749462,
                0.18350341907227397,
                0.33333333333333337,
            ),
            (
                4.0,
                2.7764451051977934,
                0.11611652351681556,
                0.32166498159093165,
            ),
            (
                9.0,
                2.262157162798205,
                0.07655282377070101,
                0.31453564991301314,
            ),
            (
                29.0,
                2.045229642132703,
                0.05494363718296717,
                0.3104240420968906,
            ),
            (
                100.0,
                1.9839715185235518,
                0.04821217873113365,
                0.3090867829154433,
            ),
        ];
        for (df, q, p2, tail) in table {
            close(t_quantile(0.975, df).unwrap(), q, 1e-10);
            close(t_two_sided_p(2.0, df).unwrap(), p2, 1e-10);
            close(t_two_sided_p(0.5, df).unwrap() / 2.0, tail, 1e-10);
        }
    }

    #[test]
    fn degenerate_differences_have_documented_outcomes() {
        let zero = corrected_resampled_t(&[0.0; 5], 80.0, 20.0, 0.95).unwrap();
        assert_eq!((zero.t, zero.p), (0.0, 1.0));
        assert_eq!((zero.interval.low, zero.interval.high), (0.0, 0.0));
        let constant = naive_t(&[0.01; 5], 0.95);
        assert!(matches!(constant, Err(StatsError::Undefined(_))));
        let one = naive_t(&[0.02], 0.95);
        assert!(matches!(one, Err(StatsError::TooFew { .. })));
        assert!(corrected_resampled_t(&D, 0.0, 10.0, 0.95).is_err());
        assert!(naive_t(&D, 1.5).is_err());
    }

    #[test]
    fn method_serialises_in_kebab_case() {
        let json = serde_json::to_string(&TTestMethod::CorrectedResampled).unwrap();
        assert_eq!(json, r#""corrected-resampled""#);
    }
}
