//! Running a job sheet: in-fold preprocessing, learner families on each
//! split in parallel, scores per metric, results in job order.

mod evaluate;
mod runner;

pub use evaluate::{FitInput, Scored, evaluate_candidates};
pub use runner::{JobResult, RunProgress, run_jobs};
