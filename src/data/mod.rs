//! Data: a CSV file read into a numeric matrix, its target, group and order
//! columns, and its fingerprint.
//!
//! Invariants: rows keep their file order and are numbered from 0 (the header
//! is not a row); class labels are coded in sorted order of their text;
//! categorical features are one-hot encoded with levels in sorted order;
//! missing cells (empty or `NA`) are NaN in `features` and counted.

mod dataset;
mod fingerprint;
mod load;

pub use dataset::{Dataset, FeatureKind, Target};
pub use fingerprint::{Fingerprint, row_hash};
pub use load::{DataError, DataSpec, load, read_header};
