//! The job sheet: the compiled, ordered list of the sealed partition, the
//! development partition, the resampling splits, the candidates and one job
//! per (split, candidate). Everything in it is content-hashed.

mod job_sheet;
mod warnings;

pub use job_sheet::{
    CompileError, FORMAT, INNER_CHOICE, Job, JobSheet, SheetCandidate, SheetData, SheetSplit,
    compile, facts, is_nested, job_key, partition,
};
pub use warnings::warnings;
