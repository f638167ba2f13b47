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
        #[arg(long)]
        json: bool,
    },
    /// Write a plan's job sheet (splits, candidates, jobs) as canonical JSON
    Compile {
        plan: PathBuf,
        #[arg(long, value_name = "FILE")]
        out: PathBuf,
    },
    /// Write the wind-turbine demo data and plan into a folder and check the plan
    Demo {
        /// Folder to write into (created if missing)
        #[arg(long, default_value = "holdfast-demo")]
        dir: PathBuf,
        #[arg(long)]
        json: bool,
    },
}

/// What the user asked for, free of clap types.
#[derive(Clone, Debug, PartialEq)]
pub enum Command {
    Check { plan: PathBuf, json: bool },
    Compile { plan: PathBuf, out: PathBuf },
    Demo { dir: PathBuf, json: bool },
}

impl From<Sub> for Command {
    fn from(sub: Sub) -> Command {
        match sub {
            Sub::Check { plan, json } => Command::Check { plan, json },
            Sub::Compile { plan, out } => Command::Compile { plan, out },
            Sub::Demo { dir, json } => Command::Demo { dir, json },
        }
    }
}
