//! Checks and small pieces shared by the distance and centroid learners
//! (`nearest-neighbors`, `nearest-centroid`, `shrunken-centroid`,
//! `baseline`): reading settings, validating a training part and its query
//! matrices, class counts, the shifted mean, the stable softmax and the
//! remarks a degenerate part earns.
//!
//! Invariants: every check here returns a [`LearnError`] instead of
//! panicking; every sum runs in row order or feature order; a value that
//! reaches a caller is finite.

use ndarray::{Array2, ArrayView2};

use crate::learn::{
    LearnError, Outcome, SettingSpec, SettingValue, Settings, Targets, Task, TrainPart,
};

/// `error` in the slot of every one of `count` candidates.
pub(crate) fn fail_all<T>(error: &LearnError, count: usize) -> Vec<Result<T, LearnError>> {
    (0..count).map(|_| Err(error.clone())).collect()
}

/// The results of a learner without settings: one fitted outcome (or one
/// failure) shared by every candidate of the family, each of which may only
/// name settings the learner knows.
pub(crate) fn same_for_all(
    learner: &'static str,
    specs: &[SettingSpec],
    family: &[Settings],
    fitted: Result<Outcome, LearnError>,
) -> Vec<Result<Outcome, LearnError>> {
    match fitted {
        Err(e) => fail_all(&e, family.len()),
        Ok(outcome) => family
            .iter()
            .map(|s| check_known(learner, specs, s).map(|()| outcome.clone()))
            .collect(),
    }
}

/// A data error of `learner`.
pub(crate) fn data_error(learner: &'static str, message: impl Into<String>) -> LearnError {
    LearnError::Data {
        learner,
        message: message.into(),
    }
}

fn setting_error(learner: &'static str, setting: &str, message: String) -> LearnError {
    LearnError::Setting {
        learner,
        setting: setting.to_string(),
        message,
    }
}

/// Fails on a setting `specs` does not declare (the plan checks this
/// first; a direct caller may not have).
pub(crate) fn check_known(
    learner: &'static str,
    specs: &[SettingSpec],
    settings: &Settings,
) -> Result<(), LearnError> {
    match settings
        .keys()
        .find(|k| !specs.iter().any(|s| s.name == *k))
    {
        None => Ok(()),
        Some(key) => {
            let known: Vec<&str> = specs.iter().map(|s| s.name).collect();
            let message = if known.is_empty() {
                "this learner takes no settings; remove it".to_string()
            } else {
                format!("unknown setting; this learner takes {}", known.join(", "))
            };
            Err(setting_error(learner, key, message))
        }
    }
}

/// The value of `spec` in `settings`, or its default.
fn value_of(spec: &SettingSpec, settings: &Settings) -> SettingValue {
    settings
        .get(spec.name)
        .cloned()
        .unwrap_or_else(|| spec.default.value())
}

/// The whole number `spec` names, at least `min`.
pub(crate) fn read_int(
    learner: &'static str,
    spec: &SettingSpec,
    min: i64,
    settings: &Settings,
) -> Result<i64, LearnError> {
    match value_of(spec, settings).as_i64() {
        Some(v) if v >= min => Ok(v),
        Some(v) => Err(setting_error(
            learner,
            spec.name,
            format!("{v} is less than {min}; use a whole number of at least {min}"),
        )),
        None => Err(setting_error(
            learner,
            spec.name,
            "expected a whole number".to_string(),
        )),
    }
}

/// The finite real number `spec` names, at least `min`.
pub(crate) fn read_float(
    learner: &'static str,
    spec: &SettingSpec,
    min: f64,
    settings: &Settings,
) -> Result<f64, LearnError> {
    match value_of(spec, settings).as_f64() {
        Some(v) if v.is_finite() && v >= min => Ok(v),
        Some(v) => Err(setting_error(
            learner,
            spec.name,
            format!("{v} is not a finite number of at least {min}"),
        )),
        None => Err(setting_error(
            learner,
            spec.name,
            "expected a number".to_string(),
        )),
    }
}

/// The index in `choices` of the word `spec` names.
pub(crate) fn read_choice(
    learner: &'static str,
    spec: &SettingSpec,
    choices: &[&str],
    settings: &Settings,
) -> Result<usize, LearnError> {
    let value = value_of(spec, settings);
    let found = value
        .as_str()
        .and_then(|word| choices.iter().position(|c| *c == word));
    found.ok_or_else(|| {
        setting_error(
            learner,
            spec.name,
            format!("expected one of {}", choices.join(", ")),
        )
    })
}

/// Fails unless every value of `x` is finite.
fn check_finite(
    learner: &'static str,
    what: &str,
    x: ArrayView2<'_, f64>,
) -> Result<(), LearnError> {
    match x.indexed_iter().find(|(_, v)| !v.is_finite()) {
        None => Ok(()),
        Some(((r, c), _)) => Err(data_error(
            learner,
            format!(
                "{what} has a value that is not finite at row {r}, feature {c}; impute or drop it before fitting"
            ),
        )),
    }
}

/// Checks the training part's features and the query matrices: at least
/// one training row, finite values, and the same number of features
/// everywhere.
pub(crate) fn check_matrices(
    learner: &'static str,
    train: &TrainPart<'_>,
    queries: &[ArrayView2<'_, f64>],
) -> Result<(), LearnError> {
    if train.x.nrows() == 0 {
        return Err(data_error(learner, "the training part has no rows"));
    }
    check_finite(learner, "the training part", train.x)?;
    let features = train.x.ncols();
    for (i, q) in queries.iter().enumerate() {
        if q.ncols() != features {
            return Err(data_error(
                learner,
                format!(
                    "query matrix {i} has {} features but the training part has {features}",
                    q.ncols()
                ),
            ));
        }
        check_finite(learner, &format!("query matrix {i}"), *q)?;
    }
    Ok(())
}

/// The class codes of a classification training part, checked.
pub(crate) struct ClassPart<'a> {
    /// One code per training row.
    pub y: &'a [u32],
    /// Number of classes of the task (columns of the probabilities).
    pub classes: usize,
    /// Training rows per class, in class order.
    pub counts: Vec<usize>,
}

impl ClassPart<'_> {
    /// Codes of the classes with at least one training row, ascending.
    pub fn present(&self) -> Vec<usize> {
        (0..self.classes).filter(|&c| self.counts[c] > 0).collect()
    }

    /// Remarks on classes absent from the training part and on a part with
    /// one class only; `None` when neither applies.
    pub fn remark(&self, absent_effect: &str) -> Option<String> {
        let present = self.present();
        let mut parts = Vec::new();
        if present.len() == 1 {
            parts.push(format!(
                "training part has one class (code {}); every prediction is that class",
                present[0]
            ));
        }
        let absent: Vec<String> = (0..self.classes)
            .filter(|&c| self.counts[c] == 0)
            .map(|c| c.to_string())
            .collect();
        if !absent.is_empty() {
            parts.push(format!(
                "class codes {} have no training rows; {absent_effect}",
                absent.join(", ")
            ));
        }
        join_remarks(parts)
    }
}

/// `parts` joined with "; ", or `None` when there are none.
pub(crate) fn join_remarks(parts: Vec<String>) -> Option<String> {
    if parts.is_empty() {
        None
    } else {
        Some(parts.join("; "))
    }
}

/// The training part as a classification part of `task`, checked: the task
/// is classification, the targets are class codes, one per row, each below
/// the class count.
pub(crate) fn class_part<'a>(
    learner: &'static str,
    task: Task,
    train: &TrainPart<'a>,
) -> Result<ClassPart<'a>, LearnError> {
    let Task::Classification { classes } = task else {
        return Err(LearnError::Task {
            learner,
            task: "regression",
        });
    };
    let Targets::Classes(y) = train.y else {
        return Err(data_error(
            learner,
            "the task is classification but the targets are real values",
        ));
    };
    check_target_len(learner, y.len(), train.x.nrows())?;
    let mut counts = vec![0usize; classes];
    for (row, &code) in y.iter().enumerate() {
        match counts.get_mut(code as usize) {
            Some(count) => *count += 1,
            None => {
                return Err(data_error(
                    learner,
                    format!(
                        "training row {row} has class code {code} but the task has {classes} classes"
                    ),
                ));
            }
        }
    }
    Ok(ClassPart { y, classes, counts })
}

/// The real-valued targets of a regression training part, checked.
pub(crate) fn value_part<'a>(
    learner: &'static str,
    train: &TrainPart<'a>,
) -> Result<&'a [f64], LearnError> {
    let Targets::Values(y) = train.y else {
        return Err(data_error(
            learner,
            "the task is regression but the targets are class codes",
        ));
    };
    check_target_len(learner, y.len(), train.x.nrows())?;
    match y.iter().position(|v| !v.is_finite()) {
        None => Ok(y),
        Some(row) => Err(data_error(
            learner,
            format!("training row {row} has a target that is not finite"),
        )),
    }
}

fn check_target_len(learner: &'static str, targets: usize, rows: usize) -> Result<(), LearnError> {
    if targets == rows {
        Ok(())
    } else {
        Err(data_error(
            learner,
            format!("the training part has {rows} rows but {targets} targets"),
        ))
    }
}

/// The mean of `values` (non-empty), computed as `first + sum(v - first) / n`
/// in the given order, so that a constant column has exactly its constant as
/// mean (a plain sum of `0.1` three times divided by 3 is not `0.1`).
pub(crate) fn shifted_mean(values: impl Iterator<Item = f64> + Clone) -> f64 {
    let mut all = values.clone();
    let Some(first) = all.next() else {
        return 0.0;
    };
    let mut sum = 0.0;
    let mut n = 0usize;
    for v in values {
        sum += v - first;
        n += 1;
    }
    first + sum / n as f64
}

/// Class probabilities from scores where larger is likelier: `exp(s - max)`
/// normalised, with `None` for a class that takes no part (probability 0).
/// Subtracting the maximum keeps every exponent at most 0, so nothing
/// overflows and the largest term is exactly 1 (common practice). The caller
/// guarantees at least one `Some`, all finite.
pub(crate) fn softmax(scores: &[Option<f64>]) -> Vec<f64> {
    let mut out = vec![0.0; scores.len()];
    softmax_into(scores, &mut out);
    out
}

/// [`softmax`] written into `out` (as long as `scores`). `exp(0) = 1`
/// exactly, so the maximum's term is written as 1 without calling `exp`.
pub(crate) fn softmax_into(scores: &[Option<f64>], out: &mut [f64]) {
    let max = scores
        .iter()
        .flatten()
        .fold(f64::NEG_INFINITY, |m, &s| if s > m { s } else { m });
    for (o, s) in out.iter_mut().zip(scores) {
        *o = s.map_or(0.0, |s| {
            let d = s - max;
            if d == 0.0 { 1.0 } else { libm::exp(d) }
        });
    }
    let total: f64 = out.iter().sum();
    for o in out.iter_mut() {
        *o /= total;
    }
}

/// A rows x classes matrix from one probability vector per row.
pub(crate) fn probability_matrix(rows: Vec<Vec<f64>>, classes: usize) -> Array2<f64> {
    let mut out = Array2::zeros((rows.len(), classes));
    for (r, row) in rows.iter().enumerate() {
        for (c, p) in row.iter().enumerate() {
            out[[r, c]] = *p;
        }
    }
    out
}

/// The index of the smallest value, ties by the lower index; `None` entries
/// never win. `None` when every entry is `None`.
pub(crate) fn argmin(values: &[Option<f64>]) -> Option<usize> {
    let mut best: Option<(usize, f64)> = None;
    for (i, v) in values.iter().enumerate() {
        if let Some(v) = *v
            && best.is_none_or(|(_, b)| v < b)
        {
            best = Some((i, v));
        }
    }
    best.map(|(i, _)| i)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shifted_mean_of_a_constant_is_the_constant() {
        // A plain mean of three 0.1s is 0.10000000000000002 (IEEE 754 double
        // rounding, common practice); the shifted mean is exact.
        assert_eq!(shifted_mean([0.1, 0.1, 0.1].into_iter()), 0.1);
        assert_eq!(shifted_mean([1.0, 2.0, 6.0].into_iter()), 3.0);
    }

    #[test]
    fn softmax_subtracts_the_max_and_skips_absent_classes() {
        // exp(0) = 1 and exp(-ln 3) = 1/3, so the shares are 3/4 and 1/4.
        let p = softmax(&[Some(1000.0), None, Some(1000.0 - 3f64.ln())]);
        assert!((p[0] - 0.75).abs() < 1e-12 && p[1] == 0.0 && (p[2] - 0.25).abs() < 1e-12);
    }

    #[test]
    fn argmin_breaks_ties_by_the_lower_index() {
        assert_eq!(argmin(&[None, Some(2.0), Some(1.0), Some(1.0)]), Some(2));
        assert_eq!(argmin(&[None, None]), None);
    }
}
