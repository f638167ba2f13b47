//! Bootstrap resampling: each draw trains on `n` rows drawn with
//! replacement from the `n` development rows and validates on the rows it
//! left out (the out-of-bag rows).
//!
//! Draw `d` uses the stream `<prefix>/bootstrap/<d>`. The training list
//! repeats a row as often as it was drawn (sorted ascending, repeats
//! adjacent); the validation list is the out-of-bag rows, sorted.
//!
//! - plain: `n` draws of `below(n)` over the rows (ascending).
//! - grouped (whenever the facts carry a group column): `g` draws with
//!   replacement over the `g` groups (code order); a drawn group brings all
//!   its rows, once per draw, and the out-of-bag rows are those of groups
//!   never drawn (a cluster bootstrap).
//! - stratified: within each class (code order), as many draws as the class
//!   has rows, over its rows; so the training list keeps every class count.
//!   Grouped and stratified: each group belongs to the class of most of its
//!   rows (ties: lowest class code), and groups are drawn within those
//!   strata.
//!
//! A draw whose out-of-bag part is empty is discarded and drawn again from
//! the same stream, up to [`MAX_ATTEMPTS`] times, then an error. When no
//! draw could ever leave something out (one unit, or one per class when
//! stratified) that is an error at once.

use super::kfold::out_of_range;
use super::units::{Ctx, Units, class_index, split};
use super::{ResampleError, Split, Stream};

/// Attempts per draw before an empty out-of-bag part is an error. With at
/// least one stratum of two units an attempt fails with probability at most
/// 1/2, so reaching this limit has probability below 2^-1000.
pub const MAX_ATTEMPTS: usize = 1000;

/// All bootstrap draws.
pub(super) fn bootstrap(
    ctx: &Ctx<'_>,
    draws: usize,
    stratify: bool,
) -> Result<Vec<Split>, ResampleError> {
    if draws < 1 {
        return Err(out_of_range("splits", draws, "at least 1 split"));
    }
    let bag = Bag::new(ctx, stratify)?;
    (0..draws)
        .map(|d| {
            let counts = bag.draw(&mut ctx.stream("bootstrap", d))?;
            Ok(bag.emit(ctx.rows, &counts, d))
        })
        .collect()
}

/// Units (rows, or groups) and the strata they are drawn within.
struct Bag {
    /// Unit of each position.
    of: Vec<u32>,
    units: usize,
    /// Unit indices per stratum, ascending; strata in class-code order.
    strata: Vec<Vec<u32>>,
    unit: &'static str,
}

impl Bag {
    fn new(ctx: &Ctx<'_>, stratify: bool) -> Result<Bag, ResampleError> {
        let n = ctx.len();
        let class = if stratify {
            Some(class_index(ctx.rows, ctx.class("a stratified bootstrap")?))
        } else {
            None
        };
        let (of, units, unit, stratum_of) = match ctx.facts.group {
            None => {
                let stratum_of = class.as_ref().map(|(_, class_of)| class_of.clone());
                ((0..n as u32).collect(), n, "row", stratum_of)
            }
            Some(group) => {
                let mut grouped = Units::new(ctx.rows, group);
                let mut stratum_of = None;
                if let Some((_, class_of)) = &class {
                    grouped = grouped.with_classes(class_of);
                    stratum_of = Some(
                        (0..grouped.len())
                            .map(|u| majority(grouped.comp(u)))
                            .collect(),
                    );
                }
                (grouped.of.clone(), grouped.len(), "group", stratum_of)
            }
        };
        let strata = match stratum_of {
            None => vec![(0..units as u32).collect()],
            Some(stratum_of) => by_stratum(
                &stratum_of,
                class.as_ref().map_or(0, |(codes, _)| codes.len()),
            ),
        };
        if strata.iter().all(|s| s.len() < 2) {
            return Err(ResampleError::NoOutOfBag {
                unit,
                per_class: stratify,
            });
        }
        Ok(Bag {
            of,
            units,
            strata,
            unit,
        })
    }

    /// How often each unit is drawn, for a draw with a non-empty out-of-bag part.
    fn draw(&self, stream: &mut Stream) -> Result<Vec<u32>, ResampleError> {
        for _ in 0..MAX_ATTEMPTS {
            let mut counts = vec![0u32; self.units];
            for stratum in &self.strata {
                for _ in 0..stratum.len() {
                    counts[stratum[stream.below(stratum.len() as u64) as usize] as usize] += 1;
                }
            }
            if counts.contains(&0) {
                return Ok(counts);
            }
        }
        Err(ResampleError::OutOfBagEmpty {
            draws: MAX_ATTEMPTS,
            unit: self.unit,
        })
    }

    fn emit(&self, rows: &[u32], counts: &[u32], draw: usize) -> Split {
        let mut train = Vec::with_capacity(rows.len());
        let mut validation = Vec::new();
        for (&row, &u) in rows.iter().zip(&self.of) {
            match counts[u as usize] {
                0 => validation.push(row),
                c => train.extend(std::iter::repeat_n(row, c as usize)),
            }
        }
        split(0, draw, train, validation)
    }
}

/// The class index holding most of a group's rows, ties to the lowest.
fn majority(comp: &[(u32, u32)]) -> u32 {
    comp.iter()
        .max_by(|a, b| a.1.cmp(&b.1).then(b.0.cmp(&a.0)))
        .map_or(0, |&(c, _)| c)
}

/// Unit indices grouped by stratum index, strata ascending.
fn by_stratum(stratum_of: &[u32], strata: usize) -> Vec<Vec<u32>> {
    let mut out = vec![Vec::new(); strata];
    for (u, &s) in stratum_of.iter().enumerate() {
        out[s as usize].push(u as u32);
    }
    out.retain(|s| !s.is_empty());
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::resample::RowFacts;

    fn ctx<'a>(rows: &'a [u32], facts: RowFacts<'a>) -> Ctx<'a> {
        Ctx {
            rows,
            facts,
            seed: 11,
            prefix: "resample",
        }
    }

    #[test]
    fn emit_repeats_drawn_rows_and_validates_the_rest() {
        // By hand: rows 10..=14, counts 2,0,1,2,0 -> train 10,10,12,13,13;
        // out of bag 11, 14.
        let rows = [10, 11, 12, 13, 14];
        let bag = Bag::new(&ctx(&rows, RowFacts::default()), false).expect("bag");
        let s = bag.emit(&rows, &[2, 0, 1, 2, 0], 3);
        assert_eq!(
            (s.train, s.validation, s.fold),
            (vec![10, 10, 12, 13, 13], vec![11, 14], 3)
        );
    }

    #[test]
    fn grouped_draws_whole_groups() {
        // Groups {0,1} {2} {3,4,5}: every split trains on whole groups and
        // validates on the rows of the groups it missed.
        let group = [0, 0, 1, 2, 2, 2];
        let rows: Vec<u32> = (0..6).collect();
        let facts = RowFacts {
            group: Some(&group),
            ..RowFacts::default()
        };
        for s in bootstrap(&ctx(&rows, facts), 20, false).expect("draws") {
            for &r in &s.validation {
                assert!(
                    s.train
                        .iter()
                        .all(|&t| group[t as usize] != group[r as usize])
                );
            }
            let drawn = s.train.iter().filter(|&&t| t == 0).count();
            assert_eq!(s.train.iter().filter(|&&t| t == 1).count(), drawn);
        }
    }

    #[test]
    fn stratified_keeps_class_counts_in_training() {
        let class = [0, 0, 0, 1, 1, 2, 2, 2, 2];
        let rows: Vec<u32> = (0..9).collect();
        let facts = RowFacts {
            class: Some(&class),
            ..RowFacts::default()
        };
        for s in bootstrap(&ctx(&rows, facts), 20, true).expect("draws") {
            let count = |c| s.train.iter().filter(|&&t| class[t as usize] == c).count();
            assert_eq!((count(0), count(1), count(2)), (3, 2, 4));
        }
    }

    #[test]
    fn majority_breaks_ties_to_the_lowest_class() {
        assert_eq!(majority(&[(0, 2), (1, 3), (2, 3)]), 1);
        assert_eq!(majority(&[(4, 1)]), 4);
    }

    #[test]
    fn impossible_bags_are_errors() {
        let rows = [0, 1];
        let class = [0, 1];
        let classed = RowFacts {
            class: Some(&class),
            ..RowFacts::default()
        };
        let cases = [
            (
                &rows[..1],
                RowFacts::default(),
                1,
                false,
                ResampleError::NoOutOfBag {
                    unit: "row",
                    per_class: false,
                },
            ),
            (
                &rows[..],
                classed,
                1,
                true,
                ResampleError::NoOutOfBag {
                    unit: "row",
                    per_class: true,
                },
            ),
            (
                &rows[..],
                RowFacts::default(),
                0,
                false,
                out_of_range("splits", 0, "at least 1 split"),
            ),
            (
                &rows[..],
                RowFacts::default(),
                1,
                true,
                ResampleError::NeedsClass {
                    what: "a stratified bootstrap",
                },
            ),
        ];
        for (rows, facts, draws, stratify, want) in cases {
            assert_eq!(
                bootstrap(&ctx(rows, facts), draws, stratify).err(),
                Some(want)
            );
        }
    }
}
