//! The audit: for every sealed partition, how often it was opened, when, by
//! whom, with which candidate and score and why; how often each of its rows
//! has been looked at; and the selections run against it. It reads the
//! ledger only, and first says whether the hash chain verified.

mod body;
mod body_text;
mod report;
mod tally;

#[cfg(test)]
mod tests;

pub use report::{
    AuditReport, ChainStatus, OpeningLine, PartitionAudit, PlanExposure, SelectionLine, audit,
};
