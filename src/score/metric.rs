//! The metric catalogue and the scoring functions.
//!
//! Definitions (all over the rows of one part, summed in row order):
//! - `accuracy`: the share of rows whose label equals the truth.
//! - `balanced-accuracy`: the mean recall over the classes present in the
//!   truth (a class never true has no recall).
//! - `macro-f1`: the mean of `F1 = 2 TP / (2 TP + FP + FN)` over the classes
//!   present in the truth or in the predicted labels (a class in neither has
//!   no F1; one predicted but never true scores 0 and counts).
//! - `log-loss`: `-mean(ln p_true)` with each probability clipped to
//!   `[1e-15, 1 - 1e-15]` (common practice), so a confident miss costs
//!   `15 ln 10`, not infinity.
//! - `brier`: with two classes, `mean((p_1 - [y = 1])^2)`, the usual binary
//!   score; with any other class count, `mean over rows of sum over classes
//!   of (p_k - [y = k])^2`, Brier's (1950, Monthly Weather Review 78:1-3)
//!   original multi-category form. For two classes the second form is twice
//!   the first; holdfast uses the first, as common practice does.
//! - `roc-auc`: with two classes, class code 1 (the last name in sorted
//!   order) is the positive class and its probability the score; the area is
//!   the Mann-Whitney U of the positives over `n1 n0`, with midranks for tied
//!   scores (a tie counts one half; common practice). With more classes, the
//!   macro mean of the one-vs-rest areas over the classes present in the
//!   truth.
//! - `rmse`, `mae`, `r2 = 1 - SS_res / SS_tot` for real values.
//!
//! Invariants: a metric that has no value on a part (an empty part, roc-auc
//! with one class in the truth, r2 with constant truth, predictions of the
//! wrong kind) is a [`ScoreError::Undefined`] with the reason; no NaN or
//! infinity is ever returned. The class count is the number of probability
//! columns.

use serde::Serialize;

use ndarray::ArrayView2;

use crate::learn::{Predictions, Targets, Task};

/// A metric a plan can select on.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Metric {
    Accuracy,
    BalancedAccuracy,
    MacroF1,
    LogLoss,
    Brier,
    RocAuc,
    Rmse,
    Mae,
    R2,
}

const CLASSIFICATION: &[Metric] = &[
    Metric::Accuracy,
    Metric::BalancedAccuracy,
    Metric::MacroF1,
    Metric::LogLoss,
    Metric::Brier,
    Metric::RocAuc,
];
const REGRESSION: &[Metric] = &[Metric::Rmse, Metric::Mae, Metric::R2];

impl Metric {
    /// Every metric, classification first.
    pub fn all() -> impl Iterator<Item = Metric> {
        CLASSIFICATION.iter().chain(REGRESSION).copied()
    }

    /// The name in plans and output.
    pub fn name(self) -> &'static str {
        match self {
            Metric::Accuracy => "accuracy",
            Metric::BalancedAccuracy => "balanced-accuracy",
            Metric::MacroF1 => "macro-f1",
            Metric::LogLoss => "log-loss",
            Metric::Brier => "brier",
            Metric::RocAuc => "roc-auc",
            Metric::Rmse => "rmse",
            Metric::Mae => "mae",
            Metric::R2 => "r2",
        }
    }

    /// The metric called `name`.
    pub fn from_name(name: &str) -> Option<Metric> {
        Metric::all().find(|m| m.name() == name)
    }

    /// Whether a larger value is better.
    pub fn larger_is_better(self) -> bool {
        !matches!(
            self,
            Metric::LogLoss | Metric::Brier | Metric::Rmse | Metric::Mae
        )
    }

    /// Whether the metric is a proportion of rows (a binomial count), so
    /// that a Wilson interval applies.
    pub fn is_proportion(self) -> bool {
        matches!(self, Metric::Accuracy)
    }

    /// The metrics that apply to `task`, in catalogue order.
    pub fn for_task(task: Task) -> &'static [Metric] {
        match task {
            Task::Classification { .. } => CLASSIFICATION,
            Task::Regression => REGRESSION,
        }
    }
}

/// Why a metric has no value on a part (it is then left out, with the
/// reason, rather than written as NaN).
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum ScoreError {
    #[error("{metric} is undefined here: {reason}")]
    Undefined {
        metric: &'static str,
        reason: String,
    },
}

/// Score `predictions` against `truth` with `metric`.
pub fn score(
    metric: Metric,
    truth: Targets<'_>,
    predictions: &Predictions,
) -> Result<f64, ScoreError> {
    let mut values = score_many(&[metric], truth, predictions);
    values
        .pop()
        .unwrap_or_else(|| Err(undefined(metric, "no value was computed")))
}

/// Score `predictions` against `truth` with each of `metrics`, in order.
/// The same values as [`score`] one metric at a time; the checks of the
/// part and the per-class counts are done once for all of them.
pub fn score_many(
    metrics: &[Metric],
    truth: Targets<'_>,
    predictions: &Predictions,
) -> Vec<Result<f64, ScoreError>> {
    score_against(metrics, &Truth::new(truth), predictions)
}

/// The truth of one part with what every scoring of it shares (for real
/// values: whether it is constant, and its sum of squares about its mean,
/// both in row order), so that many candidates scored on one part compute
/// them once.
pub struct Truth<'a> {
    targets: Targets<'a>,
    /// `None` for class truth or a constant real-valued truth.
    spread: Option<f64>,
}

impl<'a> Truth<'a> {
    pub fn new(targets: Targets<'a>) -> Truth<'a> {
        let spread = match targets {
            Targets::Values(truth) if !truth.iter().all(|&t| t == truth[0]) => {
                let mean = truth.iter().sum::<f64>() / truth.len() as f64;
                Some(truth.iter().map(|t| (t - mean) * (t - mean)).sum())
            }
            _ => None,
        };
        Truth { targets, spread }
    }
}

/// [`score_many`] against a [`Truth`] prepared once for many predictions.
pub fn score_against(
    metrics: &[Metric],
    truth: &Truth<'_>,
    predictions: &Predictions,
) -> Vec<Result<f64, ScoreError>> {
    let part = match (truth.targets, predictions) {
        (
            Targets::Classes(truth),
            Predictions::Classes {
                labels,
                probabilities,
            },
        ) => Part::Classes(ClassScored::new(truth, labels, probabilities.view())),
        (Targets::Values(values), Predictions::Values(predicted)) => {
            Part::Values(ValueScored::new(values, truth.spread, predicted))
        }
        _ => Part::Mismatch,
    };
    metrics
        .iter()
        .map(|&m| {
            let checked = |reason: &String| undefined(m, reason.clone());
            let value = match &part {
                Part::Classes(p) if CLASSIFICATION.contains(&m) => {
                    p.as_ref().map_err(checked).and_then(|p| p.score(m))
                }
                Part::Values(p) if REGRESSION.contains(&m) => {
                    p.as_ref().map_err(checked).and_then(|p| p.score(m))
                }
                _ => Err(kind_mismatch(m)),
            };
            value.and_then(|v| finite(m, v))
        })
        .collect()
}

/// A part checked once for all the metrics of one call.
enum Part<'a> {
    Classes(Result<ClassScored<'a>, String>),
    Values(Result<ValueScored<'a>, String>),
    Mismatch,
}

fn kind_mismatch(metric: Metric) -> ScoreError {
    undefined(
        metric,
        format!(
            "{} needs {} truth and predictions of the same kind",
            metric.name(),
            if CLASSIFICATION.contains(&metric) {
                "class"
            } else {
                "real-valued"
            }
        ),
    )
}

fn finite(metric: Metric, value: f64) -> Result<f64, ScoreError> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(undefined(
            metric,
            "the predictions give a value that is not finite",
        ))
    }
}

fn undefined(metric: Metric, reason: impl Into<String>) -> ScoreError {
    ScoreError::Undefined {
        metric: metric.name(),
        reason: reason.into(),
    }
}

/// A classification part, checked: as many labels and probability rows as
/// truth rows, at least one row, every code below the class count. The
/// per-class counts are computed once, on creation.
struct ClassScored<'a> {
    truth: &'a [u32],
    probabilities: ArrayView2<'a, f64>,
    classes: usize,
    /// `(true positives, false positives, false negatives)` per class.
    counts: Vec<(usize, usize, usize)>,
}

impl<'a> ClassScored<'a> {
    /// The checked part, or why it cannot be scored.
    fn new(
        truth: &'a [u32],
        labels: &'a [u32],
        probabilities: ArrayView2<'a, f64>,
    ) -> Result<ClassScored<'a>, String> {
        let n = truth.len();
        if labels.len() != n || probabilities.nrows() != n {
            return Err(format!(
                "the truth has {n} rows but there are {} labels and {} probability rows",
                labels.len(),
                probabilities.nrows()
            ));
        }
        if n == 0 {
            return Err("the part has no rows".into());
        }
        let classes = probabilities.ncols();
        if let Some(code) = truth.iter().chain(labels).find(|&&c| c as usize >= classes) {
            return Err(format!(
                "class code {code} is outside the {classes} classes of the probabilities"
            ));
        }
        let mut counts = vec![(0, 0, 0); classes];
        for (&t, &l) in truth.iter().zip(labels) {
            if t == l {
                counts[t as usize].0 += 1;
            } else {
                counts[l as usize].1 += 1;
                counts[t as usize].2 += 1;
            }
        }
        Ok(ClassScored {
            truth,
            probabilities,
            classes,
            counts,
        })
    }

    fn rows(&self) -> f64 {
        self.truth.len() as f64
    }

    fn score(&self, metric: Metric) -> Result<f64, ScoreError> {
        match metric {
            Metric::Accuracy => Ok(self.accuracy()),
            Metric::BalancedAccuracy => Ok(self.balanced_accuracy()),
            Metric::MacroF1 => Ok(self.macro_f1()),
            Metric::LogLoss => Ok(self.log_loss()),
            Metric::Brier => Ok(self.brier()),
            Metric::RocAuc => self.roc_auc(),
            _ => Err(undefined(metric, "not a classification metric")),
        }
    }

    fn accuracy(&self) -> f64 {
        let correct: usize = self.counts.iter().map(|&(tp, _, _)| tp).sum();
        correct as f64 / self.rows()
    }

    fn balanced_accuracy(&self) -> f64 {
        let recalls: Vec<f64> = self
            .counts
            .iter()
            .filter(|(tp, _, fn_)| tp + fn_ > 0)
            .map(|&(tp, _, fn_)| tp as f64 / (tp + fn_) as f64)
            .collect();
        recalls.iter().sum::<f64>() / recalls.len() as f64
    }

    fn macro_f1(&self) -> f64 {
        let f1: Vec<f64> = self
            .counts
            .iter()
            .filter(|(tp, fp, fn_)| tp + fp + fn_ > 0)
            .map(|&(tp, fp, fn_)| (2 * tp) as f64 / (2 * tp + fp + fn_) as f64)
            .collect();
        f1.iter().sum::<f64>() / f1.len() as f64
    }

    fn log_loss(&self) -> f64 {
        const EPS: f64 = 1e-15;
        let mut sum = 0.0;
        for (r, &t) in self.truth.iter().enumerate() {
            let p = self.probabilities[[r, t as usize]].clamp(EPS, 1.0 - EPS);
            sum -= libm::log(p);
        }
        sum / self.rows()
    }

    fn brier(&self) -> f64 {
        let mut sum = 0.0;
        for (r, &t) in self.truth.iter().enumerate() {
            if self.classes == 2 {
                let d = self.probabilities[[r, 1]] - f64::from(u8::from(t == 1));
                sum += d * d;
            } else {
                for c in 0..self.classes {
                    let d = self.probabilities[[r, c]] - f64::from(u8::from(t as usize == c));
                    sum += d * d;
                }
            }
        }
        sum / self.rows()
    }

    fn roc_auc(&self) -> Result<f64, ScoreError> {
        // A class is in the truth when it has a true positive or a false
        // negative.
        let present: Vec<usize> = (0..self.classes)
            .filter(|&c| self.counts[c].0 + self.counts[c].2 > 0)
            .collect();
        if present.len() < 2 {
            return Err(undefined(
                Metric::RocAuc,
                "the truth has fewer than two classes, so there is nothing to rank against",
            ));
        }
        let one_vs_rest = |c: usize| {
            let mut positives = Vec::with_capacity(self.counts[c].0 + self.counts[c].2);
            let mut negatives = Vec::with_capacity(self.truth.len());
            for (&t, &p) in self.truth.iter().zip(self.probabilities.column(c)) {
                if t as usize == c {
                    positives.push(order_key(p));
                } else {
                    negatives.push(order_key(p));
                }
            }
            mann_whitney_auc(positives, negatives)
        };
        if self.classes == 2 {
            return Ok(one_vs_rest(1));
        }
        let areas: Vec<f64> = present.iter().map(|&c| one_vs_rest(c)).collect();
        Ok(areas.iter().sum::<f64>() / areas.len() as f64)
    }
}

/// A key whose unsigned order is the numeric order of the finite `x`, with
/// `-0.0` and `0.0` the same key (so equal scores tie exactly as `==` says).
fn order_key(x: f64) -> u64 {
    let x = if x == 0.0 { 0.0 } else { x };
    let bits = x.to_bits();
    if bits >> 63 == 1 {
        !bits
    } else {
        bits | (1 << 63)
    }
}

/// The Mann-Whitney U of the positives divided by `n1 n0`: the probability
/// that a random positive scores above a random negative, ties counting one
/// half. Both key lists are sorted and walked once: each positive counts 2
/// for every negative below it and 1 for every negative equal to it, so
/// twice U is an integer and everything up to the one division is exact
/// (the same value as the midrank form of the rank-sum statistic). The
/// caller guarantees at least one positive and one negative.
fn mann_whitney_auc(mut positives: Vec<u64>, mut negatives: Vec<u64>) -> f64 {
    positives.sort_unstable();
    negatives.sort_unstable();
    let (mut below, mut equal_end) = (0usize, 0usize);
    let mut twice_u: u128 = 0;
    for &p in &positives {
        while below < negatives.len() && negatives[below] < p {
            below += 1;
        }
        equal_end = equal_end.max(below);
        while equal_end < negatives.len() && negatives[equal_end] == p {
            equal_end += 1;
        }
        twice_u += (2 * below + (equal_end - below)) as u128;
    }
    let (n1, n0) = (positives.len() as u128, negatives.len() as u128);
    twice_u as f64 / (2 * n1 * n0) as f64
}

/// A real-valued part, checked (as many predictions as truth rows, at least
/// one row), with its residual sums taken in one pass in row order.
struct ValueScored<'a> {
    truth: &'a [f64],
    /// The truth's sum of squares about its mean (`None`: constant).
    spread: Option<f64>,
    squared: f64,
    absolute: f64,
}

impl<'a> ValueScored<'a> {
    /// The checked part, or why it cannot be scored.
    fn new(
        truth: &'a [f64],
        spread: Option<f64>,
        predicted: &[f64],
    ) -> Result<ValueScored<'a>, String> {
        let n = truth.len();
        if predicted.len() != n {
            return Err(format!(
                "the truth has {n} rows but there are {} predictions",
                predicted.len()
            ));
        }
        if n == 0 {
            return Err("the part has no rows".into());
        }
        let (mut squared, mut absolute) = (0.0, 0.0);
        for (t, p) in truth.iter().zip(predicted) {
            let r = t - p;
            squared += r * r;
            absolute += r.abs();
        }
        Ok(ValueScored {
            truth,
            spread,
            squared,
            absolute,
        })
    }

    fn score(&self, metric: Metric) -> Result<f64, ScoreError> {
        let rows = self.truth.len() as f64;
        match metric {
            Metric::Rmse => Ok((self.squared / rows).sqrt()),
            Metric::Mae => Ok(self.absolute / rows),
            Metric::R2 => match self.spread {
                None => Err(undefined(
                    metric,
                    "the truth is constant, so there is no variance to explain",
                )),
                Some(total) => Ok(1.0 - self.squared / total),
            },
            _ => Err(undefined(metric, "not a regression metric")),
        }
    }
}

// Also included by `learn::nearest_neighbors` tests: each lives in a private
// module, so neither can reach the other's copy.
#[cfg(test)]
#[allow(clippy::duplicate_mod)]
#[path = "reference_script.rs"]
mod reference_script;

#[cfg(test)]
mod tests {
    use ndarray::{Array2, array};

    use super::*;

    fn classes(labels: &[u32], probabilities: Array2<f64>) -> Predictions {
        Predictions::Classes {
            labels: labels.to_vec(),
            probabilities,
        }
    }

    /// Probabilities with 1 on each label (for the label-only metrics).
    fn one_hot(labels: &[u32], k: usize) -> Predictions {
        let p = Array2::from_shape_fn((labels.len(), k), |(r, c)| {
            f64::from(u8::from(labels[r] as usize == c))
        });
        classes(labels, p)
    }

    /// Binary predictions from the probability of class 1.
    fn binary(p1: &[f64]) -> Predictions {
        let p = Array2::from_shape_fn(
            (p1.len(), 2),
            |(r, c)| if c == 1 { p1[r] } else { 1.0 - p1[r] },
        );
        let labels: Vec<u32> = p1.iter().map(|&p| u32::from(p >= 0.5)).collect();
        classes(&labels, p)
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1.0)
    }

    #[test]
    fn hand_worked_confusion_matrix() {
        // Truth (rows) by prediction (columns), worked by hand:
        //   class 0: 2 1 1   recall 2/4   F1 = 4 / (4 + 1 + 2) = 4/7
        //   class 1: 1 2 0   recall 2/3   F1 = 4 / (4 + 2 + 1) = 4/7
        //   class 2: 0 1 2   recall 2/3   F1 = 4 / (4 + 1 + 1) = 2/3
        // accuracy 6/10; balanced (1/2 + 2/3 + 2/3) / 3 = 11/18;
        // macro F1 (4/7 + 4/7 + 2/3) / 3 = 38/63.
        let truth = [0, 0, 0, 0, 1, 1, 1, 2, 2, 2];
        let labels = [0, 0, 1, 2, 1, 1, 0, 2, 2, 1];
        let p = one_hot(&labels, 3);
        let t = Targets::Classes(&truth);
        assert!(close(score(Metric::Accuracy, t, &p).unwrap(), 0.6));
        assert!(close(
            score(Metric::BalancedAccuracy, t, &p).unwrap(),
            11.0 / 18.0
        ));
        assert!(close(score(Metric::MacroF1, t, &p).unwrap(), 38.0 / 63.0));
    }

    #[test]
    fn classes_only_predicted_count_in_macro_f1_not_in_balanced_accuracy() {
        // Class 2 is predicted once but never true: F1 0, no recall. By hand:
        // macro F1 (2/3 + 1 + 0) / 3 = 5/9; balanced (1/2 + 1) / 2 = 3/4.
        let truth = [0, 0, 1, 1];
        let p = one_hot(&[0, 2, 1, 1], 3);
        let t = Targets::Classes(&truth);
        assert!(close(score(Metric::MacroF1, t, &p).unwrap(), 5.0 / 9.0));
        assert!(close(score(Metric::BalancedAccuracy, t, &p).unwrap(), 0.75));
    }

    #[test]
    fn hand_worked_log_loss_and_brier() {
        // p(class 1) = 0.2, 0.6, 0.9 for truth 0, 1, 1: the true-class
        // probabilities are 0.8, 0.6, 0.9, so log-loss is
        // -(ln 0.8 + ln 0.6 + ln 0.9) / 3 = 0.279776563... and the binary
        // Brier score (0.2^2 + 0.4^2 + 0.1^2) / 3 = 0.07. By hand.
        let truth = [0, 1, 1];
        let p = binary(&[0.2, 0.6, 0.9]);
        let t = Targets::Classes(&truth);
        let want = -(0.8f64.ln() + 0.6f64.ln() + 0.9f64.ln()) / 3.0;
        assert!(close(score(Metric::LogLoss, t, &p).unwrap(), want));
        assert!((want - 0.279_776_563).abs() < 1e-9);
        assert!(close(score(Metric::Brier, t, &p).unwrap(), 0.07));
        // A confident miss is clipped at 1e-15: -ln(1e-15) = 15 ln 10.
        let miss = score(Metric::LogLoss, Targets::Classes(&[0]), &binary(&[1.0])).unwrap();
        assert!(close(miss, 15.0 * 10f64.ln()));
        // Three classes (Brier 1950): rows (0.5, 0.3, 0.2) truth 0 and
        // (0.1, 0.1, 0.8) truth 2 give 0.25 + 0.09 + 0.04 = 0.38 and
        // 0.01 + 0.01 + 0.04 = 0.06, mean 0.22.
        let p = classes(&[0, 2], array![[0.5, 0.3, 0.2], [0.1, 0.1, 0.8]]);
        assert!(close(
            score(Metric::Brier, Targets::Classes(&[0, 2]), &p).unwrap(),
            0.22
        ));
    }

    #[test]
    fn roc_auc_is_mann_whitney_u_over_n1_n0() {
        // Common practice: AUC = U / (n1 n0). Positives 0.9, 0.8, 0.7, 0.6,
        // 0.5, 0.4, 0.2 against 9 negatives; counting pairs by hand (ties one
        // half): 9 + 8.5 + 8 + 7 + 6 + 5.5 + 3.5 = 47.5 of 63.
        let scores = [
            0.9, 0.8, 0.8, 0.7, 0.6, 0.6, 0.6, 0.5, 0.4, 0.4, 0.3, 0.2, 0.2, 0.1, 0.1, 0.05,
        ];
        let truth = [1, 1, 0, 1, 1, 0, 0, 1, 0, 1, 0, 0, 1, 0, 0, 0];
        let auc = score(Metric::RocAuc, Targets::Classes(&truth), &binary(&scores)).unwrap();
        assert!(close(auc, 47.5 / 63.0));
        let ordered = binary(&[0.1, 0.2, 0.3]);
        assert_eq!(
            score(Metric::RocAuc, Targets::Classes(&[0, 1, 1]), &ordered),
            Ok(1.0)
        );
        assert_eq!(
            score(Metric::RocAuc, Targets::Classes(&[1, 0, 0]), &ordered),
            Ok(0.0)
        );
        assert_eq!(
            score(
                Metric::RocAuc,
                Targets::Classes(&[1, 0, 1, 0]),
                &binary(&[0.5; 4])
            ),
            Ok(0.5)
        );
    }

    proptest::proptest! {
        /// The definition itself (common practice): over every
        /// (positive, negative) pair, 1 when the positive scores higher and
        /// 1/2 when they tie, divided by `n1 n0`. Scores come from a few
        /// values (many ties) and include both signs of zero, which tie.
        #[test]
        fn roc_auc_is_the_pair_count(
            rows in proptest::collection::vec((0usize..7, proptest::bool::ANY), 2..60)
        ) {
            const VALUES: [f64; 7] = [-0.0, 0.0, 0.25, 0.5, 0.5, 0.75, 1.0];
            let scores: Vec<f64> = rows.iter().map(|&(v, _)| VALUES[v]).collect();
            let truth: Vec<u32> = rows.iter().map(|&(_, p)| u32::from(p)).collect();
            let (n1, n0) = (truth.iter().filter(|&&t| t == 1).count(), truth.iter().filter(|&&t| t == 0).count());
            proptest::prop_assume!(n1 > 0 && n0 > 0);
            let mut twice = 0u64;
            for (i, &ti) in truth.iter().enumerate() {
                for (j, &tj) in truth.iter().enumerate() {
                    if ti == 1 && tj == 0 {
                        twice += if scores[i] > scores[j] { 2 } else if scores[i] == scores[j] { 1 } else { 0 };
                    }
                }
            }
            let want = twice as f64 / (2 * n1 * n0) as f64;
            let got = score(Metric::RocAuc, Targets::Classes(&truth), &binary(&scores)).unwrap();
            proptest::prop_assert_eq!(got, want);
        }
    }

    #[test]
    fn roc_auc_matches_scipy() {
        // tests/reference/knn_auc.py: scipy.stats.mannwhitneyu U / (n1 n0),
        // live (versions printed), binary and macro one-vs-rest.
        let Some(reference) = reference_script::reference_output() else {
            return;
        };
        let b = &reference["auc"]["binary"];
        let truth = reference_script::codes(&b["labels"]);
        let got = score(
            Metric::RocAuc,
            Targets::Classes(&truth),
            &binary(&reference_script::floats(&b["scores"])),
        )
        .unwrap();
        let want = b["auc"].as_f64().unwrap();
        assert!(reference_script::close(got, want, 1e-12), "{got} vs {want}");
        let m = &reference["auc"]["multiclass"];
        let truth = reference_script::codes(&m["labels"]);
        let rows: Vec<Vec<f64>> = m["probabilities"]
            .as_array()
            .unwrap()
            .iter()
            .map(reference_script::floats)
            .collect();
        let p = Array2::from_shape_fn((rows.len(), 3), |(r, c)| rows[r][c]);
        let got = score(
            Metric::RocAuc,
            Targets::Classes(&truth),
            &classes(&vec![0; rows.len()], p),
        )
        .unwrap();
        let want = m["macro"].as_f64().unwrap();
        assert!(reference_script::close(got, want, 1e-12), "{got} vs {want}");
    }

    #[test]
    fn hand_worked_regression_metrics() {
        // Errors 0, 1, -1, 0: MSE 0.5, MAE 0.5; truth mean 2.5, SS_tot =
        // 2.25 + 0.25 + 0.25 + 2.25 = 5, so r2 = 1 - 2/5 = 0.6. By hand.
        let t = Targets::Values(&[1.0, 2.0, 3.0, 4.0]);
        let p = Predictions::Values(vec![1.0, 3.0, 2.0, 4.0]);
        assert!(close(score(Metric::Rmse, t, &p).unwrap(), 0.5f64.sqrt()));
        assert!(close(score(Metric::Mae, t, &p).unwrap(), 0.5));
        assert!(close(score(Metric::R2, t, &p).unwrap(), 0.6));
    }

    #[test]
    fn undefined_cases_say_why_and_never_give_nan() {
        let cases: Vec<(Metric, Targets<'_>, Predictions, &str)> = vec![
            (
                Metric::RocAuc,
                Targets::Classes(&[1, 1]),
                binary(&[0.2, 0.7]),
                "fewer than two classes",
            ),
            (
                Metric::R2,
                Targets::Values(&[0.1, 0.1, 0.1]),
                Predictions::Values(vec![0.0, 0.1, 0.2]),
                "constant",
            ),
            (
                Metric::Accuracy,
                Targets::Classes(&[]),
                one_hot(&[], 2),
                "no rows",
            ),
            (
                Metric::Rmse,
                Targets::Values(&[]),
                Predictions::Values(vec![]),
                "no rows",
            ),
            (
                Metric::Accuracy,
                Targets::Values(&[1.0]),
                Predictions::Values(vec![1.0]),
                "class truth",
            ),
            (
                Metric::Mae,
                Targets::Classes(&[0]),
                one_hot(&[0], 2),
                "real-valued",
            ),
            (
                Metric::Accuracy,
                Targets::Classes(&[0, 1]),
                one_hot(&[0], 2),
                "2 rows",
            ),
            (
                Metric::LogLoss,
                Targets::Classes(&[3]),
                one_hot(&[0], 2),
                "class code 3",
            ),
            (
                Metric::Rmse,
                Targets::Values(&[1e300, -1e300]),
                Predictions::Values(vec![-1e300, 1e300]),
                "not finite",
            ),
        ];
        for (metric, truth, predictions, why) in cases {
            match score(metric, truth, &predictions) {
                Err(ScoreError::Undefined { reason, .. }) => {
                    assert!(reason.contains(why), "{metric:?}: {reason}")
                }
                other => panic!("{metric:?}: expected undefined, got {other:?}"),
            }
        }
    }
}
