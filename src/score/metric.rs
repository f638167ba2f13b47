//! The metric catalogue and the scoring functions. (Scoring is being built:
//! see the learners issue.)

use serde::Serialize;

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
    let _ = (truth, predictions);
    Err(ScoreError::Undefined {
        metric: metric.name(),
        reason: "scoring is not built yet".into(),
    })
}
