//! The exact .632 and .632+ estimates for bootstrap selections (Efron 1983;
//! Efron and Tibshirani 1997), from refits on the whole development
//! partition.
//!
//! A selection records every draw's scores, but not the two quantities of a
//! fit on all rows that the estimators need: the apparent error errbar and
//! the no-information rate gamma = sum_k p_k (1 - q_k) (p observed, q
//! predicted class shares). With the recorded plan and its data at hand, the
//! report refits each candidate once on the development rows (never the
//! sealed ones) and predicts those same rows. 0/1 loss (1 - accuracy).

use serde::Serialize;

use crate::analysis::Analysis;
use crate::compile;
use crate::exec::{FitInput, OwnedTargets, evaluate_candidates};
use crate::learn::Predictions;
use crate::ledger::Entry;
use crate::stats;

/// One candidate's exact estimates.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Exact632 {
    pub candidate: String,
    pub label: String,
    /// errbar: 0/1 error of the fit on all development rows, on those rows.
    pub apparent: f64,
    /// The recorded out-of-bag error (as in the analysis).
    pub out_of_bag: f64,
    /// gamma, the no-information error rate.
    pub no_information: f64,
    pub err632: f64,
    pub err632_plus: f64,
}

/// The exact estimates of every candidate the analysis has bootstrap
/// figures for, or why there are none.
pub fn exact_632(selection: &Entry, a: &Analysis) -> Result<Vec<Exact632>, String> {
    let Some(b) = &a.bootstrap else {
        return Err("not a bootstrap selection".into());
    };
    let r = crate::exec::recorded_plan(selection).map_err(|e| e.to_string())?;
    let sheet =
        compile::compile(&r).map_err(|e| format!("the recorded plan no longer compiles: {e}"))?;
    let OwnedTargets::Classes(truth) = OwnedTargets::of(&r.data, &sheet.development) else {
        return Err("the .632+ estimate is defined here for class labels (0/1 loss)".into());
    };
    let input = FitInput {
        data: &r.data,
        task: r.plan.task(),
        prep: r.plan.prep,
        train: &sheet.development,
        evaluate: &sheet.development,
        training_scores: false,
    };
    let mut out = Vec::new();
    for e in &b.candidates {
        let Some(c) = sheet.candidate(&e.candidate) else {
            continue;
        };
        let scored = evaluate_candidates(&input, &[(c.learner.as_str(), &c.settings)])
            .into_iter()
            .next();
        let Some(Predictions::Classes { labels, .. }) = scored.and_then(|s| s.predictions) else {
            continue;
        };
        let wrong = truth.iter().zip(&labels).filter(|(t, p)| t != p).count();
        let apparent = wrong as f64 / truth.len().max(1) as f64;
        let gamma =
            stats::no_information_rate_from_labels(&truth, &labels).map_err(|e| e.to_string())?;
        let plus = stats::err632_plus(apparent, e.out_of_bag, gamma).map_err(|e| e.to_string())?;
        out.push(Exact632 {
            candidate: e.candidate.clone(),
            label: e.label.clone(),
            apparent,
            out_of_bag: e.out_of_bag,
            no_information: gamma,
            err632: plus.err632,
            err632_plus: plus.err632_plus,
        });
    }
    Ok(out)
}
