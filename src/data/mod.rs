//! Data: a CSV file read into a numeric matrix, its target, group and order
//! columns, and its fingerprint.
//!
//! Invariants: rows keep their file order and are numbered from 0 (the header
//! is not a row); class labels are coded in sorted order of their text;
//! categorical features are one-hot encoded with levels in sorted order;
//! missing cells (empty or `NA`) are counted and are NaN in a numeric column
//! or an all-zero indicator block in a categorical one.

mod columns;
mod dataset;
mod error;
mod fingerprint;
mod header;
mod layout;
mod load;
mod reading;

#[cfg(test)]
mod tests;

pub use dataset::{Dataset, FeatureKind, Target};
pub use error::{ColumnRole, DataError};
pub use fingerprint::{Fingerprint, RowHasher, row_hash};
pub use header::read_header;
pub use load::{DataSpec, load};
