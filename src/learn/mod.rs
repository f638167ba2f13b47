//! Learners: the built-in models behind one trait, [`Learner`].
//!
//! A learner evaluates a whole *family* of its candidates on one split at
//! once, so that shared work is done once (one neighbour search serves every
//! k, one centroid computation every shrinkage threshold, one decomposition
//! every ridge penalty, one deep tree every shallower depth). The results are
//! identical, bit for bit, to evaluating each candidate alone; every learner
//! has a test that proves it.
//!
//! Invariants: learners are deterministic (same inputs, same bits); they never
//! see rows outside the training part they are given; ties break by the lower
//! row index (position in the training part) or by class order; a degenerate
//! input gives a [`LearnError`] or an [`Outcome`] whose [`Note`] explains it,
//! never a panic or a NaN.

mod baseline;
mod logistic;
mod nearest_centroid;
mod nearest_neighbors;
mod ridge;
mod setting;
mod shrunken_centroid;
mod tree;

pub use baseline::Baseline;
pub use logistic::{Logistic, LogisticCoefficients};
pub use nearest_centroid::MeanCentroid;
pub use nearest_neighbors::NearestNeighbors;
#[doc(hidden)]
pub use nearest_neighbors::search_bench;
pub use ridge::{Ridge, RidgeCoefficients};
pub use setting::{SettingDefault, SettingKind, SettingSpec, SettingValue, Settings};
pub use shrunken_centroid::ShrunkenCentroid;
pub use tree::Tree;

use ndarray::{Array2, ArrayView2};
use serde::Serialize;

/// What is being predicted.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Task {
    /// Class labels coded `0..classes`.
    Classification { classes: usize },
    /// A real-valued response.
    Regression,
}

/// Targets of the rows of one part, in part order.
#[derive(Clone, Copy, Debug)]
pub enum Targets<'a> {
    /// Class codes, each `< classes`.
    Classes(&'a [u32]),
    /// Real values.
    Values(&'a [f64]),
}

/// The training part of a split, after preprocessing. A row may appear more
/// than once (bootstrap); learners treat each copy as a row of its own, which
/// weights it by its count.
#[derive(Clone, Copy, Debug)]
pub struct TrainPart<'a> {
    /// rows x features, finite values only (preprocessing imputes).
    pub x: ArrayView2<'a, f64>,
    /// One target per row of `x`.
    pub y: Targets<'a>,
}

/// Predictions for the rows of one query matrix.
#[derive(Clone, Debug, PartialEq)]
pub enum Predictions {
    /// Predicted class per row and class probabilities (rows x classes, each
    /// row sums to 1).
    Classes {
        labels: Vec<u32>,
        probabilities: Array2<f64>,
    },
    /// Predicted value per row.
    Values(Vec<f64>),
}

/// Facts about a fit that a user should see beside its scores.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct Note {
    /// For iterative solvers: whether the fit met its convergence tolerance.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub converged: Option<bool>,
    /// Features still active (shrunken centroids: any d'_ik != 0).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub active_features: Option<usize>,
    /// A plain-words remark on a degenerate case that was handled, e.g.
    /// "training part has one class; every prediction is that class".
    #[serde(skip_serializing_if = "Option::is_none")]
    pub remark: Option<String>,
}

/// One candidate's result on one split: predictions for each query matrix,
/// in the order the queries were given, and its note.
#[derive(Clone, Debug, PartialEq)]
pub struct Outcome {
    pub predictions: Vec<Predictions>,
    pub note: Note,
}

/// Why a learner could not produce an outcome.
#[derive(Clone, Debug, thiserror::Error, PartialEq)]
pub enum LearnError {
    /// The candidate's settings are invalid for this learner.
    #[error("learner {learner}: setting {setting}: {message}")]
    Setting {
        learner: &'static str,
        setting: String,
        message: String,
    },
    /// The learner does not handle this task.
    #[error("learner {learner} does not do {task}; choose a learner that does")]
    Task {
        learner: &'static str,
        task: &'static str,
    },
    /// The training data cannot be fitted (an empty training part, say).
    #[error("learner {learner}: {message}")]
    Data {
        learner: &'static str,
        message: String,
    },
}

/// A built-in learner.
pub trait Learner: Sync + Send {
    /// The learner's name in plans, e.g. `nearest-neighbors`.
    fn name(&self) -> &'static str;

    /// The settings the learner takes, with kinds and defaults.
    fn settings(&self) -> &'static [SettingSpec];

    /// Whether the learner handles `task`.
    fn supports(&self, task: Task) -> bool;

    /// A key that orders candidates of this learner from most complex to
    /// simplest: a larger key (compared lexicographically) is simpler. Used by
    /// the one-standard-error rule. Settings are complete (defaults filled).
    fn simplicity(&self, settings: &Settings) -> Vec<f64>;

    /// Fit every candidate of `family` (complete settings) on `train` and
    /// predict each matrix of `queries`. Returns one result per candidate, in
    /// family order. A candidate-level failure is an `Err` in its slot; it
    /// does not fail its siblings.
    fn evaluate_family(
        &self,
        task: Task,
        train: &TrainPart<'_>,
        queries: &[ArrayView2<'_, f64>],
        family: &[Settings],
    ) -> Vec<Result<Outcome, LearnError>>;
}

/// Every built-in learner, in documentation order.
pub fn all() -> [&'static dyn Learner; 7] {
    [
        &NearestNeighbors,
        &MeanCentroid,
        &ShrunkenCentroid,
        &Ridge,
        &Logistic,
        &Tree,
        &Baseline,
    ]
}

/// The learner called `name`, if there is one.
pub fn by_name(name: &str) -> Option<&'static dyn Learner> {
    all().into_iter().find(|l| l.name() == name)
}
