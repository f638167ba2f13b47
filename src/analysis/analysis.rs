//! [`Analysis`], the whole analysis of one selection, and [`analyse`],
//! which computes it from the hashed part of a selection entry's body.

use serde::Serialize;
use serde_json::Value;

use super::bootstrap::{BootstrapEstimates, bootstrap};
use super::compare::{Comparison, TestSetup, comparisons, setup};
use super::curve::{Curve, LeftOut, curves};
use super::optimism::{OptimismReport, optimism};
use super::recorded::{Recorded, SchemeFacts, scheme_name};

/// Version of the analysis layout (for `--json` readers).
pub const FORMAT: u32 = 1;

/// How many of the best candidates the per-split view shows.
pub const TOP_CANDIDATES: usize = 5;

/// Why a selection could not be analysed.
#[derive(Debug, thiserror::Error)]
pub enum AnalysisError {
    #[error("the entry is not a selection this holdfast can read: {0}")]
    Malformed(String),
    #[error("the selection contradicts itself: {0}")]
    Inconsistent(String),
}

/// A candidate named in the analysis.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CandidateRef {
    pub id: String,
    pub label: String,
    pub learner: String,
    /// Mean over the outer splits, as recorded.
    pub mean: Option<f64>,
    pub se: Option<f64>,
}

/// One outer split's sizes.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OuterSplit {
    pub id: String,
    pub repeat: u32,
    pub fold: u32,
    pub train_rows: usize,
    pub validation_rows: usize,
}

/// One candidate's score on every outer split.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SplitScores {
    pub candidate: String,
    pub label: String,
    pub learner: String,
    pub reference: bool,
    pub chosen: bool,
    pub best: bool,
    pub mean: Option<f64>,
    /// In outer-split order; `None` where the job records no score.
    pub scores: Vec<Option<f64>>,
}

/// The one-standard-error band: the best mean -/+ its standard error.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Band {
    pub best_mean: f64,
    pub se: f64,
    pub low: f64,
    pub high: f64,
}

/// A nested cross-validation estimate recorded by the selection.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NestedEstimate {
    pub estimate: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub se: Option<f64>,
}

/// Everything the analysis says about one selection.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Analysis {
    pub format: u32,
    pub metric: String,
    pub larger_is_better: bool,
    pub rule: String,
    /// The scheme's name (`k-fold`, `bootstrap`, `nested`, ...).
    pub scheme: String,
    pub outer_splits: Vec<OuterSplit>,
    pub chosen: CandidateRef,
    pub best: CandidateRef,
    /// The reference baseline, when the selection has one.
    pub baseline: Option<CandidateRef>,
    /// Eligible candidates (the baseline is never eligible).
    pub eligible: usize,
    /// How the comparisons were computed.
    pub test: TestSetup,
    /// The chosen candidate against every other eligible candidate (best
    /// mean first) and then the baseline.
    pub comparisons: Vec<Comparison>,
    pub optimism: OptimismReport,
    /// Under the one-standard-error rule.
    pub one_se_band: Option<Band>,
    pub curves: Vec<Curve>,
    /// Learners and candidates that are on no curve, with the reason.
    pub left_out: Vec<LeftOut>,
    /// The best candidates by mean, the chosen one if not among them, and
    /// the baseline.
    pub top: Vec<SplitScores>,
    pub bootstrap: Option<BootstrapEstimates>,
    /// Why there are no bootstrap estimates.
    pub bootstrap_omitted: Option<String>,
}

/// Analyse a selection: `selection` is the hashed part of a selection
/// entry's body (`crate::exec::hashed_part(&entry.body)`).
pub fn analyse(selection: &Value) -> Result<Analysis, AnalysisError> {
    let r = Recorded::parse(selection)?;
    let t = r.tables(&r.metric);
    let scheme = SchemeFacts::of(&r.scheme);
    let test = setup(&r, &scheme);
    let (curves, left_out) = curves(&r, &t);
    let (bootstrap, bootstrap_omitted) = match bootstrap(&r) {
        Ok(b) => (Some(b), None),
        Err(why) => (None, Some(why)),
    };
    Ok(Analysis {
        format: FORMAT,
        metric: r.metric.clone(),
        larger_is_better: r.larger_is_better,
        rule: r.rule.clone(),
        scheme: scheme_name(&r.scheme),
        outer_splits: outer_splits(&r),
        chosen: candidate_ref(&r, &r.chosen),
        best: candidate_ref(&r, &r.best),
        baseline: r
            .candidates
            .iter()
            .find(|c| c.reference)
            .map(|c| candidate_ref(&r, &c.id)),
        eligible: r
            .candidates
            .iter()
            .filter(|c| c.eligible && !c.reference)
            .count(),
        comparisons: comparisons(&r, &t, &test),
        test,
        optimism: optimism(&r, &t)?,
        one_se_band: band(&r),
        curves,
        left_out,
        top: top(&r, &t.validation),
        bootstrap,
        bootstrap_omitted,
    })
}

fn candidate_ref(r: &Recorded, id: &str) -> CandidateRef {
    let c = r.index(id).map(|i| &r.candidates[i]);
    CandidateRef {
        id: id.to_string(),
        label: c.map(|c| c.label.clone()).unwrap_or_default(),
        learner: c.map(|c| c.learner.clone()).unwrap_or_default(),
        mean: c.and_then(|c| c.mean),
        se: c.and_then(|c| c.se),
    }
}

fn outer_splits(r: &Recorded) -> Vec<OuterSplit> {
    r.outer_splits()
        .map(|s| OuterSplit {
            id: s.id.clone(),
            repeat: s.repeat,
            fold: s.fold,
            train_rows: s.train_rows,
            validation_rows: s.validation_rows,
        })
        .collect()
}

fn band(r: &Recorded) -> Option<Band> {
    if r.rule != "one-standard-error" {
        return None;
    }
    let se = r.standard_error.filter(|s| s.is_finite())?;
    let best_mean = r.candidates[r.index(&r.best)?].mean?;
    Some(Band {
        best_mean,
        se,
        low: best_mean - se,
        high: best_mean + se,
    })
}

/// Sort candidate indices best mean first (no mean last; ties keep
/// candidate order).
pub(super) fn rank(r: &Recorded, idx: &mut [usize]) {
    let key = |c: usize| {
        r.candidates[c]
            .mean
            .map(|m| if r.larger_is_better { -m } else { m })
    };
    idx.sort_by(|&a, &b| match (key(a), key(b)) {
        (Some(x), Some(y)) => x.total_cmp(&y),
        (Some(_), None) => std::cmp::Ordering::Less,
        (None, Some(_)) => std::cmp::Ordering::Greater,
        (None, None) => std::cmp::Ordering::Equal,
    });
}

fn top(r: &Recorded, validation: &[Vec<Option<f64>>]) -> Vec<SplitScores> {
    let mut eligible: Vec<usize> = (0..r.candidates.len())
        .filter(|&c| r.candidates[c].eligible && !r.candidates[c].reference)
        .collect();
    rank(r, &mut eligible);
    let mut shown: Vec<usize> = eligible.into_iter().take(TOP_CANDIDATES).collect();
    if let Some(chosen) = r.index(&r.chosen).filter(|c| !shown.contains(c)) {
        shown.push(chosen);
    }
    shown.extend((0..r.candidates.len()).filter(|&c| r.candidates[c].reference));
    shown
        .into_iter()
        .map(|c| {
            let cand = &r.candidates[c];
            SplitScores {
                candidate: cand.id.clone(),
                label: cand.label.clone(),
                learner: cand.learner.clone(),
                reference: cand.reference,
                chosen: cand.id == r.chosen,
                best: cand.id == r.best,
                mean: cand.mean,
                scores: validation[c].clone(),
            }
        })
        .collect()
}

/// A number for sentences and tables: three decimals, or two significant
/// digits in scientific form when it would round to zero.
pub fn number(x: f64) -> String {
    if x != 0.0 && x.abs() < 0.0005 {
        format!("{x:.1e}")
    } else {
        format!("{x:.3}")
    }
}

#[cfg(test)]
mod tests {
    use super::super::fixture::{Fixture, kfold};
    use super::*;
    use serde_json::json;

    fn seven() -> Fixture {
        // Seven tree depths with means 0.5 + depth/100 (depth 1..7) on two
        // splits, so depth 7 is best; the baseline scores 0.25.
        let mut f = Fixture::new(kfold(2, 1), 2, 40, 10);
        for d in 1..=7 {
            let m = 0.5 + d as f64 / 100.0;
            f.candidate(
                &format!("d{d}"),
                "tree",
                json!({"depth": d}),
                &[m - 0.125, m + 0.125],
                None,
            );
        }
        f.baseline(&[0.25, 0.25]);
        f
    }

    #[test]
    fn top_shows_five_best_the_chosen_and_the_baseline() {
        let mut f = seven();
        f.rule("one-standard-error", 0.125).choose("d1", "d7");
        let a = analyse(&f.json()).unwrap();
        let ids: Vec<&str> = a.top.iter().map(|s| s.candidate.as_str()).collect();
        assert_eq!(ids, ["d7", "d6", "d5", "d4", "d3", "d1", "base"]);
        assert!(a.top[5].chosen && a.top[0].best && a.top[6].reference);
        // Band: best mean 0.57 -/+ 0.125.
        let b = a.one_se_band.unwrap();
        assert!((b.low - 0.445).abs() < 1e-12 && (b.high - 0.695).abs() < 1e-12);
        // 6 other eligible candidates, then the baseline.
        assert_eq!(a.comparisons.len(), 7);
        assert_eq!(a.comparisons[0].candidate, "d7");
        assert!(a.comparisons[6].reference);
        assert_eq!(a.eligible, 7);
        assert_eq!(
            a.bootstrap_omitted.as_deref(),
            Some("the scheme is k-fold; the .632 estimators are for bootstrap splits")
        );
    }

    #[test]
    fn no_nan_reaches_the_json() {
        let mut f = seven();
        f.choose("d7", "d7");
        let a = analyse(&f.json()).unwrap();
        // Every difference is (about) the same on both splits, so a t may
        // be undefined: each missing p must come with its reason.
        for c in &a.comparisons {
            assert_eq!(c.p.is_none(), c.undefined.is_some(), "{c:?}");
        }
        let text = serde_json::to_string(&a).unwrap();
        assert!(!text.contains("NaN"));
        assert!(text.contains("\"one_se_band\":null"));
    }

    #[test]
    fn malformed_and_inconsistent_entries_are_errors() {
        assert!(matches!(
            analyse(&json!({"metric": 1})),
            Err(AnalysisError::Malformed(_))
        ));
        let mut f = seven();
        f.choose("nobody", "d7");
        assert!(matches!(
            analyse(&f.json()),
            Err(AnalysisError::Inconsistent(_))
        ));
    }

    #[test]
    fn numbers_round_for_reading() {
        assert_eq!(number(0.72345), "0.723");
        assert_eq!(number(0.00012), "1.2e-4");
        assert_eq!(number(0.0), "0.000");
    }
}
