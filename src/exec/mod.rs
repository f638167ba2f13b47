//! Running a job sheet: in-fold preprocessing, learner families on each
//! split in parallel, scores per metric, results in job order; and the
//! three commands that record or recompute results: run (a selection),
//! unseal (an opening) and replay.

mod evaluate;
mod opening;
mod record;
mod replay;
mod runner;
mod selection;

pub use evaluate::{FitInput, OwnedTargets, Scored, evaluate_candidates};
pub use opening::{
    OpeningResult, Recomputed, UnsealError, UnsealOutcome, latest_selection, recompute, unseal,
};
pub use record::{
    RunError, RunFacts, RunOutcome, UNHASHED_KEYS, execute, exposure_warning, hashed_part, run_plan,
};
pub use replay::{Difference, ReplayError, ReplayReport, first_difference, recorded_plan, replay};
pub use runner::{JobResult, NoteRecord, RunProgress, run_jobs};
pub use selection::{
    CandidateSummary, Choice, NestedEstimate, OuterResult, SelectError, SelectionResult,
    SplitFacts, choose, partition_id, row_hashes, select, selection_splits,
};
