//! Bootstrap estimators of prediction error: Err.632 (Efron 1983) and
//! Err.632+ (Efron and Tibshirani 1997), with helpers for the no-information
//! error rate gamma (0/1 loss) and the leave-one-out bootstrap error Err1.
//!
//! Invariants: losses are finite and non-negative; 0 <= R <= 1 and
//! 0.632 <= w <= 1, so Err.632+ lies between errbar and max(errbar, Err1');
//! sums run in row order (and, within a row, in the order given).

use std::collections::BTreeMap;

use serde::Serialize;

use super::error::{StatsError, check_finite, finite};
use super::summary::sum;

/// Every quantity of the .632+ estimate, for output.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Err632Plus {
    /// errbar: apparent error of the model fit on all rows.
    pub apparent: f64,
    /// Err1: leave-one-out bootstrap error.
    pub out_of_bag: f64,
    /// gamma: no-information error rate.
    pub no_information: f64,
    /// R: relative overfitting rate, clipped to [0, 1].
    pub relative_overfitting: f64,
    /// w = 0.632 / (1 - 0.368 R).
    pub weight: f64,
    /// 0.368 errbar + 0.632 Err1.
    pub err632: f64,
    /// (1 - w) errbar + w Err1', Err1' = min(Err1, gamma).
    pub err632_plus: f64,
}

/// Err1 and how many rows it averages over.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OutOfBag {
    pub error: f64,
    pub rows_used: usize,
    /// Rows that no bootstrap draw left out; they are omitted from Err1.
    pub rows_never_out: usize,
}

fn check_losses(values: &[f64], what: &str) -> Result<(), StatsError> {
    check_finite(values, what)?;
    match values.iter().position(|&v| v < 0.0) {
        None => Ok(()),
        Some(i) => Err(StatsError::Invalid(format!(
            "{what} must not be negative, but value {i} is {}",
            values[i]
        ))),
    }
}

/// Efron (1983), JASA 78:316-331: Err.632 = 0.368 errbar + 0.632 Err1.
pub fn err632(apparent: f64, out_of_bag: f64) -> Result<f64, StatsError> {
    check_losses(&[apparent, out_of_bag], "errors")?;
    finite(0.368 * apparent + 0.632 * out_of_bag, "err.632")
}

/// Efron and Tibshirani (1997), JASA 92:548-560: R = (Err1 - errbar) /
/// (gamma - errbar) clipped to [0, 1] (0 when Err1 <= errbar or gamma <=
/// errbar); Err1' = min(Err1, gamma); w = 0.632 / (1 - 0.368 R);
/// Err.632+ = (1 - w) errbar + w Err1'. Works for any loss; gamma from
/// [`no_information_rate`] is the 0/1-loss case.
pub fn err632_plus(
    apparent: f64,
    out_of_bag: f64,
    no_information: f64,
) -> Result<Err632Plus, StatsError> {
    check_losses(&[apparent, out_of_bag, no_information], "errors")?;
    let bounded = out_of_bag.min(no_information);
    let r = if out_of_bag > apparent && no_information > apparent {
        ((bounded - apparent) / (no_information - apparent)).clamp(0.0, 1.0)
    } else {
        0.0
    };
    let weight = 0.632 / (1.0 - 0.368 * r);
    Ok(Err632Plus {
        apparent,
        out_of_bag,
        no_information,
        relative_overfitting: r,
        weight,
        err632: err632(apparent, out_of_bag)?,
        err632_plus: finite((1.0 - weight) * apparent + weight * bounded, "err.632+")?,
    })
}

/// gamma = sum_k p_k (1 - q_k) for 0/1 loss (Efron and Tibshirani 1997):
/// p_k the observed share of class k, q_k the share of predictions of class
/// k by the model fit on all rows, both in the same class order. Each list
/// must lie in [0, 1] and sum to 1 within 1e-9.
pub fn no_information_rate(observed: &[f64], predicted: &[f64]) -> Result<f64, StatsError> {
    if observed.is_empty() || observed.len() != predicted.len() {
        return Err(StatsError::Invalid(format!(
            "class shares need one observed and one predicted share per class, \
             got {} and {}",
            observed.len(),
            predicted.len()
        )));
    }
    check_shares(observed, "observed class shares")?;
    check_shares(predicted, "predicted class shares")?;
    Ok(sum(observed
        .iter()
        .zip(predicted)
        .map(|(p, q)| p * (1.0 - q))))
}

fn check_shares(shares: &[f64], what: &str) -> Result<(), StatsError> {
    check_finite(shares, what)?;
    let total = sum(shares.iter().copied());
    if shares.iter().any(|&s| !(0.0..=1.0).contains(&s)) || (total - 1.0).abs() > 1e-9 {
        return Err(StatsError::Invalid(format!(
            "{what} must lie in [0, 1] and sum to 1, they sum to {total}"
        )));
    }
    Ok(())
}

/// [`no_information_rate`] from labels: `observed[i]` the class code of row
/// i, `predicted[i]` the prediction for row i of the model fit on all rows.
/// Classes are taken in ascending code order.
pub fn no_information_rate_from_labels(
    observed: &[u32],
    predicted: &[u32],
) -> Result<f64, StatsError> {
    if observed.is_empty() || observed.len() != predicted.len() {
        return Err(StatsError::Invalid(format!(
            "the no-information rate needs one prediction per row, got {} rows \
             and {} predictions",
            observed.len(),
            predicted.len()
        )));
    }
    let mut counts: BTreeMap<u32, (u64, u64)> = BTreeMap::new();
    observed
        .iter()
        .for_each(|&k| counts.entry(k).or_default().0 += 1);
    predicted
        .iter()
        .for_each(|&k| counts.entry(k).or_default().1 += 1);
    let n = observed.len() as f64;
    let terms = counts
        .values()
        .map(|&(p, q)| p as f64 / n * (1.0 - q as f64 / n));
    Ok(sum(terms))
}

/// Err1, the leave-one-out bootstrap error (Efron and Tibshirani 1997):
/// `losses_by_row[i]` holds row i's losses under each model whose bootstrap
/// sample left row i out; Err1 is the mean over rows of each row's mean
/// loss. Rows with no such model are omitted and counted, as in the
/// paper's definition [mem]; if no row has one, it is undefined.
pub fn out_of_bag_error(losses_by_row: &[Vec<f64>]) -> Result<OutOfBag, StatsError> {
    let mut row_means = Vec::with_capacity(losses_by_row.len());
    for losses in losses_by_row.iter().filter(|l| !l.is_empty()) {
        check_losses(losses, "out-of-bag losses")?;
        row_means.push(sum(losses.iter().copied()) / losses.len() as f64);
    }
    if row_means.is_empty() {
        return Err(StatsError::Undefined(
            "no row was left out of any bootstrap draw; use more draws".into(),
        ));
    }
    Ok(OutOfBag {
        error: finite(
            sum(row_means.iter().copied()) / row_means.len() as f64,
            "err1",
        )?,
        rows_used: row_means.len(),
        rows_never_out: losses_by_row.len() - row_means.len(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn methods_check_values() {
        // [ref] METHODS.md: errbar 0.05, Err1 0.20, gamma 0.50 -> R 0.333333,
        // w 0.720365, Err.632 0.144800, Err.632+ 0.158055.
        let e = err632_plus(0.05, 0.20, 0.50).unwrap();
        let pairs = [
            (e.relative_overfitting, 0.333333),
            (e.weight, 0.720365),
            (e.err632, 0.144800),
            (e.err632_plus, 0.158055),
        ];
        for (got, want) in pairs {
            assert!((got - want).abs() < 5e-7, "{got} vs {want}");
        }
    }

    #[test]
    fn clipping_cases() {
        // (errbar, Err1, gamma, R, Err.632+), by the definitions above:
        // no overfitting -> R 0, w 0.632; Err1 above gamma -> Err1' = gamma,
        // R 1, w 1, Err.632+ = gamma; gamma below errbar -> R 0.
        let cases = [
            (0.20, 0.10, 0.50, 0.0, 0.368 * 0.20 + 0.632 * 0.10),
            (0.05, 0.60, 0.50, 1.0, 0.50),
            (0.30, 0.40, 0.25, 0.0, 0.368 * 0.30 + 0.632 * 0.25),
        ];
        for (apparent, oob, gamma, r, plus) in cases {
            let e = err632_plus(apparent, oob, gamma).unwrap();
            assert_eq!(e.relative_overfitting, r);
            assert!((e.err632_plus - plus).abs() < 1e-15, "{e:?}");
        }
        assert!(err632_plus(-0.1, 0.2, 0.5).is_err());
        assert!(err632(f64::NAN, 0.2).is_err());
    }

    #[test]
    fn no_information_rate_from_shares_and_labels() {
        // Two balanced classes predicted in equal shares: gamma = 0.5 (Efron
        // and Tibshirani 1997, the no-information rate of a fair guess).
        assert!((no_information_rate(&[0.5, 0.5], &[0.5, 0.5]).unwrap() - 0.5).abs() < 1e-15);
        // Observed (0.6, 0.4), predicted (0.8, 0.2): 0.6*0.2 + 0.4*0.8 = 0.44.
        let from_shares = no_information_rate(&[0.6, 0.4], &[0.8, 0.2]).unwrap();
        assert!((from_shares - 0.44).abs() < 1e-15);
        let observed = [0, 0, 0, 1, 1, 0, 1, 0, 0, 1];
        let predicted = [0, 0, 0, 0, 1, 0, 0, 0, 0, 1];
        let from_labels = no_information_rate_from_labels(&observed, &predicted).unwrap();
        assert!((from_labels - 0.44).abs() < 1e-15);
        assert!(no_information_rate(&[0.6, 0.6], &[0.5, 0.5]).is_err());
        assert!(no_information_rate_from_labels(&[0], &[]).is_err());
    }

    #[test]
    fn out_of_bag_error_averages_rows_then_models() {
        // Row means 0.5, 1.0, 0.0 -> Err1 = 0.5; row 3 was never out.
        let losses = vec![vec![1.0, 0.0], vec![1.0], vec![0.0, 0.0, 0.0], vec![]];
        let oob = out_of_bag_error(&losses).unwrap();
        assert!((oob.error - 0.5).abs() < 1e-15);
        assert_eq!((oob.rows_used, oob.rows_never_out), (3, 1));
        assert!(out_of_bag_error(&[vec![], vec![]]).is_err());
        assert!(out_of_bag_error(&[vec![-1.0]]).is_err());
    }
}
