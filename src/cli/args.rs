//! The clap layer: argument definitions, converted in one fallible step into
//! clap-free [`Command`] values that the rest of the crate sees.

use std::path::PathBuf;

use clap::{Parser, Subcommand};

/// holdfast: choose a model by resampling, keep the test partition sealed,
/// and count every look at it in a tamper-evident ledger.
#[derive(Debug, Parser)]
#[command(name = "holdfast", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Sub,
}

#[derive(Debug, Subcommand)]
pub enum Sub {
    /// Validate, resolve and compile a plan; print its hash, partitions and job counts
    Check {
        plan: PathBuf,
        /// The ledger to look in for earlier openings of the same rows
        #[command(flatten)]
        ledger: LedgerArg,
        #[arg(long)]
        json: bool,
    },
    /// Write a plan's job sheet (splits, candidates, jobs) as canonical JSON
    Compile {
        plan: PathBuf,
        #[arg(long, value_name = "FILE")]
        out: PathBuf,
    },
    /// Run every job of a plan, select a candidate and append a selection to the ledger
    Run {
        plan: PathBuf,
        #[command(flatten)]
        ledger: LedgerArg,
        #[arg(long)]
        json: bool,
    },
    /// Refit the selected candidate, score it once on the sealed partition and record the opening
    Unseal {
        plan: PathBuf,
        /// Why you are looking at the sealed partition (recorded in the ledger)
        #[arg(long)]
        reason: String,
        /// Open a partition that has been opened before (counted, and shown in every audit)
        #[arg(long)]
        again: bool,
        #[command(flatten)]
        ledger: LedgerArg,
        #[arg(long)]
        json: bool,
    },
    /// Show every opening of the sealed partitions of a plan's data (or of all data), and row exposure
    Audit {
        plan: Option<PathBuf>,
        #[command(flatten)]
        ledger: LedgerArg,
        #[arg(long)]
        json: bool,
    },
    /// Walk the ledger's hash chain and name the first entry that does not match
    Verify {
        /// Also prove that this earlier head hash is still part of the chain
        #[arg(long, value_name = "HASH")]
        head: Option<String>,
        #[command(flatten)]
        ledger: LedgerArg,
        #[arg(long)]
        json: bool,
    },
    /// Print the hash of the ledger's latest entry (commit it or send it elsewhere)
    Head {
        #[command(flatten)]
        ledger: LedgerArg,
        #[arg(long)]
        json: bool,
    },
    /// Re-run a recorded selection or opening and compare it with the ledger, byte for byte
    Replay {
        /// Sequence number, unique hash prefix, or `latest`
        entry: String,
        #[command(flatten)]
        ledger: LedgerArg,
        #[arg(long)]
        json: bool,
    },
    /// List the ledger's entries
    Log {
        #[command(flatten)]
        ledger: LedgerArg,
        #[arg(long)]
        json: bool,
    },
    /// Print one ledger entry in full
    Show {
        /// Sequence number, unique hash prefix, or `latest`
        entry: String,
        #[command(flatten)]
        ledger: LedgerArg,
        #[arg(long)]
        json: bool,
    },
    /// Write one self-contained HTML report of a selection (curves, split scores, fold map, openings)
    Report {
        /// Sequence number, unique hash prefix, or `latest`
        entry: String,
        #[arg(long, value_name = "FILE.html")]
        out: PathBuf,
        #[command(flatten)]
        ledger: LedgerArg,
        #[arg(long)]
        json: bool,
    },
    /// Write a seeded synthetic data set for benchmarks (any number of rows, groups and features)
    BenchData {
        #[arg(long, value_name = "FILE")]
        out: PathBuf,
        #[arg(long, default_value_t = 10_000)]
        rows: usize,
        #[arg(long, default_value_t = 100)]
        groups: usize,
        #[arg(long, default_value_t = 5)]
        features: usize,
        #[arg(long, default_value_t = 2)]
        classes: usize,
        #[arg(long, default_value_t = 1)]
        seed: u64,
    },
    /// Write the wind-turbine demo data and plan into a folder and run the whole job on it
    Demo {
        /// Folder to write into (created if missing)
        #[arg(long, default_value = "holdfast-demo")]
        dir: PathBuf,
        #[arg(long)]
        json: bool,
    },
}

/// The ledger file option shared by the ledger commands.
#[derive(Debug, clap::Args)]
pub struct LedgerArg {
    /// The ledger file (default: $HOLDFAST_LEDGER, else ledger/holdfast.sqlite at the
    /// root of the plan's git work tree, else beside the plan)
    #[arg(long, value_name = "FILE")]
    pub ledger: Option<PathBuf>,
}

/// What the user asked for, free of clap types.
#[derive(Clone, Debug, PartialEq)]
pub enum Command {
    Check {
        plan: PathBuf,
        ledger: Option<PathBuf>,
        json: bool,
    },
    Compile {
        plan: PathBuf,
        out: PathBuf,
    },
    Run {
        plan: PathBuf,
        ledger: Option<PathBuf>,
        json: bool,
    },
    Unseal {
        plan: PathBuf,
        reason: String,
        again: bool,
        ledger: Option<PathBuf>,
        json: bool,
    },
    Audit {
        plan: Option<PathBuf>,
        ledger: Option<PathBuf>,
        json: bool,
    },
    Verify {
        head: Option<String>,
        ledger: Option<PathBuf>,
        json: bool,
    },
    Head {
        ledger: Option<PathBuf>,
        json: bool,
    },
    Replay {
        entry: String,
        ledger: Option<PathBuf>,
        json: bool,
    },
    Log {
        ledger: Option<PathBuf>,
        json: bool,
    },
    Show {
        entry: String,
        ledger: Option<PathBuf>,
        json: bool,
    },
    Report {
        entry: String,
        out: PathBuf,
        ledger: Option<PathBuf>,
        json: bool,
    },
    BenchData {
        out: PathBuf,
        rows: usize,
        groups: usize,
        features: usize,
        classes: usize,
        seed: u64,
    },
    Demo {
        dir: PathBuf,
        json: bool,
    },
}

impl From<Sub> for Command {
    fn from(sub: Sub) -> Command {
        match sub {
            Sub::Check { plan, ledger, json } => Command::Check {
                plan,
                ledger: ledger.ledger,
                json,
            },
            Sub::Compile { plan, out } => Command::Compile { plan, out },
            Sub::Run { plan, ledger, json } => Command::Run {
                plan,
                ledger: ledger.ledger,
                json,
            },
            Sub::Unseal {
                plan,
                reason,
                again,
                ledger,
                json,
            } => Command::Unseal {
                plan,
                reason,
                again,
                ledger: ledger.ledger,
                json,
            },
            Sub::Audit { plan, ledger, json } => Command::Audit {
                plan,
                ledger: ledger.ledger,
                json,
            },
            Sub::Verify { head, ledger, json } => Command::Verify {
                head,
                ledger: ledger.ledger,
                json,
            },
            Sub::Head { ledger, json } => Command::Head {
                ledger: ledger.ledger,
                json,
            },
            Sub::Replay {
                entry,
                ledger,
                json,
            } => Command::Replay {
                entry,
                ledger: ledger.ledger,
                json,
            },
            Sub::Log { ledger, json } => Command::Log {
                ledger: ledger.ledger,
                json,
            },
            Sub::Show {
                entry,
                ledger,
                json,
            } => Command::Show {
                entry,
                ledger: ledger.ledger,
                json,
            },
            Sub::Report {
                entry,
                out,
                ledger,
                json,
            } => Command::Report {
                entry,
                out,
                ledger: ledger.ledger,
                json,
            },
            Sub::BenchData {
                out,
                rows,
                groups,
                features,
                classes,
                seed,
            } => Command::BenchData {
                out,
                rows,
                groups,
                features,
                classes,
                seed,
            },
            Sub::Demo { dir, json } => Command::Demo { dir, json },
        }
    }
}
