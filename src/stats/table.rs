//! The split x candidate score table that selection rules and the
//! optimism correction read, and the direction of a metric.
//!
//! Invariants: at least one split and one candidate, every row the same
//! length, every score finite. Candidate means are summed over splits in
//! split order.

use serde::Serialize;

use super::error::{StatsError, check_finite};
use super::summary::mean;

/// Whether a larger or a smaller score is better.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Direction {
    LargerIsBetter,
    SmallerIsBetter,
}

impl Direction {
    /// From a metric's `larger_is_better()` flag.
    pub fn from_larger_is_better(larger: bool) -> Direction {
        if larger {
            Direction::LargerIsBetter
        } else {
            Direction::SmallerIsBetter
        }
    }

    /// Whether `a` is strictly better than `b`.
    pub fn better(self, a: f64, b: f64) -> bool {
        match self {
            Direction::LargerIsBetter => a > b,
            Direction::SmallerIsBetter => a < b,
        }
    }
}

/// Scores of every candidate on every split: `get(split, candidate)`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ScoreTable {
    splits: usize,
    candidates: usize,
    /// Row-major: split by split.
    values: Vec<f64>,
}

impl ScoreTable {
    /// A table from one row per split, each with one score per candidate.
    pub fn from_rows(rows: &[Vec<f64>]) -> Result<ScoreTable, StatsError> {
        let candidates = rows.first().map_or(0, Vec::len);
        if rows.is_empty() || candidates == 0 {
            return Err(StatsError::Invalid(
                "a score table needs at least one split and one candidate".into(),
            ));
        }
        if let Some(bad) = rows.iter().position(|r| r.len() != candidates) {
            return Err(StatsError::Invalid(format!(
                "split {bad} has {} scores but split 0 has {candidates}",
                rows[bad].len()
            )));
        }
        let values: Vec<f64> = rows.concat();
        check_finite(&values, "scores")?;
        Ok(ScoreTable {
            splits: rows.len(),
            candidates,
            values,
        })
    }

    /// The number of splits (rows).
    pub fn splits(&self) -> usize {
        self.splits
    }

    /// The number of candidates (columns).
    pub fn candidates(&self) -> usize {
        self.candidates
    }

    /// The score of `candidate` on `split`; both must be in range.
    pub fn get(&self, split: usize, candidate: usize) -> f64 {
        self.values[split * self.candidates + candidate]
    }

    /// One split's scores, candidate by candidate.
    pub fn split_scores(&self, split: usize) -> &[f64] {
        &self.values[split * self.candidates..(split + 1) * self.candidates]
    }

    /// One candidate's scores, split by split.
    pub fn candidate_scores(&self, candidate: usize) -> Vec<f64> {
        (0..self.splits).map(|s| self.get(s, candidate)).collect()
    }

    /// Every candidate's mean score over the splits.
    pub fn means(&self) -> Result<Vec<f64>, StatsError> {
        (0..self.candidates)
            .map(|c| mean(&self.candidate_scores(c)))
            .collect()
    }
}

/// The index of the best of `values`; ties go to the lowest index.
pub(super) fn best_index(values: &[f64], direction: Direction) -> usize {
    let mut best = 0;
    for (i, &v) in values.iter().enumerate().skip(1) {
        if direction.better(v, values[best]) {
            best = i;
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_shape_and_access() {
        let t = ScoreTable::from_rows(&[vec![1.0, 2.0], vec![3.0, 4.0], vec![5.0, 9.0]]).unwrap();
        assert_eq!((t.splits(), t.candidates()), (3, 2));
        assert_eq!(t.get(2, 1), 9.0);
        assert_eq!(t.split_scores(1), &[3.0, 4.0]);
        assert_eq!(t.candidate_scores(1), vec![2.0, 4.0, 9.0]);
        assert_eq!(t.means().unwrap(), vec![3.0, 5.0]);
    }

    #[test]
    fn bad_tables_are_errors() {
        assert!(ScoreTable::from_rows(&[]).is_err());
        assert!(ScoreTable::from_rows(&[vec![]]).is_err());
        assert!(ScoreTable::from_rows(&[vec![1.0], vec![1.0, 2.0]]).is_err());
        assert!(ScoreTable::from_rows(&[vec![f64::NAN]]).is_err());
    }

    #[test]
    fn best_ties_go_to_the_lowest_index() {
        let v = [0.3, 0.1, 0.3, 0.1];
        assert_eq!(best_index(&v, Direction::LargerIsBetter), 0);
        assert_eq!(best_index(&v, Direction::SmallerIsBetter), 1);
    }
}
