//! The chosen candidate against every other eligible candidate and the
//! baseline, on the outer splits: per-split differences and the corrected
//! resampled t of Nadeau and Bengio (2003), or for repeated k-fold the form
//! of Bouckaert and Frank (2004).
//!
//! Invariants: a difference is chosen minus other, in the metric's units,
//! in outer-split order (positive means the chosen candidate scored higher,
//! which is better only when larger is better); `distinguishable` is
//! p < 0.05 and is `None`, with the stats module's reason, whenever the
//! test is undefined. The 5% level is per comparison, not adjusted for the
//! number of comparisons.

use serde::Serialize;

use crate::stats::{self, Interval, StatsError, TTest};

use super::recorded::{Recorded, SchemeFacts, Tables};

/// The significance level below which two candidates are told apart.
pub const ALPHA: f64 = 0.05;

/// Which form of the corrected t the comparisons use.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum TestForm {
    /// Nadeau and Bengio (2003): variance factor 1/J + n2/n1 with the mean
    /// row counts of the outer splits.
    CorrectedResampled,
    /// Bouckaert and Frank (2004): r repeats of k folds, n2/n1 = 1/(k - 1).
    RepeatedFolds,
}

/// How the comparisons were computed.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TestSetup {
    pub form: TestForm,
    /// J, the outer splits.
    pub splits: usize,
    /// n1: mean training rows over the outer splits.
    pub train_rows: f64,
    /// n2: mean validation rows over the outer splits.
    pub validation_rows: f64,
    /// k and r for the repeated k-fold form.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub folds: Option<usize>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub repeats: Option<usize>,
    /// The test in words, with its source.
    pub description: String,
}

/// The chosen candidate against one other.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Comparison {
    pub candidate: String,
    pub label: String,
    pub learner: String,
    /// The baseline.
    pub reference: bool,
    /// The candidate with the best mean (when the rule chose another).
    pub best: bool,
    /// The other candidate's mean over the outer splits.
    pub mean: Option<f64>,
    /// Chosen minus other, per outer split; `None` where either lacks a score.
    pub differences: Vec<Option<f64>>,
    /// The mean of the differences.
    pub difference: Option<f64>,
    /// 95% interval of the mean difference (corrected t).
    pub interval: Option<Interval>,
    pub t: Option<f64>,
    pub df: Option<usize>,
    /// Two-sided p value.
    pub p: Option<f64>,
    /// p < 0.05.
    pub distinguishable: Option<bool>,
    /// Why there is no test, in words.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub undefined: Option<String>,
}

/// The test setup for the recorded scheme and splits.
pub(super) fn setup(r: &Recorded, scheme: &SchemeFacts) -> TestSetup {
    let outer: Vec<_> = r.outer_splits().collect();
    let j = outer.len();
    let mean_of = |f: &dyn Fn(usize) -> usize| {
        let values: Vec<f64> = (0..j).map(|i| f(i) as f64).collect();
        stats::mean(&values).unwrap_or(0.0)
    };
    let n1 = mean_of(&|i| outer[i].train_rows);
    let n2 = mean_of(&|i| outer[i].validation_rows);
    match *scheme.outer() {
        SchemeFacts::KFold { folds, repeats } if repeats > 1 => TestSetup {
            form: TestForm::RepeatedFolds,
            splits: j,
            train_rows: n1,
            validation_rows: n2,
            folds: Some(folds),
            repeats: Some(repeats),
            description: format!(
                "corrected repeated k-fold t (Bouckaert and Frank 2004): {repeats} x {folds}-fold, \
                 variance factor 1/{j} + 1/{}",
                folds.saturating_sub(1)
            ),
        },
        _ => TestSetup {
            form: TestForm::CorrectedResampled,
            splits: j,
            train_rows: n1,
            validation_rows: n2,
            folds: None,
            repeats: None,
            description: format!(
                "corrected resampled t (Nadeau and Bengio 2003) over {j} splits, \
                 variance factor 1/{j} + n2/n1 with n1 = {} and n2 = {} mean rows",
                trim(n1),
                trim(n2)
            ),
        },
    }
}

fn trim(x: f64) -> String {
    let text = format!("{x:.1}");
    text.strip_suffix(".0").map_or(text.clone(), str::to_string)
}

fn run_test(setup: &TestSetup, d: &[f64]) -> Result<TTest, StatsError> {
    match (setup.form, setup.folds, setup.repeats) {
        (TestForm::RepeatedFolds, Some(k), Some(r)) => stats::repeated_k_fold_t(d, k, r, 0.95),
        _ => stats::corrected_resampled_t(d, setup.train_rows, setup.validation_rows, 0.95),
    }
}

/// The chosen candidate `chosen` against candidate `other`.
pub(super) fn compare(
    r: &Recorded,
    t: &Tables,
    setup: &TestSetup,
    chosen: usize,
    other: usize,
) -> Comparison {
    let c = &r.candidates[other];
    let differences: Vec<Option<f64>> = t.validation[chosen]
        .iter()
        .zip(&t.validation[other])
        .map(|(a, b)| Some((*a)? - (*b)?))
        .collect();
    let present: Vec<f64> = differences.iter().flatten().copied().collect();
    let mut out = Comparison {
        candidate: c.id.clone(),
        label: c.label.clone(),
        learner: c.learner.clone(),
        reference: c.reference,
        best: c.id == r.best,
        mean: c.mean,
        difference: stats::mean(&present).ok(),
        differences,
        interval: None,
        t: None,
        df: None,
        p: None,
        distinguishable: None,
        undefined: None,
    };
    let missing = out.differences.len() - present.len();
    if missing > 0 {
        out.undefined = Some(format!(
            "{missing} outer split(s) lack a score of one of the two, so the splits do not pair up"
        ));
        return out;
    }
    match run_test(setup, &present) {
        Ok(test) => {
            out.interval = Some(test.interval);
            out.t = Some(test.t);
            out.df = Some(test.df);
            out.p = Some(test.p);
            out.distinguishable = Some(test.p < ALPHA);
        }
        Err(e) => out.undefined = Some(e.to_string()),
    }
    out
}

/// Every comparison: other eligible candidates ranked by mean (best first,
/// ties by candidate order), then the baseline.
pub(super) fn comparisons(r: &Recorded, t: &Tables, setup: &TestSetup) -> Vec<Comparison> {
    let Some(chosen) = r.index(&r.chosen) else {
        return Vec::new();
    };
    let mut others: Vec<usize> = (0..r.candidates.len())
        .filter(|&i| i != chosen && r.candidates[i].eligible && !r.candidates[i].reference)
        .collect();
    super::analysis::rank(r, &mut others);
    others.extend((0..r.candidates.len()).filter(|&i| r.candidates[i].reference && i != chosen));
    others
        .into_iter()
        .map(|o| compare(r, t, setup, chosen, o))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::super::fixture::{Fixture, kfold};
    use super::*;
    use serde_json::json;

    fn close(a: f64, b: f64, tol: f64) {
        assert!((a - b).abs() < tol, "got {a}, want {b}");
    }

    // The ten split differences of METHODS.md, as chosen (a) minus other (b):
    // b scores 0.5 on every split, a scores 0.5 + d_j.
    const D: [f64; 10] = [
        0.020, 0.035, -0.010, 0.015, 0.030, 0.005, 0.025, 0.010, 0.040, 0.000,
    ];

    fn methods_fixture(scheme: serde_json::Value, train: usize, validation: usize) -> Recorded {
        let a: Vec<f64> = D.iter().map(|d| 0.5 + d).collect();
        let mut f = Fixture::new(scheme, 10, train, validation);
        f.candidate("a", "tree", json!({"depth": 2}), &a, None);
        f.candidate("b", "tree", json!({"depth": 1}), &[0.5; 10], None);
        f.choose("a", "a");
        f.recorded()
    }

    #[test]
    fn corrected_t_on_the_methods_differences() {
        // [ref] METHODS.md: with n1 = 90, n2 = 10: t 2.309450, p 0.046278
        // (df 9): distinguishable at 5%. Monte Carlo splits, so the
        // Nadeau-Bengio form with the recorded row counts is used.
        let r = methods_fixture(json!({"scheme": "monte-carlo"}), 90, 10);
        let t = r.tables(&r.metric);
        let s = setup(&r, &SchemeFacts::of(&r.scheme));
        assert_eq!(s.form, TestForm::CorrectedResampled);
        assert_eq!((s.train_rows, s.validation_rows), (90.0, 10.0));
        let c = compare(&r, &t, &s, 0, 1);
        // 0.5 + d - 0.5 is d up to rounding of the additions.
        close(c.difference.unwrap(), 0.017, 1e-12);
        close(c.t.unwrap(), 2.309450, 1e-5);
        close(c.p.unwrap(), 0.046278, 1e-5);
        assert_eq!((c.df, c.distinguishable), (Some(9), Some(true)));
    }

    #[test]
    fn repeated_k_fold_uses_the_bouckaert_frank_form() {
        // [ref] METHODS.md: read as 2 x 5-fold on 100 rows, t 1.793619,
        // p 0.106460: not distinguishable. The recorded row counts (70, 30)
        // are deliberately not 80/20: the form must use 1/(k - 1) instead.
        let r = methods_fixture(kfold(5, 2), 70, 30);
        let t = r.tables(&r.metric);
        let s = setup(&r, &SchemeFacts::of(&r.scheme));
        assert_eq!(s.form, TestForm::RepeatedFolds);
        let c = compare(&r, &t, &s, 0, 1);
        close(c.t.unwrap(), 1.793619, 1e-5);
        close(c.p.unwrap(), 0.106460, 1e-5);
        assert_eq!(c.distinguishable, Some(false));
    }

    #[test]
    fn degenerate_comparisons_carry_the_reason() {
        let mut f = Fixture::new(kfold(3, 1), 3, 20, 10);
        f.candidate("a", "tree", json!({"depth": 1}), &[0.5, 0.75, 0.875], None);
        // Same scores: every difference 0, t = 0 and p = 1 by the stats
        // module's documented outcome.
        f.candidate(
            "same",
            "tree",
            json!({"depth": 2}),
            &[0.5, 0.75, 0.875],
            None,
        );
        // A constant non-zero difference 0.125 (exact in binary): undefined,
        // t would be infinite.
        f.candidate(
            "shift",
            "tree",
            json!({"depth": 3}),
            &[0.375, 0.625, 0.75],
            None,
        );
        f.choose("a", "a");
        let r = f.recorded();
        let (t, s) = (r.tables(&r.metric), setup(&r, &SchemeFacts::of(&r.scheme)));
        let same = compare(&r, &t, &s, 0, 1);
        assert_eq!(
            (same.t, same.p, same.distinguishable),
            (Some(0.0), Some(1.0), Some(false))
        );
        let shift = compare(&r, &t, &s, 0, 2);
        assert_eq!((shift.p, shift.distinguishable), (None, None));
        assert!(shift.undefined.unwrap().contains("infinite"));
        assert_eq!(shift.difference, Some(0.125));
    }

    #[test]
    fn one_split_is_too_few() {
        let mut f = Fixture::new(json!({"scheme": "monte-carlo"}), 1, 20, 10);
        f.candidate("a", "tree", json!({"depth": 1}), &[0.6], None);
        f.candidate("b", "tree", json!({"depth": 2}), &[0.5], None);
        f.choose("a", "a");
        let r = f.recorded();
        let (t, s) = (r.tables(&r.metric), setup(&r, &SchemeFacts::of(&r.scheme)));
        let c = compare(&r, &t, &s, 0, 1);
        assert!(c.undefined.unwrap().contains("needs at least 2"));
        assert_eq!(c.distinguishable, None);
    }
}
