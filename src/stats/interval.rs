//! Confidence intervals for a proportion (Wilson; Clopper-Pearson), the
//! Bonferroni level for repeated openings, and the normal quantile they use.
//!
//! Invariants: `0 <= low <= high <= 1` for a proportion; `level` is the
//! two-sided coverage in (0, 1). These intervals assume independent rows:
//! with a group column the rows of one unit are correlated and they are too
//! narrow (use `cluster_bootstrap_percentile`).

use serde::Serialize;
use statrs::distribution::{Beta, ContinuousCDF};

use super::error::{StatsError, check_level};

/// How an [`Interval`] was computed; the name reaches output.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum IntervalMethod {
    Wilson,
    ClopperPearson,
    BootstrapPercentile,
    ClusterBootstrapPercentile,
    /// Student t interval of a mean difference (uncorrected).
    StudentT,
    /// The corrected resampled t interval of Nadeau and Bengio (2003).
    CorrectedResampledT,
}

/// A two-sided interval with its coverage `level` and method.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Interval {
    pub low: f64,
    pub high: f64,
    pub level: f64,
    pub method: IntervalMethod,
}

/// The standard normal quantile at `p`, for `0 < p < 1`.
///
/// Computed from the `libm` crate (a pure-Rust port of musl's maths
/// library) so that the value, which reaches recorded intervals, is the same
/// bits on every machine: a starting value from Acklam's rational
/// approximation (coefficients from memory [mem]; any error there only costs
/// iterations), then Halley steps on `0.5 erfc(-x/sqrt 2) - p` until the step
/// no longer changes `x` (at most 8), in the lower half; the upper half by
/// symmetry.
pub fn normal_quantile(p: f64) -> Result<f64, StatsError> {
    if !(p > 0.0 && p < 1.0) {
        return Err(StatsError::Invalid(format!(
            "a normal quantile needs a probability strictly between 0 and 1, got {p}"
        )));
    }
    if p > 0.5 {
        // Upper half by symmetry: 1 - p is exact here (Sterbenz), and the
        // lower tail keeps full relative precision where erfc is small.
        return Ok(-lower_quantile(1.0 - p));
    }
    Ok(lower_quantile(p))
}

/// The quantile for `0 < p <= 0.5`.
fn lower_quantile(p: f64) -> f64 {
    let mut x = acklam(p);
    let root_two_pi = libm::sqrt(2.0 * std::f64::consts::PI);
    for _ in 0..8 {
        let e = 0.5 * libm::erfc(-x / std::f64::consts::SQRT_2) - p;
        let u = e * root_two_pi * libm::exp(x * x / 2.0);
        let next = x - u / (1.0 + x * u / 2.0);
        if next == x || !next.is_finite() {
            break;
        }
        x = next;
    }
    x
}

/// Acklam's rational approximation of the normal quantile (relative error
/// about 1e-9), used only as the starting point of [`normal_quantile`].
fn acklam(p: f64) -> f64 {
    const A: [f64; 6] = [
        -3.969683028665376e1,
        2.209460984245205e2,
        -2.759285104469687e2,
        1.38357751867269e2,
        -3.066479806614716e1,
        2.506628277459239,
    ];
    const B: [f64; 5] = [
        -5.447609879822406e1,
        1.615858368580409e2,
        -1.556989798598866e2,
        6.680131188771972e1,
        -1.328068155288572e1,
    ];
    const C: [f64; 6] = [
        -7.784894002430293e-3,
        -3.223964580411365e-1,
        -2.400758277161838,
        -2.549732539343734,
        4.374664141464968,
        2.938163982698783,
    ];
    const D: [f64; 4] = [
        7.784695709041462e-3,
        3.224671290700398e-1,
        2.445134137142996,
        3.754408661907416,
    ];
    let tail = |q: f64| {
        let t = libm::sqrt(-2.0 * libm::log(q));
        (((((C[0] * t + C[1]) * t + C[2]) * t + C[3]) * t + C[4]) * t + C[5])
            / ((((D[0] * t + D[1]) * t + D[2]) * t + D[3]) * t + 1.0)
    };
    const LOW: f64 = 0.02425;
    if p < LOW {
        tail(p)
    } else if p > 1.0 - LOW {
        -tail(1.0 - p)
    } else {
        let q = p - 0.5;
        let r = q * q;
        (((((A[0] * r + A[1]) * r + A[2]) * r + A[3]) * r + A[4]) * r + A[5]) * q
            / (((((B[0] * r + B[1]) * r + B[2]) * r + B[3]) * r + B[4]) * r + 1.0)
    }
}

/// The two-sided critical value z at 1 - alpha/2, alpha = 1 - level,
/// computed as (1 + level) / 2 (the same number, one rounding fewer).
pub(super) fn two_sided_z(level: f64) -> Result<f64, StatsError> {
    normal_quantile((1.0 + check_level(level)?) / 2.0)
}

fn check_count(r: u64, n: u64) -> Result<(), StatsError> {
    if n == 0 || r > n {
        return Err(StatsError::Invalid(format!(
            "a proportion needs 0 <= r <= n and n >= 1, got r = {r}, n = {n}"
        )));
    }
    Ok(())
}

/// Wilson (1927) score interval, JASA 22:209-212, for `r` successes of `n`:
/// centre = (p + z^2/(2n)) / (1 + z^2/n),
/// half = z / (1 + z^2/n) * sqrt(p(1-p)/n + z^2/(4n^2)).
/// The limits are exactly 0 when r = 0 and exactly 1 when r = n (their
/// mathematical values, which rounding would otherwise miss by an ulp).
pub fn wilson(r: u64, n: u64, level: f64) -> Result<Interval, StatsError> {
    check_count(r, n)?;
    let z = two_sided_z(level)?;
    let (nf, p, z2) = (n as f64, r as f64 / n as f64, z * z);
    let denom = 1.0 + z2 / nf;
    let centre = (p + z2 / (2.0 * nf)) / denom;
    let half = z / denom * (p * (1.0 - p) / nf + z2 / (4.0 * nf * nf)).sqrt();
    let low = if r == 0 { 0.0 } else { centre - half };
    let high = if r == n { 1.0 } else { centre + half };
    Ok(Interval {
        low: low.clamp(0.0, 1.0),
        high: high.clamp(0.0, 1.0),
        level,
        method: IntervalMethod::Wilson,
    })
}

fn beta_quantile(a: f64, b: f64, p: f64) -> Result<f64, StatsError> {
    let beta = Beta::new(a, b).map_err(|e| StatsError::Invalid(format!("beta({a}, {b}): {e}")))?;
    Ok(beta.inverse_cdf(p).clamp(0.0, 1.0))
}

/// Clopper and Pearson (1934) exact interval, Biometrika 26:404-413:
/// L = BetaInv(alpha/2; r, n-r+1), U = BetaInv(1-alpha/2; r+1, n-r);
/// L = 0 when r = 0 and U = 1 when r = n; the one-sided closed forms
/// U = 1 - (alpha/2)^(1/n) (r = 0) and L = (alpha/2)^(1/n) (r = n) are
/// used exactly. The Beta inverse is statrs 0.19.1 (AS 64 / AS 109).
pub fn clopper_pearson(r: u64, n: u64, level: f64) -> Result<Interval, StatsError> {
    check_count(r, n)?;
    let half_alpha = (1.0 - check_level(level)?) / 2.0;
    let (rf, nf) = (r as f64, n as f64);
    let low = match r {
        0 => 0.0,
        _ if r == n => half_alpha.powf(1.0 / nf),
        _ => beta_quantile(rf, nf - rf + 1.0, half_alpha)?,
    };
    let high = match r {
        _ if r == n => 1.0,
        0 => 1.0 - half_alpha.powf(1.0 / nf),
        _ => beta_quantile(rf + 1.0, nf - rf, 1.0 - half_alpha)?,
    };
    Ok(Interval {
        low,
        high,
        level,
        method: IntervalMethod::ClopperPearson,
    })
}

/// The Bonferroni level for the `openings`-th look at one sealed
/// partition: 1 - 0.05/m, so that m openings together keep a family-wise
/// error of at most 0.05 (Bonferroni inequality; METHODS.md).
pub fn bonferroni_level(openings: u64) -> Result<f64, StatsError> {
    if openings == 0 {
        return Err(StatsError::Invalid(
            "a bonferroni level needs at least one opening, got 0".into(),
        ));
    }
    Ok(1.0 - 0.05 / openings as f64)
}

#[cfg(test)]
mod tests {

    #[test]
    fn normal_quantiles_match_scipy_across_the_range() {
        // [ref] scipy 1.17.1 scipy.stats.norm.ppf, computed in this session.
        let table = [
            (1e-12, -7.034483825301131),
            (1e-6, -4.753424308822899),
            (0.001, -3.090232306167813),
            (0.025, -1.9599639845400545),
            (0.3, -0.5244005127080409),
            (0.5, 0.0),
            (0.8, 0.8416212335729143),
            (0.99, 2.3263478740408408),
            (0.999999, 4.753424308817087),
        ];
        for (p, want) in table {
            let got = normal_quantile(p).unwrap();
            assert!(
                (got - want).abs() <= 4e-15 * want.abs().max(1.0),
                "p {p}: {got} vs {want}"
            );
        }
    }

    use super::*;

    fn limits(i: &Interval) -> (f64, f64) {
        (i.low, i.high)
    }

    #[test]
    fn z_for_95_percent() {
        // [pub] METHODS.md: z = 1.959963984540054; scipy 1.17.1 norm.ppf(0.975)
        // gives the same digits.
        assert!((two_sided_z(0.95).unwrap() - 1.959963984540054).abs() < 1e-15);
        // [ref] scipy 1.17.1 norm.ppf(0.995) = 2.5758293035489004.
        assert!((two_sided_z(0.99).unwrap() - 2.5758293035489004).abs() < 1e-13);
    }

    // (r, n, Wilson low, high, Clopper-Pearson low, high) at 95%.
    // [pub] Newcombe (1998), Statistics in Medicine 17:857-872, examples as
    // listed in METHODS.md, 4 decimals (recomputed there with statsmodels).
    const NEWCOMBE: [(u64, u64, f64, f64, f64, f64); 4] = [
        (81, 263, 0.2553, 0.3662, 0.2527, 0.3676),
        (15, 148, 0.0624, 0.1605, 0.0578, 0.1617),
        (0, 20, 0.0000, 0.1611, 0.0000, 0.1684),
        (1, 29, 0.0061, 0.1718, 0.0009, 0.1776),
    ];

    #[test]
    fn newcombe_examples_to_four_decimals() {
        for (r, n, wl, wh, cl, ch) in NEWCOMBE {
            let w = limits(&wilson(r, n, 0.95).unwrap());
            let c = limits(&clopper_pearson(r, n, 0.95).unwrap());
            for (got, want) in [(w.0, wl), (w.1, wh), (c.0, cl), (c.1, ch)] {
                assert!((got - want).abs() < 0.5e-4, "{r}/{n}: {got} vs {want}");
            }
        }
    }

    #[test]
    fn wilson_full_precision() {
        // [ref] METHODS.md: 81/263 Wilson (0.2552885199, 0.3662095770).
        let (low, high) = limits(&wilson(81, 263, 0.95).unwrap());
        assert!((low - 0.2552885199).abs() < 1e-10);
        assert!((high - 0.3662095770).abs() < 1e-10);
    }

    // [ref] statsmodels 0.15.0 proportion_confint (scipy 1.17.1), full
    // precision: (r, n, level, method, low, high).
    // 20/20 Wilson high: statsmodels gives 0.9999999999999999; ours is
    // exactly 1 by definition (see `wilson`).
    const STATSMODELS: [(u64, u64, f64, IntervalMethod, f64, f64); 6] = [
        (
            81,
            263,
            0.90,
            IntervalMethod::Wilson,
            0.2633136171884814,
            0.35656634960848815,
        ),
        (
            15,
            148,
            0.95,
            IntervalMethod::ClopperPearson,
            0.05784401008344857,
            0.161650490349479,
        ),
        (
            1,
            29,
            0.95,
            IntervalMethod::ClopperPearson,
            0.000872646883579922,
            0.17764429548872293,
        ),
        (
            81,
            263,
            0.99,
            IntervalMethod::ClopperPearson,
            0.2368373581655392,
            0.386258325669745,
        ),
        (
            20,
            20,
            0.95,
            IntervalMethod::ClopperPearson,
            0.8315665290169146,
            1.0,
        ),
        (
            20,
            20,
            0.95,
            IntervalMethod::Wilson,
            0.8388748419471804,
            1.0,
        ),
    ];

    #[test]
    fn other_levels_and_edges_match_statsmodels() {
        for (r, n, level, method, low, high) in STATSMODELS {
            let i = match method {
                IntervalMethod::Wilson => wilson(r, n, level),
                _ => clopper_pearson(r, n, level),
            }
            .unwrap();
            assert!(
                (i.low - low).abs() < 1e-12,
                "{r}/{n} {method:?} low {}",
                i.low
            );
            assert!(
                (i.high - high).abs() < 1e-12,
                "{r}/{n} {method:?} high {}",
                i.high
            );
        }
    }

    #[test]
    fn all_successes_and_none_hit_the_bounds_exactly() {
        // By definition (METHODS.md): L = 0 when r = 0, U = 1 when r = n.
        assert_eq!(wilson(0, 20, 0.95).unwrap().low, 0.0);
        assert_eq!(wilson(20, 20, 0.95).unwrap().high, 1.0);
        assert_eq!(clopper_pearson(0, 20, 0.95).unwrap().low, 0.0);
        assert_eq!(clopper_pearson(20, 20, 0.95).unwrap().high, 1.0);
    }

    #[test]
    fn bad_arguments_are_errors() {
        assert!(wilson(3, 0, 0.95).is_err());
        assert!(wilson(4, 3, 0.95).is_err());
        for level in [0.0, 1.0, -0.5, f64::NAN] {
            assert!(wilson(1, 3, level).is_err());
            assert!(clopper_pearson(1, 3, level).is_err());
        }
        assert!(bonferroni_level(0).is_err());
    }

    #[test]
    fn bonferroni_levels() {
        // [ref] METHODS.md: level 1 - 0.05/m for m openings.
        for (m, want) in [(1, 0.95), (2, 0.975), (5, 0.99)] {
            assert!((bonferroni_level(m).unwrap() - want).abs() < 1e-15);
        }
    }

    #[test]
    fn method_names_are_kebab_case() {
        let i = Interval {
            low: 0.0,
            high: 1.0,
            level: 0.95,
            method: IntervalMethod::ClusterBootstrapPercentile,
        };
        let json = serde_json::to_string(&i).unwrap();
        assert_eq!(
            json,
            r#"{"low":0.0,"high":1.0,"level":0.95,"method":"cluster-bootstrap-percentile"}"#
        );
        let cp = serde_json::to_string(&IntervalMethod::ClopperPearson).unwrap();
        assert_eq!(cp, r#""clopper-pearson""#);
    }
}
