//! The optimism of the best cross-validated mean: the bias estimate of
//! Tibshirani and Tibshirani (2009) over the eligible candidates' outer
//! split x candidate table, put in a plain sentence; and, for nested
//! schemes, the nested estimate when the selection records one.
//!
//! Invariants: the estimate is the stats module's, over eligible
//! candidates only (the baseline is never chosen, so it is no part of the
//! search); the bias is never negative; the sentence uses the numbers of
//! the report, rounded the same way.

use serde::Serialize;
use serde_json::Value;

use crate::stats::{self, Direction, ScoreTable};

use super::analysis::{AnalysisError, NestedEstimate, number};
use super::recorded::{Recorded, SchemeFacts, Tables};

/// The optimism estimate in numbers and words.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OptimismReport {
    /// Eligible candidates searched over.
    pub candidates: usize,
    /// The candidate with the best mean (t*).
    pub best: String,
    pub best_label: String,
    /// CV(t*): its mean over the outer splits.
    pub cv: f64,
    /// Tibshirani and Tibshirani (2009) bias estimate, in metric units.
    pub bias: f64,
    /// cv - bias (larger is better) or cv + bias (smaller is better).
    pub corrected: f64,
    pub chosen: String,
    pub chosen_label: String,
    pub chosen_mean: f64,
    /// The estimate in plain words.
    pub sentence: String,
    /// The nested estimate, when the scheme is nested and the selection
    /// records one.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub nested: Option<NestedEstimate>,
    /// What to know about nesting, when the scheme is nested.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub nested_note: Option<String>,
}

fn score_rows(
    r: &Recorded,
    t: &Tables,
    eligible: &[usize],
) -> Result<Vec<Vec<f64>>, AnalysisError> {
    let splits = t.validation.first().map_or(0, Vec::len);
    (0..splits)
        .map(|s| {
            eligible
                .iter()
                .map(|&c| {
                    t.validation[c][s].ok_or_else(|| {
                        AnalysisError::Inconsistent(format!(
                            "eligible candidate {} has no {} score on outer split {}",
                            r.candidates[c].label,
                            r.metric,
                            s + 1
                        ))
                    })
                })
                .collect()
        })
        .collect()
}

/// The optimism report of recorded selection `r`.
pub(super) fn optimism(r: &Recorded, t: &Tables) -> Result<OptimismReport, AnalysisError> {
    let eligible: Vec<usize> = (0..r.candidates.len())
        .filter(|&c| r.candidates[c].eligible && !r.candidates[c].reference)
        .collect();
    if eligible.is_empty() {
        return Err(AnalysisError::Inconsistent(
            "the selection records no eligible candidate".into(),
        ));
    }
    let table = ScoreTable::from_rows(&score_rows(r, t, &eligible)?)
        .map_err(|e| AnalysisError::Inconsistent(e.to_string()))?;
    let direction = Direction::from_larger_is_better(r.larger_is_better);
    let o = stats::minimum_cv_bias(&table, direction)
        .map_err(|e| AnalysisError::Inconsistent(e.to_string()))?;
    let best = &r.candidates[eligible[o.chosen]];
    let chosen_index = r.index(&r.chosen).unwrap_or(eligible[o.chosen]);
    let chosen = &r.candidates[chosen_index];
    let chosen_mean = stats::mean(
        &t.validation[chosen_index]
            .iter()
            .flatten()
            .copied()
            .collect::<Vec<_>>(),
    )
    .map_err(|e| AnalysisError::Inconsistent(e.to_string()))?;
    let (nested, nested_note) = nested(r);
    let mut report = OptimismReport {
        candidates: eligible.len(),
        best: best.id.clone(),
        best_label: best.label.clone(),
        cv: o.cv,
        bias: o.bias,
        corrected: o.corrected,
        chosen: chosen.id.clone(),
        chosen_label: chosen.label.clone(),
        chosen_mean,
        sentence: String::new(),
        nested,
        nested_note,
    };
    report.sentence = sentence(&report, r.larger_is_better);
    Ok(report)
}

/// The estimate in words.
fn sentence(o: &OptimismReport, larger: bool) -> String {
    let verb = if larger { "inflates" } else { "understates" };
    let mut text = if o.candidates == 1 {
        format!(
            "only one candidate was eligible, so there was no search to be optimistic about: \
             its cross-validation mean is {}",
            number(o.cv)
        )
    } else if o.bias == 0.0 {
        format!(
            "the best cross-validation mean ({}) shows no optimism by this estimate: that \
             candidate is the best of the {} on every split",
            number(o.cv),
            o.candidates
        )
    } else if o.chosen == o.best {
        format!(
            "the chosen candidate's cross-validation mean ({}) is optimistic: picking the best \
             of {} candidates on the same splits {verb} it by about {}; a bias-corrected \
             estimate is {}",
            number(o.cv),
            o.candidates,
            number(o.bias),
            number(o.corrected)
        )
    } else {
        format!(
            "the best cross-validation mean ({}, {}) is optimistic: picking the best of {} \
             candidates on the same splits {verb} it by about {}; a bias-corrected estimate is \
             {}. The rule chose {} instead, with a mean of {}; the correction is defined for \
             the best mean, so read {} as an estimate for the search as a whole",
            number(o.cv),
            o.best_label,
            o.candidates,
            number(o.bias),
            number(o.corrected),
            o.chosen_label,
            number(o.chosen_mean),
            number(o.corrected)
        )
    };
    text.push_str(" (Tibshirani and Tibshirani 2009).");
    if let Some(n) = &o.nested {
        text.push_str(&format!(
            " The nested estimate, which chooses on the inner splits and scores the choice on \
             the outer ones, is {}.",
            number(n.estimate)
        ));
    }
    text
}

/// A recorded nested estimate: `nested` as a number, or an object with a
/// number `estimate` (or `mean`) and optionally `se`.
fn read_nested(v: &Value) -> Option<NestedEstimate> {
    if let Some(x) = v.as_f64() {
        return Some(NestedEstimate {
            estimate: x,
            se: None,
        });
    }
    let estimate = v.get("estimate").or_else(|| v.get("mean"))?.as_f64()?;
    Some(NestedEstimate {
        estimate,
        se: v.get("se").and_then(Value::as_f64),
    })
}

fn nested(r: &Recorded) -> (Option<NestedEstimate>, Option<String>) {
    let recorded = r
        .nested
        .as_ref()
        .and_then(read_nested)
        .filter(|n| n.estimate.is_finite());
    let is_nested = matches!(SchemeFacts::of(&r.scheme), SchemeFacts::Nested { .. });
    match (is_nested, recorded) {
        (_, Some(n)) => (Some(n), None),
        (true, None) => (
            None,
            Some(
                "the scheme is nested, but this selection records no nested estimate; the \
                 means here are over the outer splits and carry the optimism above"
                    .into(),
            ),
        ),
        (false, None) => (None, None),
    }
}

#[cfg(test)]
mod tests {
    use super::super::fixture::{Fixture, kfold};
    use super::*;
    use serde_json::json;

    /// The METHODS.md one-SE table (fold errors; columns simplest first),
    /// as three tree depths 1, 2, 3.
    fn methods_table(f: &mut Fixture) {
        let cols = [
            [0.30, 0.10, 0.20, 0.25, 0.15],
            [0.20, 0.25, 0.15, 0.10, 0.20],
            [0.25, 0.20, 0.30, 0.15, 0.10],
        ];
        for (i, c) in cols.iter().enumerate() {
            f.candidate(
                &format!("d{}", i + 1),
                "tree",
                json!({"depth": i + 1}),
                c,
                None,
            );
        }
    }

    #[test]
    fn methods_table_bias_and_sentence() {
        // [ref] METHODS.md: bias 0.05, corrected 0.23, t* = column 1.
        let mut f = Fixture::new(kfold(5, 1), 5, 40, 10);
        f.metric("error", false);
        methods_table(&mut f);
        f.choose("d2", "d2");
        let r = f.recorded();
        let o = optimism(&r, &r.tables(&r.metric)).unwrap();
        assert_eq!((o.best.as_str(), o.candidates), ("d2", 3));
        assert!((o.bias - 0.05).abs() < 1e-12 && (o.corrected - 0.23).abs() < 1e-12);
        assert_eq!(
            o.sentence,
            "the chosen candidate's cross-validation mean (0.180) is optimistic: picking the \
             best of 3 candidates on the same splits understates it by about 0.050; a \
             bias-corrected estimate is 0.230 (Tibshirani and Tibshirani 2009)."
        );
    }

    #[test]
    fn a_simpler_choice_is_named_beside_the_best() {
        // Same table: the one-SE rule of METHODS.md chooses column 0
        // (mean 0.20) while the best is column 1.
        let mut f = Fixture::new(kfold(5, 1), 5, 40, 10);
        f.metric("error", false);
        methods_table(&mut f);
        f.choose("d1", "d2");
        let r = f.recorded();
        let o = optimism(&r, &r.tables(&r.metric)).unwrap();
        assert!((o.chosen_mean - 0.20).abs() < 1e-12);
        assert!(
            o.sentence
                .contains("The rule chose tree {\"depth\":1} instead, with a mean of 0.200")
        );
        assert_eq!(o.nested_note, None);
    }

    #[test]
    fn nested_estimate_shown_when_recorded_and_missed_when_not() {
        let nested = json!({"scheme": "nested", "outer": kfold(3, 1), "inner": kfold(2, 1)});
        let mut f = Fixture::new(nested, 3, 40, 10);
        f.candidate("a", "tree", json!({"depth": 1}), &[0.5, 0.75, 0.5], None);
        f.candidate("b", "tree", json!({"depth": 2}), &[0.75, 0.5, 0.5], None);
        f.choose("a", "a");
        let r = f.recorded();
        let o = optimism(&r, &r.tables(&r.metric)).unwrap();
        assert!(o.nested.is_none() && o.nested_note.unwrap().contains("records no nested"));
        let mut v = f.json();
        v["nested"] = json!({"estimate": 0.625, "se": 0.1});
        let r = Recorded::parse(&v).unwrap();
        let o = optimism(&r, &r.tables(&r.metric)).unwrap();
        assert_eq!(
            o.nested,
            Some(NestedEstimate {
                estimate: 0.625,
                se: Some(0.1)
            })
        );
        assert!(o.sentence.ends_with("the outer ones, is 0.625."));
    }

    #[test]
    fn one_candidate_has_nothing_to_correct() {
        let mut f = Fixture::new(kfold(2, 1), 2, 40, 10);
        f.candidate("a", "tree", json!({"depth": 1}), &[0.5, 0.75], None);
        f.baseline(&[0.25, 0.25]);
        f.choose("a", "a");
        let r = f.recorded();
        let o = optimism(&r, &r.tables(&r.metric)).unwrap();
        assert_eq!((o.candidates, o.bias), (1, 0.0));
        assert!(o.sentence.starts_with("only one candidate was eligible"));
    }
}
