//! Monte Carlo cross-validation: repeated random subsampling of the
//! development rows into a training part and a validation part of chosen
//! sizes; rows in neither part are unused in that draw.
//!
//! Sizes: a fraction `f` (0 < f < 1) of the `n` development rows means
//! `round(f * n)` rows, halves rounded away from zero; a count means that
//! many rows. Each part needs at least one row and together at most `n`.
//! Draw `d` uses the stream `<prefix>/monte-carlo/<d>`, so adding draws
//! never moves earlier ones. Per draw:
//!
//! - plain: shuffle the rows; the first `t` train, the next `v` validate.
//!   Part sizes are exactly as asked.
//! - stratified: class quotas for the three parts (train, validation,
//!   unused) are fixed once by `super::apportion` (each within one row of
//!   its class share, part sizes exact); per draw each class's rows
//!   (ascending, classes in code order) are shuffled and the first quota
//!   rows train, the next validate.
//! - grouped (whenever the facts carry a group column): sizes are targets
//!   in rows, met with whole groups, so they are not exact. Groups are
//!   shuffled and walked in that order; a group joins training while
//!   training is below its target and joining leaves it no farther from the
//!   target (group size at most twice the rows missing), else validation by
//!   the same rule, else it is unused (`super::place::fill`). A part left
//!   empty is an error.
//! - grouped and stratified: groups in shuffled order, each to the part
//!   (train, validation, unused, weighted by their target rows) where class
//!   counts stay closest to target (`super::place::closest_shares`). A part
//!   left empty is an error.

use super::apportion::apportion;
use super::kfold::out_of_range;
use super::place::{closest_shares, fill};
use super::units::{Ctx, Mix, Units, class_index, class_lists, emit_parts};
use super::{ResampleError, Size, Split};

/// All draws of Monte Carlo cross-validation.
pub(super) fn monte_carlo(
    ctx: &Ctx<'_>,
    draws: usize,
    train: Size,
    validation: Size,
    stratify: bool,
) -> Result<Vec<Split>, ResampleError> {
    if draws < 1 {
        return Err(out_of_range("splits", draws, "at least 1 split"));
    }
    let plan = Draws::new(ctx, train, validation, stratify)?;
    let mut out = Vec::with_capacity(draws);
    for d in 0..draws {
        let mut mix = Mix::seeded(ctx.stream("monte-carlo", d));
        out.push(emit_parts(ctx.rows, &plan.assign(&mut mix)?, 0, d));
    }
    Ok(out)
}

/// Rows for a size setting, per the module docs.
pub(super) fn resolve(key: &'static str, size: Size, rows: usize) -> Result<usize, ResampleError> {
    let got = match size {
        Size::Fraction(f) if f.is_finite() && f > 0.0 && f < 1.0 => {
            (f * rows as f64).round() as usize
        }
        Size::Fraction(f) => {
            return Err(out_of_range(
                key,
                f,
                "a fraction between 0 and 1, or a row count",
            ));
        }
        Size::Count(0) => return Err(out_of_range(key, 0, "at least 1 row")),
        Size::Count(c) => c,
    };
    match size {
        Size::Fraction(f) if got == 0 => Err(ResampleError::SizeRounds {
            key,
            value: f.to_string(),
            rows,
            got,
            fix: "raise it or give a row count",
        }),
        _ => Ok(got),
    }
}

enum Layout {
    Plain,
    /// Positions per class (code order) and quotas per class: [train, validation, unused].
    Stratified(Vec<Vec<u32>>, Vec<Vec<usize>>),
    Grouped(Units),
    GroupedStratified(Units, usize),
}

struct Draws {
    targets: [usize; 3],
    layout: Layout,
}

impl Draws {
    fn new(
        ctx: &Ctx<'_>,
        train: Size,
        validation: Size,
        stratify: bool,
    ) -> Result<Draws, ResampleError> {
        let n = ctx.len();
        let (t, v) = (
            resolve("train", train, n)?,
            resolve("validation", validation, n)?,
        );
        if t + v > n {
            return Err(ResampleError::PartsTooLarge {
                train: t,
                validation: v,
                rows: n,
            });
        }
        let targets = [t, v, n - t - v];
        let layout = match (ctx.facts.group, stratify) {
            (None, false) => Layout::Plain,
            (None, true) => {
                let lists = class_lists(ctx.rows, ctx.class("stratified monte-carlo")?);
                let sizes: Vec<usize> = lists.iter().map(|(_, list)| list.len()).collect();
                let quotas = apportion(&sizes, &targets)?;
                Layout::Stratified(lists.into_iter().map(|(_, list)| list).collect(), quotas)
            }
            (Some(group), false) => Layout::Grouped(Units::new(ctx.rows, group)),
            (Some(group), true) => {
                let (codes, class_of) = class_index(ctx.rows, ctx.class("stratified monte-carlo")?);
                Layout::GroupedStratified(
                    Units::new(ctx.rows, group).with_classes(&class_of),
                    codes.len(),
                )
            }
        };
        Ok(Draws { targets, layout })
    }

    /// The part of each position for one draw: 0 train, 1 validation, 2 unused.
    fn assign(&self, mix: &mut Mix) -> Result<Vec<u8>, ResampleError> {
        let [t, v, _] = self.targets;
        let n = self.targets.iter().sum();
        match &self.layout {
            Layout::Plain => {
                let mut order: Vec<u32> = (0..n as u32).collect();
                mix.shuffle(&mut order);
                let mut part_of = vec![2u8; n];
                order[..t].iter().for_each(|&p| part_of[p as usize] = 0);
                order[t..t + v]
                    .iter()
                    .for_each(|&p| part_of[p as usize] = 1);
                Ok(part_of)
            }
            Layout::Stratified(lists, quotas) => {
                let mut part_of = vec![2u8; n];
                for (list, quota) in lists.iter().zip(quotas) {
                    let mut list = list.clone();
                    mix.shuffle(&mut list);
                    list[..quota[0]]
                        .iter()
                        .for_each(|&p| part_of[p as usize] = 0);
                    list[quota[0]..quota[0] + quota[1]]
                        .iter()
                        .for_each(|&p| part_of[p as usize] = 1);
                }
                Ok(part_of)
            }
            Layout::Grouped(units) => {
                let unit_part = fill(units, &units.shuffled(mix), &[t, v]);
                by_unit(units, &unit_part, self.targets)
            }
            Layout::GroupedStratified(units, classes) => {
                let weights = self.targets.map(|x| x as u64);
                let unit_part = closest_shares(units, &units.shuffled(mix), &weights, *classes);
                by_unit(units, &unit_part, self.targets)
            }
        }
    }
}

/// Spread unit parts to positions; an empty train or validation part is an error.
fn by_unit(
    units: &Units,
    unit_part: &[u32],
    targets: [usize; 3],
) -> Result<Vec<u8>, ResampleError> {
    let part_of: Vec<u8> = units
        .of
        .iter()
        .map(|&u| unit_part[u as usize].min(2) as u8)
        .collect();
    for (p, part) in [(0u8, "training"), (1, "validation")] {
        let got = part_of.iter().filter(|&&x| x == p).count();
        if got == 0 {
            let (smallest, largest) = units.size_range();
            return Err(ResampleError::GroupsTooCoarse {
                part,
                got,
                target: targets[p as usize],
                smallest,
                largest,
                fix: "make the part larger or use k-fold",
            });
        }
    }
    Ok(part_of)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::resample::RowFacts;
    use crate::resample::units::emit_parts;

    fn ctx<'a>(rows: &'a [u32], facts: RowFacts<'a>) -> Ctx<'a> {
        Ctx {
            rows,
            facts,
            seed: 7,
            prefix: "resample",
        }
    }

    /// (train, validation) of one unshuffled draw.
    fn identity(
        rows: &[u32],
        facts: RowFacts<'_>,
        t: Size,
        v: Size,
        stratify: bool,
    ) -> (Vec<u32>, Vec<u32>) {
        let plan = Draws::new(&ctx(rows, facts), t, v, stratify).expect("valid settings");
        let parts = plan.assign(&mut Mix::Identity).expect("parts fill");
        let split = emit_parts(rows, &parts, 0, 0);
        (split.train, split.validation)
    }

    #[test]
    fn plain_without_shuffle_takes_leading_rows() {
        // By hand: 10 rows, train 0.5 -> 5 rows, validation 3 rows.
        let rows: Vec<u32> = (20..30).collect();
        let got = identity(
            &rows,
            RowFacts::default(),
            Size::Fraction(0.5),
            Size::Count(3),
            false,
        );
        assert_eq!(got, (vec![20, 21, 22, 23, 24], vec![25, 26, 27]));
    }

    #[test]
    fn stratified_without_shuffle_uses_quotas() {
        // By hand: classes 0 (rows 0..6) and 1 (rows 6..10); train 5,
        // validation 3, unused 2 of 10. Shares: class 0: 3, 1.8, 1.2; class
        // 1: 2, 1.2, 0.8. Floors 3,1,1 and 2,1,0 leave one ceiling in
        // validation and one in unused: class 0 has the larger remainder in
        // part 0 (tie at 0), so it goes first and takes validation; class 1
        // takes unused. Quotas 3,2,1 and 2,1,1.
        let class = [0, 0, 0, 0, 0, 0, 1, 1, 1, 1];
        let facts = RowFacts {
            class: Some(&class),
            ..RowFacts::default()
        };
        let rows: Vec<u32> = (0..10).collect();
        let got = identity(&rows, facts, Size::Count(5), Size::Count(3), true);
        assert_eq!(got, (vec![0, 1, 2, 6, 7], vec![3, 4, 8]));
    }

    #[test]
    fn grouped_without_shuffle_fills_by_whole_groups() {
        // By hand: groups 0: {0,1,2}, 1: {3,4}, 2: {5}, 3: {6,7,8,9}; train
        // 5, validation 2 rows. g0 -> train (3 <= 10); g1 -> train (2 <= 4,
        // 5 rows, target met); g2 -> validation (1 <= 4); g3: 4 > 2 * 1 ->
        // unused.
        let group = [0, 0, 0, 1, 1, 2, 3, 3, 3, 3];
        let facts = RowFacts {
            group: Some(&group),
            ..RowFacts::default()
        };
        let rows: Vec<u32> = (0..10).collect();
        let got = identity(&rows, facts, Size::Count(5), Size::Count(2), false);
        assert_eq!(got, (vec![0, 1, 2, 3, 4], vec![5]));
    }

    #[test]
    fn bad_sizes_are_errors() {
        let rows: Vec<u32> = (0..10).collect();
        let group = [0, 0, 0, 0, 0, 0, 0, 0, 0, 1];
        let grouped = RowFacts {
            group: Some(&group),
            ..RowFacts::default()
        };
        let c = |f| ctx(&rows, f);
        let plain = RowFacts::default();
        let cases = [
            (
                plain,
                0,
                Size::Count(2),
                Size::Count(2),
                false,
                out_of_range("splits", 0, "at least 1 split"),
            ),
            (
                plain,
                1,
                Size::Fraction(1.0),
                Size::Count(2),
                false,
                out_of_range("train", 1.0, "a fraction between 0 and 1, or a row count"),
            ),
            (
                plain,
                1,
                Size::Count(2),
                Size::Count(0),
                false,
                out_of_range("validation", 0, "at least 1 row"),
            ),
            (
                plain,
                1,
                Size::Count(8),
                Size::Fraction(0.3),
                false,
                ResampleError::PartsTooLarge {
                    train: 8,
                    validation: 3,
                    rows: 10,
                },
            ),
            (
                plain,
                1,
                Size::Fraction(0.04),
                Size::Count(3),
                false,
                ResampleError::SizeRounds {
                    key: "train",
                    value: "0.04".into(),
                    rows: 10,
                    got: 0,
                    fix: "raise it or give a row count",
                },
            ),
            (
                plain,
                1,
                Size::Count(2),
                Size::Count(2),
                true,
                ResampleError::NeedsClass {
                    what: "stratified monte-carlo",
                },
            ),
        ];
        for (facts, draws, t, v, stratify, want) in cases {
            assert_eq!(
                monte_carlo(&c(facts), draws, t, v, stratify).err(),
                Some(want)
            );
        }
        // One group of 9 rows and one of 1: validation of 4 rows can never
        // take the 9-row group (9 > 2 * 4), and the 1-row group goes to
        // training first, whatever the shuffle.
        let got = monte_carlo(&c(grouped), 1, Size::Count(1), Size::Count(4), false);
        assert!(
            matches!(got, Err(ResampleError::GroupsTooCoarse { .. })),
            "{got:?}"
        );
    }
}
