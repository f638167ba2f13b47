//! Statistics: summaries of split scores, intervals, comparison tests,
//! selection rules and bias corrections, each from its published source
//! (named on every function; formulas and check values in METHODS.md).
//!
//! Invariants: every function is pure and deterministic (sums in a fixed
//! order, ties to the lowest index, randomness only from a caller's
//! [`crate::resample::Stream`]); no NaN or infinity is ever returned, an
//! undefined quantity is a [`StatsError`] with the reason.

mod bootstrap;
mod compare;
mod draw;
mod error;
mod estimator;
mod interval;
mod mcnemar;
mod optimism;
mod select;
mod summary;
mod table;

pub use bootstrap::{bootstrap_percentile, cluster_bootstrap_percentile, quantile};
pub use compare::{
    TTest, TTestMethod, corrected_resampled_t, naive_t, repeated_k_fold_t, t_quantile,
    t_two_sided_p,
};
pub use error::StatsError;
pub use estimator::{
    Err632Plus, OutOfBag, err632, err632_plus, no_information_rate,
    no_information_rate_from_labels, out_of_bag_error,
};
pub use interval::{
    Interval, IntervalMethod, bonferroni_level, clopper_pearson, normal_quantile, wilson,
};
pub use mcnemar::{EXACT_BELOW, McNemar, McNemarMethod, mcnemar};
pub use optimism::{Optimism, minimum_cv_bias};
pub use select::{CandidateFacts, Rule, Selection, select, select_best, select_one_standard_error};
pub use summary::{Summary, mean, sample_sd, sample_variance, standard_error, summarize};
pub use table::{Direction, ScoreTable};
