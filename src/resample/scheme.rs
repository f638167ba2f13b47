//! Resampling schemes of the development partition and the entry point
//! [`splits`] that carries one out.
//!
//! Each scheme lives in its own file (`kfold`, `monte_carlo`, `leave_out`,
//! `forward`, `bootstrap`) with its documented rules; this file checks the
//! rows and facts, dispatches, and runs nested cross-validation.
//!
//! Nested: the outer scheme splits the development rows with the stream
//! prefix `resample` (so its splits equal the same scheme run alone); for
//! the `i`-th outer split (from 0), the inner scheme splits that split's
//! training rows with the stream prefix `resample/inner/<i>`. The returned
//! list holds each outer split followed directly by its inner splits; an
//! inner split has role `Inner` and `parent` = the index of its outer split
//! in the returned list. The outer scheme cannot be bootstrap (its training
//! list repeats rows) or nested; the inner scheme cannot be nested.

use serde::Serialize;

use super::bootstrap::bootstrap;
use super::forward::{Chain, forward_chaining};
use super::kfold::kfold;
use super::leave_out::{leave_one_group_out, leave_one_out};
use super::monte_carlo::monte_carlo;
use super::units::{Ctx, check_rows};
use super::{ResampleError, Role, RowFacts, Split};

/// A part size: a fraction of the development rows or a count of rows.
/// With a group column the size is a target in rows, met by whole groups
/// as closely as the scheme's rule allows (see `monte_carlo`).
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
    /// `leave-one-out` in plans: one split per development row.
    #[serde(rename = "leave-one-out")]
    OneRowOut,
    /// `leave-one-group-out` in plans: one split per group.
    #[serde(rename = "leave-one-group-out")]
    OneGroupOut,
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

/// Make the splits of `rows` (the development partition, sorted ascending
/// and distinct) under `scheme`. Streams are derived from `seed` with labels
/// of the form `resample/...`. The result depends only on `rows`, the facts
/// of those rows, `scheme` and `seed`.
pub fn splits(
    scheme: &Scheme,
    rows: &[u32],
    facts: RowFacts<'_>,
    seed: u64,
) -> Result<Vec<Split>, ResampleError> {
    check_rows(rows, facts)?;
    let ctx = Ctx {
        rows,
        facts,
        seed,
        prefix: "resample",
    };
    match scheme {
        Scheme::Nested { outer, inner } => nested(&ctx, outer, inner),
        plain => run(&ctx, plain),
    }
}

/// One non-nested scheme.
fn run(ctx: &Ctx<'_>, scheme: &Scheme) -> Result<Vec<Split>, ResampleError> {
    match *scheme {
        Scheme::KFold {
            folds,
            repeats,
            stratify,
        } => kfold(ctx, folds, repeats, stratify),
        Scheme::MonteCarlo {
            splits,
            train,
            validation,
            stratify,
        } => monte_carlo(ctx, splits, train, validation, stratify),
        Scheme::OneRowOut => leave_one_out(ctx),
        Scheme::OneGroupOut => leave_one_group_out(ctx),
        Scheme::ForwardChaining {
            splits,
            window,
            min_train,
            validation,
            gap,
            step,
        } => {
            let chain = Chain {
                keep: splits,
                window,
                min_train,
                validation,
                gap,
                step,
            };
            forward_chaining(ctx, chain)
        }
        Scheme::Bootstrap { splits, stratify } => bootstrap(ctx, splits, stratify),
        Scheme::Nested { .. } => Err(ResampleError::NestedInner),
    }
}

fn nested(ctx: &Ctx<'_>, outer: &Scheme, inner: &Scheme) -> Result<Vec<Split>, ResampleError> {
    match outer {
        Scheme::Bootstrap { .. } => {
            return Err(ResampleError::NestedOuter {
                scheme: "bootstrap",
            });
        }
        Scheme::Nested { .. } => return Err(ResampleError::NestedOuter { scheme: "nested" }),
        _ => {}
    }
    if matches!(inner, Scheme::Nested { .. }) {
        return Err(ResampleError::NestedInner);
    }
    let outers = run(ctx, outer)?;
    let smallest = outers.iter().map(|s| s.train.len()).min().unwrap_or(0);
    let mut out = Vec::new();
    for (i, outer_split) in outers.into_iter().enumerate() {
        let prefix = format!("resample/inner/{i}");
        let inner_ctx = Ctx {
            rows: &outer_split.train,
            prefix: &prefix,
            ..*ctx
        };
        let inners = check_rows(inner_ctx.rows, ctx.facts)
            .and_then(|()| run(&inner_ctx, inner))
            .map_err(|e| ResampleError::Inner {
                outer: i,
                rows: outer_split.train.len(),
                smallest,
                source: Box::new(e),
            })?;
        let parent = out.len();
        out.push(outer_split);
        out.extend(inners.into_iter().map(|s| Split {
            role: Role::Inner,
            parent: Some(parent),
            ..s
        }));
    }
    Ok(out)
}
