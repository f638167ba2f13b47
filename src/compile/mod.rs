//! The job sheet: the compiled, ordered list of the sealed partition, the
//! development partition, the resampling splits, the candidates and one job
//! per (split, candidate). Everything in it is content-hashed.

mod job_sheet;
mod warnings;

pub use job_sheet::{
    CompileError, FORMAT, Job, JobSheet, SheetCandidate, SheetData, SheetSplit, compile, facts,
    job_key, partition,
};
pub use warnings::warnings;
