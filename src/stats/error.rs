//! The one error type of the statistics module.
//!
//! Invariant: no function of this module returns NaN or an infinity; a value
//! that is undefined for the data at hand is an [`StatsError::Undefined`] with
//! the reason, and an argument outside its domain is [`StatsError::Invalid`].

use thiserror::Error;

/// What can go wrong computing a statistic.
#[derive(Clone, Debug, PartialEq, Error)]
pub enum StatsError {
    /// Too few values (scores, splits, rows, groups, draws) for the quantity.
    #[error("{what} needs at least {needed}, got {got}")]
    TooFew {
        what: &'static str,
        needed: usize,
        got: usize,
    },
    /// An argument outside its domain: a non-finite value, a level outside
    /// (0, 1), lengths that do not match.
    #[error("{0}")]
    Invalid(String),
    /// The quantity is mathematically undefined for these data (for example
    /// a t statistic whose differences are all equal and non-zero).
    #[error("undefined: {0}")]
    Undefined(String),
}

/// `Ok(())` when every value is finite; otherwise names the first bad one.
pub(super) fn check_finite(values: &[f64], what: &str) -> Result<(), StatsError> {
    match values.iter().position(|v| !v.is_finite()) {
        None => Ok(()),
        Some(i) => Err(StatsError::Invalid(format!(
            "{what} must be finite numbers, but value {i} is {}",
            values[i]
        ))),
    }
}

/// `Ok(x)` when `x` is finite; otherwise an error saying what overflowed.
pub(super) fn finite(x: f64, what: &str) -> Result<f64, StatsError> {
    if x.is_finite() {
        Ok(x)
    } else {
        Err(StatsError::Undefined(format!(
            "{what} is not a finite number (the inputs are too large)"
        )))
    }
}

/// `Ok(level)` when `0 < level < 1`.
pub(super) fn check_level(level: f64) -> Result<f64, StatsError> {
    if level > 0.0 && level < 1.0 {
        Ok(level)
    } else {
        Err(StatsError::Invalid(format!(
            "a confidence level must lie strictly between 0 and 1, got {level}"
        )))
    }
}
