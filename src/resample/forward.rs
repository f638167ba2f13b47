//! Forward-chaining evaluation over time points: each origin trains on the
//! past and validates on what follows it.
//!
//! Time points are the distinct order values of the development rows,
//! sorted ascending (-0.0 and 0.0 are one point); all counts are in time
//! points, so rows sharing an order value never straddle a cut. With `m`
//! time points numbered from 0, origins are `o = min_train, min_train +
//! step, ...` as long as `o + gap + validation <= m`. At origin `o`:
//!
//! - training: time points `0..o` (expanding) or `o - min_train..o`
//!   (sliding, the latest `min_train` points);
//! - left out: the `gap` points `o..o + gap`;
//! - validation: the points `o + gap..o + gap + validation`.
//!
//! With `splits = N` only the latest `N` origins are kept; folds are
//! numbered from 0 in time order over the kept origins. Example (METHODS.md):
//! 10 rows in time order, min-train 4, validation 2, gap 1, step 2,
//! expanding: train rows 1-4 / validate 6-7, train 1-6 / validate 8-9
//! (1-based); the origin at 8 is dropped.
//!
//! A group column is ignored by design: all units share the time axis, a
//! unit's rows keep their time order, and the split is by time, not by
//! unit, so one unit may have rows in both parts. Too few time points for
//! `min_train + gap + validation` (no origin, or a gap that would leave no
//! training) is an error.

use super::kfold::out_of_range;
use super::units::{Ctx, Times, rows_at, split};
use super::{ResampleError, Split, Window};

/// The forward-chaining settings of [`super::Scheme::ForwardChaining`].
#[derive(Clone, Copy, Debug)]
pub(super) struct Chain {
    pub keep: Option<usize>,
    pub window: Window,
    pub min_train: usize,
    pub validation: usize,
    pub gap: usize,
    pub step: usize,
}

/// All kept origins, earliest first.
pub(super) fn forward_chaining(ctx: &Ctx<'_>, chain: Chain) -> Result<Vec<Split>, ResampleError> {
    let order = ctx.facts.order.ok_or(ResampleError::NeedsOrder {
        what: "forward-chaining",
        instead: "use k-fold",
    })?;
    check(chain)?;
    let times = Times::new(ctx.rows, order)?;
    let origins = origins(chain, times.len())?;
    let splits = origins.into_iter().enumerate().map(|(fold, o)| {
        let from = match chain.window {
            Window::Expanding => 0,
            Window::Sliding => o - chain.min_train,
        };
        let val_from = o + chain.gap;
        let train = rows_at(ctx.rows, &times.positions(from, o));
        let val = rows_at(
            ctx.rows,
            &times.positions(val_from, val_from + chain.validation),
        );
        split(0, fold, train, val)
    });
    Ok(splits.collect())
}

fn check(chain: Chain) -> Result<(), ResampleError> {
    let bounds = [
        ("min-train", chain.min_train, "at least 1 time point"),
        ("validation", chain.validation, "at least 1 time point"),
        ("step", chain.step, "at least 1 time point"),
    ];
    if let Some(&(key, value, expected)) = bounds.iter().find(|b| b.1 < 1) {
        return Err(out_of_range(key, value, expected));
    }
    if chain.keep == Some(0) {
        return Err(out_of_range("splits", 0, "at least 1 split, or no limit"));
    }
    Ok(())
}

/// Origins that fit in `points` time points, the latest `keep` of them.
fn origins(chain: Chain, points: usize) -> Result<Vec<usize>, ResampleError> {
    let tail = chain.gap.saturating_add(chain.validation);
    let needed = chain.min_train.saturating_add(tail);
    if needed > points {
        return Err(ResampleError::TooFewTimePoints { needed, points });
    }
    let all: Vec<usize> = (chain.min_train..=points - tail)
        .step_by(chain.step)
        .collect();
    let skip = all.len() - chain.keep.unwrap_or(all.len()).min(all.len());
    Ok(all[skip..].to_vec())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::resample::RowFacts;

    fn chain(window: Window, keep: Option<usize>) -> Chain {
        Chain {
            keep,
            window,
            min_train: 4,
            validation: 2,
            gap: 1,
            step: 2,
        }
    }

    /// (train, validation) of each split.
    type Parts = Vec<(Vec<u32>, Vec<u32>)>;

    fn run(order: &[f64], chain: Chain) -> Result<Parts, ResampleError> {
        let rows: Vec<u32> = (0..order.len() as u32).collect();
        let ctx = Ctx {
            rows: &rows,
            facts: RowFacts {
                order: Some(order),
                ..RowFacts::default()
            },
            seed: 0,
            prefix: "resample",
        };
        let splits = forward_chaining(&ctx, chain)?;
        Ok(splits
            .into_iter()
            .map(|s| (s.train, s.validation))
            .collect())
    }

    #[test]
    fn golden_example_from_methods() {
        // [ref, by definition] METHODS.md, forward-chaining: 10 rows in time
        // order, min train 4, validation 2, gap 1, step 2, expanding: train
        // rows 1-4 / validate 6-7; train 1-6 / validate 8-9 (1-based); the
        // origin at 8 is dropped. Here 0-based.
        let order: Vec<f64> = (1..=10).map(f64::from).collect();
        let want = vec![
            (vec![0, 1, 2, 3], vec![5, 6]),
            (vec![0, 1, 2, 3, 4, 5], vec![7, 8]),
        ];
        assert_eq!(run(&order, chain(Window::Expanding, None)), Ok(want));
    }

    #[test]
    fn sliding_window_and_kept_origins_by_hand() {
        // Same rows, sliding: the latest 4 points before each origin.
        let order: Vec<f64> = (1..=10).map(f64::from).collect();
        let want = vec![
            (vec![0, 1, 2, 3], vec![5, 6]),
            (vec![2, 3, 4, 5], vec![7, 8]),
        ];
        assert_eq!(run(&order, chain(Window::Sliding, None)), Ok(want.clone()));
        // splits = 1 keeps only the latest origin.
        assert_eq!(
            run(&order, chain(Window::Sliding, Some(1))),
            Ok(want[1..].to_vec())
        );
    }

    #[test]
    fn shared_order_values_move_together() {
        // By hand: rows shuffled in time with ties: order by row
        // 3,1,1,2,5,4,3,6 -> time points 1:{1,2} 2:{3} 3:{0,6} 4:{5} 5:{4}
        // 6:{7}. min-train 2, gap 0, validation 1, step 1: origins 2..=5.
        let order = [3.0, 1.0, 1.0, 2.0, 5.0, 4.0, 3.0, 6.0];
        let c = Chain {
            keep: None,
            window: Window::Expanding,
            min_train: 2,
            validation: 1,
            gap: 0,
            step: 1,
        };
        let want = vec![
            (vec![1, 2, 3], vec![0, 6]),
            (vec![0, 1, 2, 3, 6], vec![5]),
            (vec![0, 1, 2, 3, 5, 6], vec![4]),
            (vec![0, 1, 2, 3, 4, 5, 6], vec![7]),
        ];
        assert_eq!(run(&order, c), Ok(want));
    }

    #[test]
    fn bad_settings_are_errors() {
        let order: Vec<f64> = (0..6).map(f64::from).collect();
        let base = chain(Window::Expanding, None);
        let cases = [
            (
                Chain {
                    min_train: 0,
                    ..base
                },
                out_of_range("min-train", 0, "at least 1 time point"),
            ),
            (
                Chain {
                    validation: 0,
                    ..base
                },
                out_of_range("validation", 0, "at least 1 time point"),
            ),
            (
                Chain { step: 0, ..base },
                out_of_range("step", 0, "at least 1 time point"),
            ),
            (
                Chain {
                    keep: Some(0),
                    ..base
                },
                out_of_range("splits", 0, "at least 1 split, or no limit"),
            ),
            (
                Chain { gap: 3, ..base },
                ResampleError::TooFewTimePoints {
                    needed: 9,
                    points: 6,
                },
            ),
        ];
        for (c, want) in cases {
            assert_eq!(run(&order, c), Err(want));
        }
        let rows = [0, 1];
        let ctx = Ctx {
            rows: &rows,
            facts: RowFacts::default(),
            seed: 0,
            prefix: "resample",
        };
        assert_eq!(
            forward_chaining(&ctx, base).err(),
            Some(ResampleError::NeedsOrder {
                what: "forward-chaining",
                instead: "use k-fold"
            })
        );
    }
}
