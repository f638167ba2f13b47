//! Fitting candidates on one training part and scoring them on other parts.
//!
//! This is the one place where rows become matrices for learners: the
//! preprocessing is fitted on the training rows only, then applied to the
//! evaluation rows; learners see nothing but these two matrices, so rows
//! outside them (the sealed partition during selection) cannot reach a
//! learner.

use std::collections::BTreeMap;

use ndarray::{Array2, ArrayView2, Axis};
use rayon::prelude::*;

use crate::data::{Dataset, Target};
use crate::learn::{self, Note, Predictions, Settings, Targets, Task, TrainPart};
use crate::prep::{PrepSpec, Transform};
use crate::score::{self, Metric, Truth};

/// What one evaluation needs.
pub struct FitInput<'a> {
    pub data: &'a Dataset,
    pub task: Task,
    pub prep: PrepSpec,
    /// Training rows (file row indices, may repeat).
    pub train: &'a [u32],
    /// Rows to score the fitted candidates on.
    pub evaluate: &'a [u32],
    /// Also score the training part (for the validation curve).
    pub training_scores: bool,
}

/// One candidate's scores.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Scored {
    /// Metric name to value on the evaluation rows.
    pub scores: BTreeMap<String, f64>,
    /// Metric name to value on the training rows (when asked).
    pub training: BTreeMap<String, f64>,
    /// Metric name to why it has no value.
    pub undefined: BTreeMap<String, String>,
    pub note: Note,
    /// Why the candidate could not be fitted at all.
    pub failed: Option<String>,
    /// Predictions on the evaluation rows (kept for intervals at unseal).
    pub predictions: Option<Predictions>,
}

fn rows_of(data: &Dataset, rows: &[u32]) -> Array2<f64> {
    gather(data.features.view(), rows)
}

/// The rows `rows` of `features` (indices may repeat), in that order:
/// copied row slice by row slice when the matrix is in row-major order,
/// through `select` otherwise.
fn gather(features: ArrayView2<'_, f64>, rows: &[u32]) -> Array2<f64> {
    let p = features.ncols();
    if let Some(all) = features.to_slice() {
        let mut out = Vec::with_capacity(rows.len() * p);
        for &r in rows {
            let start = r as usize * p;
            out.extend_from_slice(&all[start..start + p]);
        }
        if let Ok(m) = Array2::from_shape_vec((rows.len(), p), out) {
            return m;
        }
    }
    let idx: Vec<usize> = rows.iter().map(|&r| r as usize).collect();
    features.select(Axis(0), &idx)
}

/// Targets of `rows`, owned.
pub enum OwnedTargets {
    Classes(Vec<u32>),
    Values(Vec<f64>),
}

impl OwnedTargets {
    pub fn of(data: &Dataset, rows: &[u32]) -> OwnedTargets {
        match &data.target {
            Target::Classes { codes, .. } => {
                OwnedTargets::Classes(rows.iter().map(|&r| codes[r as usize]).collect())
            }
            Target::Values(v) => {
                OwnedTargets::Values(rows.iter().map(|&r| v[r as usize]).collect())
            }
        }
    }
    pub fn view(&self) -> Targets<'_> {
        match self {
            OwnedTargets::Classes(c) => Targets::Classes(c),
            OwnedTargets::Values(v) => Targets::Values(v),
        }
    }
}

fn score_all(
    task: Task,
    truth: &Truth<'_>,
    pred: &Predictions,
    into: &mut BTreeMap<String, f64>,
    undefined: &mut BTreeMap<String, String>,
) {
    let metrics = Metric::for_task(task);
    for (&m, value) in metrics
        .iter()
        .zip(score::score_against(metrics, truth, pred))
    {
        match value {
            Ok(v) if v.is_finite() => {
                into.insert(m.name().to_string(), v);
            }
            Ok(_) => {
                undefined.insert(m.name().to_string(), "the value is not finite".into());
            }
            Err(e) => {
                undefined.insert(m.name().to_string(), e.to_string());
            }
        }
    }
}

fn failed(message: String) -> Scored {
    Scored {
        failed: Some(message),
        ..Scored::default()
    }
}

/// Fit every candidate (learner name, settings) on `input.train` and score
/// it on `input.evaluate`. Candidates of one learner share one family
/// evaluation. Results are in the order given.
pub fn evaluate_candidates(input: &FitInput<'_>, candidates: &[(&str, &Settings)]) -> Vec<Scored> {
    let kinds = &input.data.feature_kinds;
    let train_raw = rows_of(input.data, input.train);
    let transform = match Transform::fit(input.prep, kinds, train_raw.view()) {
        Ok(t) => t,
        Err(e) => return candidates.iter().map(|_| failed(e.to_string())).collect(),
    };
    let train_x = transform.apply(train_raw.view());
    let eval_x = transform.apply(rows_of(input.data, input.evaluate).view());
    let train_y = OwnedTargets::of(input.data, input.train);
    let eval_y = OwnedTargets::of(input.data, input.evaluate);
    let part = TrainPart {
        x: train_x.view(),
        y: train_y.view(),
    };
    let mut queries = vec![eval_x.view()];
    if input.training_scores {
        queries.push(train_x.view());
    }
    let mut learners: Vec<&str> = candidates.iter().map(|(l, _)| *l).collect();
    learners.sort();
    learners.dedup();
    // Families run side by side and candidates are scored side by side:
    // each result is computed alone, so this changes when, never what.
    let families: Vec<Vec<(usize, Scored)>> = learners
        .par_iter()
        .map(|name| {
            family_scores(
                input,
                &part,
                &queries,
                candidates,
                name,
                (&eval_y, &train_y),
            )
        })
        .collect();
    let mut out: Vec<Option<Scored>> = vec![None; candidates.len()];
    for (i, s) in families.into_iter().flatten() {
        out[i] = Some(s);
    }
    out.into_iter().map(Option::unwrap_or_default).collect()
}

/// The scores of the candidates of learner `name` (by index into
/// `candidates`), from one family evaluation.
fn family_scores(
    input: &FitInput<'_>,
    part: &TrainPart<'_>,
    queries: &[ArrayView2<'_, f64>],
    candidates: &[(&str, &Settings)],
    name: &str,
    (eval_y, train_y): (&OwnedTargets, &OwnedTargets),
) -> Vec<(usize, Scored)> {
    let members: Vec<usize> = (0..candidates.len())
        .filter(|&i| candidates[i].0 == name)
        .collect();
    let Some(learner) = learn::by_name(name) else {
        let why = format!("unknown learner {name}");
        return members
            .into_iter()
            .map(|i| (i, failed(why.clone())))
            .collect();
    };
    let family: Vec<Settings> = members.iter().map(|&i| candidates[i].1.clone()).collect();
    let outcomes = learner.evaluate_family(input.task, part, queries, &family);
    let truths = (Truth::new(eval_y.view()), Truth::new(train_y.view()));
    members
        .into_par_iter()
        .zip(outcomes)
        .map(|(i, outcome)| {
            let s = match outcome {
                Err(e) => failed(e.to_string()),
                Ok(o) => scored(input.task, &truths, o),
            };
            (i, s)
        })
        .collect()
}

/// A candidate's outcome scored on the evaluation part and, when it
/// predicted it, the training part.
fn scored(task: Task, (eval_y, train_y): &(Truth<'_>, Truth<'_>), o: learn::Outcome) -> Scored {
    let mut s = Scored {
        note: o.note,
        ..Scored::default()
    };
    let mut preds = o.predictions.into_iter();
    if let Some(p) = preds.next() {
        score_all(task, eval_y, &p, &mut s.scores, &mut s.undefined);
        s.predictions = Some(p);
    }
    if let Some(p) = preds.next() {
        let mut ignored = BTreeMap::new();
        score_all(task, train_y, &p, &mut s.training, &mut ignored);
    }
    s
}

#[cfg(test)]
mod tests {
    use ndarray::Array2;

    use super::*;

    #[test]
    fn gather_equals_select_in_either_memory_order() {
        let rows = [3u32, 0, 3, 1];
        let idx: Vec<usize> = rows.iter().map(|&r| r as usize).collect();
        let standard = Array2::from_shape_fn((4, 3), |(r, c)| (10 * r + c) as f64);
        let transposed = standard.t().to_owned();
        let column_major = transposed.t();
        for m in [standard.view(), column_major] {
            assert_eq!(gather(m, &rows), m.select(Axis(0), &idx));
        }
        assert_eq!(gather(standard.view(), &[]).dim(), (0, 3));
        let empty = Array2::<f64>::zeros((2, 0));
        assert_eq!(gather(empty.view(), &[1, 0]).dim(), (2, 0));
    }
}
