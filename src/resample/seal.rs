//! The sealed partition. (Being built: see the plan compiler issue.)

use serde::Serialize;

use super::{ResampleError, RowFacts, Stream};

/// How the sealed partition is drawn.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "by")]
pub enum SealSpec {
    /// A random `fraction` of the rows (of the groups, when grouped),
    /// stratified by class when asked.
    Random { fraction: f64, stratify: bool },
    /// The latest `fraction` of the rows by the order column.
    Last { fraction: f64 },
}

/// The sealed rows and the development rows, each sorted, together every row
/// exactly once.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Partition {
    pub sealed: Vec<u32>,
    pub development: Vec<u32>,
}

/// Draw the sealed partition of `rows` file rows (stream label `seal`).
pub fn seal(
    spec: &SealSpec,
    rows: usize,
    facts: RowFacts<'_>,
    seed: u64,
) -> Result<Partition, ResampleError> {
    let _ = (spec, rows, facts, Stream::new(seed, "seal"));
    Err(ResampleError::Impossible("sealing is not built yet".into()))
}
