//! The report: one self-contained HTML file for a selection entry (or an
//! opening entry, reported through its selection), with inline SVG plots
//! drawn by plotters, tables, and the record of the ledger.
//!
//! The page needs no network and no script: styles are inline, plots are
//! inline SVG, fonts are the reader's own sans-serif. Every plot has a
//! stable id (`plot-...`) and class, and every data point is an element of
//! its own with a class (`point validation`, `point training`,
//! `point split-score`, `cell training`, ...) so tests can count them.
//!
//! Invariants: the page is built from the ledger alone, except the fold
//! map and the exact bootstrap estimates, which re-resolve the recorded
//! plan against its data file (as replay does) and is left out, with the reason, when the file is missing
//! or no longer the recorded one; nothing is appended to the ledger; the
//! same ledger gives the same bytes.

mod error;
mod fold_map;
mod page;
mod plots;
mod refit;
mod svg;
mod write;

pub use error::ReportError;
pub use write::{ReportSummary, write_report};
