//! The report: one self-contained HTML file for a ledger entry. (Being built.)

use std::path::Path;

use serde::Serialize;

use crate::ledger::{Ledger, LedgerError};

/// What `report` wrote.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ReportSummary {
    /// The file written.
    pub out: String,
    /// The entry reported on.
    pub entry: u64,
    /// Names of the plots in the file, in page order.
    pub plots: Vec<String>,
}

/// Why a report could not be written.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    #[error("{0}")]
    Ledger(#[from] LedgerError),
    #[error("the report is not built yet")]
    NotBuilt,
}

impl ReportError {
    /// The exit code this error maps to.
    pub fn exit_code(&self) -> u8 {
        match self {
            ReportError::Ledger(e) => e.exit_code(),
            ReportError::NotBuilt => crate::exit::INTERNAL,
        }
    }
}

/// Write the report of entry `spec` of `ledger` to `out`.
pub fn write_report(ledger: &Ledger, spec: &str, out: &Path) -> Result<ReportSummary, ReportError> {
    let _ = (ledger.entry(spec)?, out);
    Err(ReportError::NotBuilt)
}
