//! Resampling schemes. (Being built: see the plan compiler and the
//! resampling issues.)

use serde::Serialize;

use super::{ResampleError, RowFacts, Split, Stream};

/// A part size: a fraction of the rows (or groups) available, or a count.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Size {
    Fraction(f64),
    Count(usize),
}

/// How a forward-chaining training part moves.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Window {
    /// From the first time point up to the origin.
    Expanding,
    /// The latest `min_train` time points before the origin.
    Sliding,
}

/// A resampling scheme of the development partition, resolved.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "scheme")]
pub enum Scheme {
    KFold {
        folds: usize,
        repeats: usize,
        stratify: bool,
    },
    MonteCarlo {
        splits: usize,
        train: Size,
        validation: Size,
        stratify: bool,
    },
    LeaveOneOut,
    LeaveOneGroupOut,
    /// Counts are in time points (distinct order values), so rows that share
    /// an order value never straddle a cut.
    ForwardChaining {
        /// Keep at most this many origins (the latest ones); `None` keeps all.
        splits: Option<usize>,
        window: Window,
        min_train: usize,
        validation: usize,
        gap: usize,
        step: usize,
    },
    Bootstrap {
        splits: usize,
        stratify: bool,
    },
    Nested {
        outer: Box<Scheme>,
        inner: Box<Scheme>,
    },
}

/// Make the splits of `rows` (the development partition, sorted) under
/// `scheme`. Streams are derived from `seed` with labels of the form
/// `resample/...`.
pub fn splits(
    scheme: &Scheme,
    rows: &[u32],
    facts: RowFacts<'_>,
    seed: u64,
) -> Result<Vec<Split>, ResampleError> {
    let _ = (scheme, rows, facts, Stream::new(seed, "resample"));
    Err(ResampleError::Impossible(
        "resampling is not built yet".into(),
    ))
}
