//! The command line: argument parsing and printing only. (Being built.)

use std::process::ExitCode;

/// Run the command line and return the process exit code.
pub fn main() -> ExitCode {
    ExitCode::from(crate::exit::SUCCESS)
}
