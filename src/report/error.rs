//! Why a report could not be written, and the exit code of each reason.

use std::path::PathBuf;

use crate::analysis::AnalysisError;
use crate::ledger::LedgerError;

/// Why a report could not be written.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    #[error("{0}")]
    Ledger(#[from] LedgerError),
    #[error("entry {seq} cannot be reported: {source}")]
    Analysis {
        seq: u64,
        #[source]
        source: AnalysisError,
    },
    #[error("opening entry {seq} names no selection entry, so there is nothing to report on")]
    NoSelection { seq: u64 },
    #[error(
        "failed to write the report {path}: {source}; check that the folder exists and can be written"
    )]
    Write {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error("internal error while drawing the {plot} plot: {message}")]
    Draw { plot: String, message: String },
}

impl ReportError {
    /// The exit code this error maps to.
    pub fn exit_code(&self) -> u8 {
        match self {
            ReportError::Ledger(e) => e.exit_code(),
            ReportError::Analysis { .. } | ReportError::NoSelection { .. } => {
                crate::exit::INTEGRITY
            }
            ReportError::Write { .. } => crate::exit::USER,
            ReportError::Draw { .. } => crate::exit::INTERNAL,
        }
    }
}
