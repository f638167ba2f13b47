//! The command line's error: a message and the exit code it maps to.

use crate::exit;

/// An error on its way to the user.
#[derive(Debug)]
pub struct CliError {
    pub code: u8,
    pub message: String,
}

impl CliError {
    pub fn user(message: impl Into<String>) -> CliError {
        CliError {
            code: exit::USER,
            message: message.into(),
        }
    }
    pub fn internal(message: impl Into<String>) -> CliError {
        CliError {
            code: exit::INTERNAL,
            message: message.into(),
        }
    }
    pub fn integrity(message: impl Into<String>) -> CliError {
        CliError {
            code: exit::INTEGRITY,
            message: message.into(),
        }
    }
}

impl From<crate::plan::ResolveError> for CliError {
    fn from(e: crate::plan::ResolveError) -> CliError {
        CliError::user(e.to_string())
    }
}

impl From<crate::compile::CompileError> for CliError {
    fn from(e: crate::compile::CompileError) -> CliError {
        match e {
            crate::compile::CompileError::Plan(p) => CliError::user(p.to_string()),
            crate::compile::CompileError::Internal(m) => CliError::internal(m),
        }
    }
}

impl From<crate::canon::CanonError> for CliError {
    fn from(e: crate::canon::CanonError) -> CliError {
        CliError::internal(e.to_string())
    }
}
