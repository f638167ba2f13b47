//! The optimism of the best cross-validated score: the bias estimate of
//! Tibshirani and Tibshirani (2009) for the minimum CV error.
//!
//! Invariants: `bias >= 0` always, measured in the metric's own units as the
//! amount by which the chosen candidate's CV score flatters it; the
//! corrected score moves against the metric's direction by `bias`.

use serde::Serialize;

use super::error::{StatsError, finite};
use super::summary::sum;
use super::table::{Direction, ScoreTable, best_index};

/// The bias estimate and the corrected score of the best candidate.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Optimism {
    pub direction: Direction,
    /// t*: the candidate with the best mean (ties: lowest index).
    pub chosen: usize,
    /// CV(t*): its mean score over the splits.
    pub cv: f64,
    /// mean over splits of the gap between the split's best score and
    /// t*'s score on it; never negative.
    pub bias: f64,
    /// cv + bias for smaller-is-better metrics, cv - bias for larger.
    pub corrected: f64,
}

/// Tibshirani and Tibshirani (2009), Ann. Appl. Stat. 3:822-829: with
/// e_k(t) the error of setting t on fold k and t* the argmin of the mean,
/// bias = mean_k [e_k(t*) - min_t e_k(t)], corrected = CV(t*) + bias. For
/// a larger-is-better score s the same estimate is mean_k [max_t s_k(t) -
/// s_k(t*)] (the formula applied to -s), and corrected = CV(t*) - bias.
pub fn minimum_cv_bias(table: &ScoreTable, direction: Direction) -> Result<Optimism, StatsError> {
    let means = table.means()?;
    let chosen = best_index(&means, direction);
    let gaps = (0..table.splits()).map(|s| {
        let scores = table.split_scores(s);
        let best_here = scores[best_index(scores, direction)];
        (best_here - scores[chosen]).abs()
    });
    let bias = finite(sum(gaps) / table.splits() as f64, "the cv bias")?;
    let cv = means[chosen];
    let corrected = match direction {
        Direction::SmallerIsBetter => cv + bias,
        Direction::LargerIsBetter => cv - bias,
    };
    Ok(Optimism {
        direction,
        chosen,
        cv,
        bias,
        corrected: finite(corrected, "the corrected score")?,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const ERRORS: [[f64; 3]; 5] = [
        [0.30, 0.20, 0.25],
        [0.10, 0.25, 0.20],
        [0.20, 0.15, 0.30],
        [0.25, 0.10, 0.15],
        [0.15, 0.20, 0.10],
    ];

    fn table(f: impl Fn(f64) -> f64) -> ScoreTable {
        let rows: Vec<Vec<f64>> = ERRORS
            .iter()
            .map(|r| r.iter().map(|&e| f(e)).collect())
            .collect();
        ScoreTable::from_rows(&rows).unwrap()
    }

    #[test]
    fn methods_table_errors() {
        // [ref] METHODS.md one-SE table: bias 0.05, corrected 0.23 (t* = 1).
        let o = minimum_cv_bias(&table(|e| e), Direction::SmallerIsBetter).unwrap();
        assert_eq!(o.chosen, 1);
        assert!((o.bias - 0.05).abs() < 1e-12);
        assert!((o.corrected - 0.23).abs() < 1e-12);
    }

    #[test]
    fn methods_table_as_accuracies() {
        // The same table as 1 - error: by the definition above bias 0.05 and
        // corrected 1 - 0.23 = 0.77 [ref, derived from METHODS.md].
        let o = minimum_cv_bias(&table(|e| 1.0 - e), Direction::LargerIsBetter).unwrap();
        assert_eq!(o.chosen, 1);
        assert!((o.bias - 0.05).abs() < 1e-12);
        assert!((o.corrected - 0.77).abs() < 1e-12);
    }

    #[test]
    fn a_candidate_best_on_every_split_has_no_bias() {
        // By definition: t* is the per-split optimum on every split.
        let t = ScoreTable::from_rows(&[vec![0.1, 0.3], vec![0.2, 0.4]]).unwrap();
        let o = minimum_cv_bias(&t, Direction::SmallerIsBetter).unwrap();
        assert_eq!((o.chosen, o.bias), (0, 0.0));
    }
}
