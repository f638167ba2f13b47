//! The command line: argument parsing and printing only. Each command turns
//! its options into calls of the library and prints the result, as text for
//! people or, with `--json`, as one JSON object for machines.

mod args;
mod check;
mod error;
mod ledger_view;
mod record;
mod view;

use std::io::Write;
use std::process::ExitCode;

use clap::Parser;

pub use args::Command;
pub use error::CliError;

/// Run the command line and return the process exit code.
pub fn main() -> ExitCode {
    let cli = match args::Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let code = if e.use_stderr() {
                crate::exit::USER
            } else {
                crate::exit::SUCCESS
            };
            let _ = e.print();
            return ExitCode::from(code);
        }
    };
    match run(cli.command.into()) {
        Ok(()) => ExitCode::from(crate::exit::SUCCESS),
        Err(e) => {
            let _ = writeln!(std::io::stderr(), "error: {}", e.message);
            ExitCode::from(e.code)
        }
    }
}

/// Carry out one command.
pub fn run(command: Command) -> Result<(), CliError> {
    match command {
        Command::Check { plan, ledger, json } => check::check(&plan, ledger.as_deref(), json),
        Command::Compile { plan, out } => check::compile(&plan, &out),
        Command::Run { plan, ledger, json } => record::run(&plan, ledger.as_deref(), json),
        Command::Unseal {
            plan,
            reason,
            again,
            ledger,
            json,
        } => record::unseal(&plan, &reason, again, ledger.as_deref(), json),
        Command::Audit { plan, ledger, json } => {
            ledger_view::audit(plan.as_deref(), ledger.as_deref(), json)
        }
        Command::Verify { head, ledger, json } => {
            ledger_view::verify(head.as_deref(), ledger.as_deref(), json)
        }
        Command::Head { ledger, json } => ledger_view::head(ledger.as_deref(), json),
        Command::Replay {
            entry,
            ledger,
            json,
        } => record::replay(&entry, ledger.as_deref(), json),
        Command::Log { ledger, json } => ledger_view::log(ledger.as_deref(), json),
        Command::Show {
            entry,
            ledger,
            json,
        } => ledger_view::show(&entry, ledger.as_deref(), json),
        Command::Report {
            entry,
            out,
            ledger,
            json,
        } => ledger_view::report(&entry, &out, ledger.as_deref(), json),
        Command::BenchData {
            out,
            rows,
            groups,
            features,
            classes,
            seed,
        } => check::bench_data(&out, rows, groups, features, classes, seed),
        Command::Demo { dir, json } => check::demo(&dir, json),
    }
}

/// Print a line to stderr (warnings), ignoring a closed pipe.
pub(crate) fn err(text: &str) {
    let _ = writeln!(std::io::stderr(), "{text}");
}

/// Print a line to stdout, ignoring a closed pipe.
pub(crate) fn out(text: &str) {
    let _ = writeln!(std::io::stdout(), "{text}");
}
