//! holdfast: honest model selection by resampling, with a sealed test
//! partition and a tamper-evident ledger of every look at it.
//!
//! The flow is `plan` (TOML as written) -> `plan::ResolvedPlan` (defaults
//! filled in, data fingerprint attached) -> `compile::JobSheet` (splits,
//! candidates, jobs) -> `exec` (runs jobs) -> `ledger` (hash-chained record).
//! Every module below owns one domain noun; `cli` only parses and prints.

pub mod analysis;
pub mod audit;
pub mod canon;
pub mod cli;
pub mod compile;
pub mod data;
pub mod demo;
pub mod exec;
pub mod exit;
pub mod learn;
pub mod ledger;
pub mod plan;
pub mod prep;
pub mod report;
pub mod resample;
pub mod score;
pub mod stats;
