//! The split type, the per-row facts that steer resampling, and errors.

use serde::Serialize;

/// Whether a split belongs to the outer or the inner loop of nested
/// cross-validation; plain schemes give `Outer` splits only.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Role {
    Outer,
    Inner,
}

/// One (training rows, validation rows) pair.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Split {
    pub role: Role,
    /// For an inner split: the index (in the returned list) of its outer split.
    pub parent: Option<usize>,
    /// Repeat number, from 0 (schemes without repeats: 0).
    pub repeat: u32,
    /// Fold (or draw, or origin) number within the repeat, from 0.
    pub fold: u32,
    /// Sorted ascending; may repeat an index for bootstrap.
    pub train: Vec<u32>,
    /// Sorted ascending, no repeats.
    pub validation: Vec<u32>,
}

/// Per-row columns that steer resampling, indexed by file row.
#[derive(Clone, Copy, Debug, Default)]
pub struct RowFacts<'a> {
    /// Class code per row (classification only).
    pub class: Option<&'a [u32]>,
    /// Group code per row, when the plan names a group column.
    pub group: Option<&'a [u32]>,
    /// Order value per row, when the plan names an order column.
    pub order: Option<&'a [f64]>,
}

/// A scheme that cannot be carried out on these rows. Messages are
/// lowercase fragments that say what is wrong and what to do; the caller adds
/// the plan file and table.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum ResampleError {
    #[error("{0}")]
    Impossible(String),
}
