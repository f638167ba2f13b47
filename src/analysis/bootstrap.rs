//! The .632 estimate (Efron 1983) of each candidate's error under a
//! bootstrap scheme, from what the selection records, on 0/1 loss
//! (error = 1 - accuracy).
//!
//! Two recorded quantities stand in for the ones in the definitions, and
//! the output says so in `note`:
//! - the out-of-bag error is pooled over (row, draw) pairs: each draw's
//!   out-of-bag error weighted by its out-of-bag rows, which is Efron's
//!   (1983) epsilon-0 [mem]; the leave-one-out bootstrap Err1 of Efron and
//!   Tibshirani (1997) averages per row first and needs per-row losses,
//!   which a selection does not record;
//! - the apparent error errbar should be the error of the model fit on all
//!   development rows, on those rows; a selection does not record it, so
//!   the mean training-part error over the draws is used: the
//!   resubstitution error on the bootstrap samples, an approximation.
//!
//! The .632+ estimate (Efron and Tibshirani 1997) needs the no-information
//! rate gamma, which needs the predicted class shares of a fit on all rows;
//! they are not recorded, so it is omitted with that reason.

use serde::Serialize;

use crate::stats;

use super::curve::LeftOut;
use super::recorded::{Recorded, SchemeFacts, scheme_name};

/// The metric whose complement is the 0/1 loss.
const ACCURACY: &str = "accuracy";

/// One candidate's bootstrap estimates.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BootstrapCandidate {
    pub candidate: String,
    pub label: String,
    pub reference: bool,
    /// errbar, approximated by the mean training-part error over the draws.
    pub apparent: f64,
    /// The out-of-bag error pooled over (row, draw) pairs.
    pub out_of_bag: f64,
    /// 0.368 errbar + 0.632 out-of-bag error.
    pub err632: f64,
}

/// The bootstrap estimates of every candidate that has them.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BootstrapEstimates {
    /// The loss the estimates are in.
    pub loss: String,
    /// How the recorded quantities stand in for the definitions.
    pub note: String,
    /// Why .632+ is not given.
    pub plus_omitted: String,
    pub candidates: Vec<BootstrapCandidate>,
    pub left_out: Vec<LeftOut>,
}

pub(super) const NOTE: &str = "the out-of-bag error is pooled over (row, draw) pairs, each draw's \
    out-of-bag error weighted by its out-of-bag rows (Efron 1983); the apparent error is the mean \
    training-part error over the draws, i.e. the resubstitution error on the bootstrap samples, an \
    approximation of the error of a fit on all development rows, which is not recorded";

pub(super) const PLUS_OMITTED: &str = "the .632+ estimate needs the no-information error rate \
    gamma = sum over classes of p_k (1 - q_k), with q_k the class shares predicted by a fit on all \
    rows; a selection records no predictions, so it is not computed from the record alone (the \
    report computes it from refits on the development rows when the data file is at hand)";

/// The .632 estimates, or why there are none.
pub(super) fn bootstrap(r: &Recorded) -> Result<BootstrapEstimates, String> {
    if *SchemeFacts::of(&r.scheme).outer() != SchemeFacts::Bootstrap {
        return Err(format!(
            "the scheme is {}; the .632 estimators are for bootstrap splits",
            scheme_name(&r.scheme)
        ));
    }
    let t = r.tables(ACCURACY);
    if t.validation.iter().flatten().all(Option::is_none) {
        return Err(
            "the jobs record no accuracy: the .632 estimators here are on 0/1 loss, \
                    which needs a classification task"
                .into(),
        );
    }
    let rows: Vec<f64> = r.outer_splits().map(|s| s.validation_rows as f64).collect();
    let (mut candidates, mut left_out) = (Vec::new(), Vec::new());
    for (c, cand) in r.candidates.iter().enumerate() {
        if !cand.eligible && !cand.reference {
            continue;
        }
        match estimate(&t.validation[c], &t.training[c], &rows) {
            Ok((apparent, out_of_bag, err632)) => candidates.push(BootstrapCandidate {
                candidate: cand.id.clone(),
                label: cand.label.clone(),
                reference: cand.reference,
                apparent,
                out_of_bag,
                err632,
            }),
            Err(reason) => left_out.push(LeftOut {
                learner: cand.learner.clone(),
                label: Some(cand.label.clone()),
                reason,
            }),
        }
    }
    Ok(BootstrapEstimates {
        loss: "0/1 loss: error = 1 - accuracy".into(),
        note: NOTE.into(),
        plus_omitted: PLUS_OMITTED.into(),
        candidates,
        left_out,
    })
}

/// (errbar, pooled out-of-bag error, Err.632) from per-draw accuracies.
fn estimate(
    validation: &[Option<f64>],
    training: &[Option<f64>],
    rows: &[f64],
) -> Result<(f64, f64, f64), String> {
    let oob: Option<Vec<f64>> = validation.iter().map(|v| v.map(|a| 1.0 - a)).collect();
    let oob = oob.ok_or("a draw has no out-of-bag accuracy")?;
    let fit: Option<Vec<f64>> = training.iter().map(|v| v.map(|a| 1.0 - a)).collect();
    let fit =
        fit.ok_or("a draw has no training-part accuracy (the plan turned training scores off)")?;
    let wrong = oob.iter().zip(rows).fold(0.0, |acc, (e, n)| acc + e * n);
    let total = rows.iter().fold(0.0, |acc, n| acc + n);
    if total <= 0.0 {
        return Err("no draw left any row out".into());
    }
    let apparent = stats::mean(&fit).map_err(|e| e.to_string())?;
    let out_of_bag = wrong / total;
    let err632 = stats::err632(apparent, out_of_bag).map_err(|e| e.to_string())?;
    Ok((apparent, out_of_bag, err632))
}

#[cfg(test)]
mod tests {
    use super::super::fixture::{Fixture, kfold};
    use super::*;
    use serde_json::json;

    fn boot() -> Fixture {
        let mut f = Fixture::new(json!({"scheme": "bootstrap", "splits": 2}), 2, 10, 4);
        f.sizes(&[(10, 4), (10, 6)]);
        f
    }

    #[test]
    fn pooled_out_of_bag_and_632_by_hand() {
        // Draw 0: 4 out-of-bag rows, accuracy 0.75 -> 1 wrong; draw 1: 6
        // rows, accuracy 0.5 -> 3 wrong. Pooled: 4 / 10 = 0.4 (the plain
        // mean of the draws would be 0.375). Training accuracies 0.875 and
        // 1 -> errbar (0.125 + 0) / 2 = 0.0625. Err.632 (Efron 1983) =
        // 0.368 * 0.0625 + 0.632 * 0.4 = 0.023 + 0.2528 = 0.2758.
        let mut f = boot();
        f.candidate(
            "a",
            "tree",
            json!({"depth": 2}),
            &[0.75, 0.5],
            Some(&[0.875, 1.0]),
        );
        f.choose("a", "a");
        let e = bootstrap(&f.recorded()).unwrap();
        let a = &e.candidates[0];
        assert!((a.out_of_bag - 0.4).abs() < 1e-15);
        assert!((a.apparent - 0.0625).abs() < 1e-15);
        assert!((a.err632 - 0.2758).abs() < 1e-12);
        assert!(
            e.note
                .contains("resubstitution error on the bootstrap samples")
        );
        assert!(e.plus_omitted.contains("no-information"));
    }

    #[test]
    fn accuracy_is_used_whatever_the_selection_metric() {
        // Selected on balanced accuracy; accuracy recorded beside it.
        let mut f = boot();
        f.metric("balanced-accuracy", true);
        f.candidate(
            "a",
            "tree",
            json!({"depth": 2}),
            &[0.6, 0.6],
            Some(&[0.9, 0.9]),
        );
        f.extra("a", "accuracy", &[0.75, 0.5], &[0.875, 1.0]);
        f.choose("a", "a");
        let e = bootstrap(&f.recorded()).unwrap();
        assert!((e.candidates[0].out_of_bag - 0.4).abs() < 1e-15);
    }

    #[test]
    fn omitted_with_a_reason() {
        let mut f = Fixture::new(kfold(2, 1), 2, 10, 4);
        f.candidate("a", "tree", json!({"depth": 2}), &[0.75, 0.5], None);
        f.choose("a", "a");
        assert!(
            bootstrap(&f.recorded())
                .unwrap_err()
                .contains("the scheme is k-fold")
        );
        let mut f = boot();
        f.metric("rmse", false);
        f.candidate("a", "ridge", json!({"lambda": 1.0}), &[0.75, 0.5], None);
        f.choose("a", "a");
        assert!(
            bootstrap(&f.recorded())
                .unwrap_err()
                .contains("no accuracy")
        );
        let mut f = boot();
        f.candidate("a", "tree", json!({"depth": 2}), &[0.75, 0.5], None);
        f.choose("a", "a");
        let e = bootstrap(&f.recorded()).unwrap();
        assert!(e.candidates.is_empty() && e.left_out[0].reason.contains("training"));
    }
}
