//! The analysis of a selection: what a recorded selection says beyond its
//! table, computed only from what the entry records (per-split scores,
//! split sizes, the scheme, the metric and the choice).
//!
//! It compares the chosen candidate with every other eligible candidate and
//! the baseline (the corrected resampled t), estimates the optimism of the
//! best cross-validated mean (Tibshirani and Tibshirani 2009), lays out the
//! validation curves of each learner over its complexity setting, and, for
//! bootstrap schemes, the .632 estimate (Efron 1983). The report draws it;
//! the terminal table and `--json` output print it.
//!
//! Invariants: pure and deterministic (candidates in recorded order, ties
//! to the lower candidate index, sums in split order); no NaN or infinity
//! reaches an [`Analysis`]: an undefined quantity is `None` beside a reason
//! in words.

// The file is named after the type it holds, as everywhere else.
#[allow(clippy::module_inception)]
mod analysis;
mod bootstrap;
mod compare;
mod curve;
mod optimism;
mod recorded;

#[cfg(test)]
mod fixture;

pub use analysis::{
    Analysis, AnalysisError, Band, CandidateRef, FORMAT, NestedEstimate, OuterSplit, SplitScores,
    TOP_CANDIDATES, analyse, number,
};
pub use bootstrap::{BootstrapCandidate, BootstrapEstimates};
pub use compare::{Comparison, TestForm, TestSetup};
pub use curve::{Curve, CurvePoint, LeftOut, Stat, complexity_setting};
pub use optimism::OptimismReport;
