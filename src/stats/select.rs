//! Selection rules over a [`ScoreTable`]: `best` and `one-standard-error`.
//!
//! Invariants: ties always go to the lowest candidate index; the
//! one-standard-error rule only ever chooses a candidate of the same
//! learner as the best one, because simplicity keys of different learners
//! (a neighbour count, a shrinkage threshold) are not comparable.

use std::cmp::Ordering;

use serde::Serialize;

use super::error::{StatsError, check_finite, finite};
use super::summary::standard_error;
use super::table::{Direction, ScoreTable, best_index};

/// A selection rule, as named in plans and output.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Rule {
    Best,
    OneStandardError,
}

/// What a rule chose and why.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Selection {
    pub rule: Rule,
    pub direction: Direction,
    /// The chosen candidate.
    pub chosen: usize,
    /// The candidate with the best mean (ties: lowest index).
    pub best: usize,
    /// Every candidate's mean over the splits.
    pub means: Vec<f64>,
    /// sd of the best candidate's split scores / sqrt(splits); `None` with
    /// one split, where it is undefined.
    pub standard_error: Option<f64>,
    /// best mean + SE (smaller is better) or - SE (larger is better), under
    /// the one-standard-error rule; `None` under `best`.
    pub threshold: Option<f64>,
}

/// Per-candidate facts the one-standard-error rule needs.
#[derive(Clone, Copy, Debug)]
pub struct CandidateFacts<'a> {
    /// Any code per candidate; equal codes mean the same learner.
    pub learners: &'a [u32],
    /// Per candidate, compared lexicographically; larger means simpler.
    pub simplicity: &'a [Vec<f64>],
}

/// Apply `rule`; `facts` are only read by the one-standard-error rule.
pub fn select(
    table: &ScoreTable,
    direction: Direction,
    rule: Rule,
    facts: CandidateFacts<'_>,
) -> Result<Selection, StatsError> {
    match rule {
        Rule::Best => select_best(table, direction),
        Rule::OneStandardError => select_one_standard_error(table, direction, facts),
    }
}

/// The candidate with the best mean score; ties go to the lowest index.
pub fn select_best(table: &ScoreTable, direction: Direction) -> Result<Selection, StatsError> {
    let means = table.means()?;
    let best = best_index(&means, direction);
    let standard_error = match table.splits() {
        1 => None,
        _ => Some(standard_error(&table.candidate_scores(best))?),
    };
    Ok(Selection {
        rule: Rule::Best,
        direction,
        chosen: best,
        best,
        means,
        standard_error,
        threshold: None,
    })
}

/// The one-standard-error rule: Breiman, Friedman, Olshen, Stone (1984),
/// Classification and Regression Trees, p. 80; Hastie, Tibshirani, Friedman
/// (2009), The Elements of Statistical Learning, 2nd ed., 7.10. Take the
/// best mean; SE = sd of the best candidate's split scores / sqrt(splits);
/// among candidates of the best one's learner whose mean is within one SE
/// of the best (inclusive), choose the one with the largest simplicity key
/// (lexicographic); ties go to the lowest index. Needs two splits or more.
pub fn select_one_standard_error(
    table: &ScoreTable,
    direction: Direction,
    facts: CandidateFacts<'_>,
) -> Result<Selection, StatsError> {
    check_facts(table, facts)?;
    let mut selection = select_best(table, direction)?;
    let se = selection.standard_error.ok_or(StatsError::TooFew {
        what: "the one-standard-error rule (splits)",
        needed: 2,
        got: table.splits(),
    })?;
    let best = selection.best;
    let threshold = match direction {
        Direction::SmallerIsBetter => selection.means[best] + se,
        Direction::LargerIsBetter => selection.means[best] - se,
    };
    let threshold = finite(threshold, "the one-standard-error threshold")?;
    let within = |c: usize| !direction.better(threshold, selection.means[c]);
    let eligible = |c: usize| facts.learners[c] == facts.learners[best] && within(c);
    // Ascending scan with a strict comparison: ties go to the lowest index.
    // The best candidate is always eligible, so the scan always chooses.
    let mut chosen: Option<usize> = None;
    for c in (0..table.candidates()).filter(|&c| eligible(c)) {
        match chosen {
            Some(k) if !simpler(&facts.simplicity[c], &facts.simplicity[k]) => {}
            _ => chosen = Some(c),
        }
    }
    selection.rule = Rule::OneStandardError;
    selection.chosen = chosen.unwrap_or(best);
    selection.threshold = Some(threshold);
    Ok(selection)
}

fn simpler(a: &[f64], b: &[f64]) -> bool {
    compare_keys(a, b) == Ordering::Greater
}

/// Lexicographic order of finite keys (-0 equals 0); a key that is a
/// prefix of a longer one orders first.
fn compare_keys(a: &[f64], b: &[f64]) -> Ordering {
    for (x, y) in a.iter().zip(b) {
        match x.partial_cmp(y).unwrap_or(Ordering::Equal) {
            Ordering::Equal => continue,
            other => return other,
        }
    }
    a.len().cmp(&b.len())
}

fn check_facts(table: &ScoreTable, facts: CandidateFacts<'_>) -> Result<(), StatsError> {
    let n = table.candidates();
    if facts.learners.len() != n || facts.simplicity.len() != n {
        return Err(StatsError::Invalid(format!(
            "the one-standard-error rule needs a learner and a simplicity key for \
             each of the {n} candidates, got {} and {}",
            facts.learners.len(),
            facts.simplicity.len()
        )));
    }
    facts
        .simplicity
        .iter()
        .try_for_each(|key| check_finite(key, "simplicity keys"))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// METHODS.md one-SE table: rows = folds, columns = candidates,
    /// simplest first; errors, smaller is better.
    fn errors() -> ScoreTable {
        ScoreTable::from_rows(&[
            vec![0.30, 0.20, 0.25],
            vec![0.10, 0.25, 0.20],
            vec![0.20, 0.15, 0.30],
            vec![0.25, 0.10, 0.15],
            vec![0.15, 0.20, 0.10],
        ])
        .unwrap()
    }

    fn accuracies() -> ScoreTable {
        let t = errors();
        let rows: Vec<Vec<f64>> = (0..t.splits())
            .map(|s| t.split_scores(s).iter().map(|e| 1.0 - e).collect())
            .collect();
        ScoreTable::from_rows(&rows).unwrap()
    }

    const SAME: [u32; 3] = [0, 0, 0];

    fn simplest_first() -> Vec<Vec<f64>> {
        vec![vec![3.0], vec![2.0], vec![1.0]]
    }

    #[test]
    fn one_se_table_matches_reference() {
        // [ref] METHODS.md: means (0.20, 0.18, 0.20), best 1, SE 0.0254950976,
        // threshold 0.2054950976, one-SE choice 0.
        let keys = simplest_first();
        let facts = CandidateFacts {
            learners: &SAME,
            simplicity: &keys,
        };
        let s = select_one_standard_error(&errors(), Direction::SmallerIsBetter, facts).unwrap();
        for (got, want) in s.means.iter().zip([0.20, 0.18, 0.20]) {
            assert!((got - want).abs() < 1e-12);
        }
        assert_eq!((s.best, s.chosen), (1, 0));
        assert!((s.standard_error.unwrap() - 0.0254950976).abs() < 1e-10);
        assert!((s.threshold.unwrap() - 0.2054950976).abs() < 1e-10);
    }

    #[test]
    fn larger_is_better_mirrors_the_rule() {
        // The same table as accuracies (1 - error): by definition the same
        // best and choice, threshold 1 - 0.2054950976 [ref, derived].
        let keys = simplest_first();
        let facts = CandidateFacts {
            learners: &SAME,
            simplicity: &keys,
        };
        let s = select_one_standard_error(&accuracies(), Direction::LargerIsBetter, facts).unwrap();
        assert_eq!((s.best, s.chosen), (1, 0));
        assert!((s.threshold.unwrap() - (1.0 - 0.2054950976)).abs() < 1e-10);
        let b = select_best(&accuracies(), Direction::LargerIsBetter).unwrap();
        assert_eq!((b.best, b.chosen, b.threshold), (1, 1, None));
    }

    #[test]
    fn choice_depends_on_keys_learners_and_ties() {
        // (learners, simplicity keys, expected choice) on the METHODS table:
        // candidates 0 and 2 are within one SE of the best (1).
        let cases: [([u32; 3], [[f64; 2]; 3], usize); 5] = [
            ([0, 0, 0], [[1.0, 0.0], [2.0, 0.0], [3.0, 0.0]], 2), // column 2 simplest
            ([0, 0, 0], [[5.0, 1.0], [1.0, 0.0], [5.0, 2.0]], 2), // second key decides
            ([0, 0, 0], [[4.0, 0.0], [1.0, 0.0], [4.0, 0.0]], 0), // tie: lowest index
            ([0, 0, 0], [[1.0, 0.0], [1.0, 0.0], [1.0, 0.0]], 0), // all equal: lowest
            ([7, 3, 3], [[9.0, 0.0], [1.0, 0.0], [2.0, 0.0]], 2), // other learner skipped
        ];
        for (learners, keys, want) in cases {
            let keys: Vec<Vec<f64>> = keys.iter().map(|k| k.to_vec()).collect();
            let facts = CandidateFacts {
                learners: &learners,
                simplicity: &keys,
            };
            let s = select(
                &errors(),
                Direction::SmallerIsBetter,
                Rule::OneStandardError,
                facts,
            );
            assert_eq!(s.unwrap().chosen, want, "{learners:?} {keys:?}");
        }
    }

    #[test]
    fn the_threshold_is_inclusive() {
        // Best column (0, 2): mean 1, sd sqrt(2), SE exactly 1, threshold 2;
        // column 0 has mean exactly 2, so it is within one SE (inclusive, as
        // in ESL 7.10 "no more than one standard error above").
        let t = ScoreTable::from_rows(&[vec![2.0, 0.0], vec![2.0, 2.0]]).unwrap();
        let keys = vec![vec![1.0], vec![0.0]];
        let facts = CandidateFacts {
            learners: &[0, 0],
            simplicity: &keys,
        };
        let s = select_one_standard_error(&t, Direction::SmallerIsBetter, facts).unwrap();
        assert_eq!((s.best, s.threshold, s.chosen), (1, Some(2.0), 0));
    }

    #[test]
    fn best_rule_and_degenerate_inputs() {
        let keys = simplest_first();
        let facts = CandidateFacts {
            learners: &SAME,
            simplicity: &keys,
        };
        let b = select(&errors(), Direction::SmallerIsBetter, Rule::Best, facts).unwrap();
        assert_eq!((b.rule, b.chosen, b.best), (Rule::Best, 1, 1));
        let one_split = ScoreTable::from_rows(&[vec![0.2, 0.1]]).unwrap();
        let keys2 = vec![vec![1.0], vec![0.0]];
        let facts2 = CandidateFacts {
            learners: &[0, 0],
            simplicity: &keys2,
        };
        let err = select_one_standard_error(&one_split, Direction::SmallerIsBetter, facts2);
        assert!(matches!(err, Err(StatsError::TooFew { .. })));
        assert_eq!(
            select_best(&one_split, Direction::SmallerIsBetter)
                .unwrap()
                .standard_error,
            None
        );
        let short = CandidateFacts {
            learners: &[0],
            simplicity: &keys,
        };
        assert!(select_one_standard_error(&errors(), Direction::SmallerIsBetter, short).is_err());
    }

    #[test]
    fn rule_names_are_kebab_case() {
        let json = serde_json::to_string(&Rule::OneStandardError).unwrap();
        assert_eq!(json, r#""one-standard-error""#);
    }
}
