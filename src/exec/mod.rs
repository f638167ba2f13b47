//! Running a job sheet: in-fold preprocessing, learner families on each
//! split in parallel, scores per metric, results in job order.

mod evaluate;
mod runner;
mod selection;

pub use evaluate::{FitInput, Scored, evaluate_candidates};
pub use runner::{JobResult, NoteRecord, RunProgress, run_jobs};
pub use selection::{
    CandidateSummary, SelectError, SelectionResult, partition_id, row_hashes, select,
};
