//! k-fold cross-validation of the development rows, plain, stratified,
//! grouped or both, repeated with a fresh shuffle per repeat.
//!
//! Repeat `r` draws from the stream `<prefix>/kfold/<r>` (prefix `resample`,
//! or `resample/inner/<i>` inside nested), so adding repeats never moves the
//! folds of earlier ones. Per repeat:
//!
//! - plain: shuffle the rows, then deal them round-robin (the `i`-th row of
//!   the shuffled order to fold `i mod k`);
//! - stratified: the deal of [`super::deal`], each class's rows (ascending)
//!   shuffled first, classes in code order, all from the repeat's stream;
//! - grouped (whenever the facts carry a group column): groups (in code
//!   order) shuffled, each in that order to the fold with the fewest rows so
//!   far, ties by lowest fold index. Fold sizes then differ by at most the
//!   largest group's size. (Placing the largest groups first would balance
//!   a little better, but when all group sizes differ it makes the shuffle
//!   irrelevant, so every repeat and every seed would give the same folds
//!   and `repeats` would mean nothing.);
//! - grouped and stratified: the same order, each group to the fold where
//!   class counts stay closest to their targets (`super::place` documents
//!   the cost). Each class still needs at least one row per fold (else the
//!   same error as stratified); a class held by fewer groups than folds is
//!   missing from some folds, which the cost accepts.
//!
//! Folds are numbered from 0; fold `f` validates its rows and trains on all
//! other development rows. Work is O(n log n + k n) (the k-fold output
//! itself is k n rows), plus O(g k c) for grouped and stratified with g
//! groups of c classes each on average.

use super::place::{closest_shares, deal_lists, least_rows};
use super::units::{Ctx, Mix, Units, class_index, class_lists, emit_folds};
use super::{ResampleError, Split};

/// All repeats of k-fold.
pub(super) fn kfold(
    ctx: &Ctx<'_>,
    folds: usize,
    repeats: usize,
    stratify: bool,
) -> Result<Vec<Split>, ResampleError> {
    let plan = Folds::new(ctx, folds, repeats, stratify)?;
    let mut out = Vec::with_capacity(folds * repeats);
    for repeat in 0..repeats {
        let mut mix = Mix::seeded(ctx.stream("kfold", repeat));
        out.extend(emit_folds(ctx.rows, &plan.assign(&mut mix), folds, repeat));
    }
    Ok(out)
}

/// How rows reach folds, built once for all repeats.
enum Layout {
    Plain,
    /// Positions of each class, classes in code order.
    Stratified(Vec<Vec<u32>>),
    Grouped(Units),
    /// Units with class make-up, and the number of classes.
    GroupedStratified(Units, usize),
}

pub(super) struct Folds {
    folds: usize,
    len: usize,
    layout: Layout,
}

impl Folds {
    /// Check the settings against the rows and lay them out.
    pub fn new(
        ctx: &Ctx<'_>,
        folds: usize,
        repeats: usize,
        stratify: bool,
    ) -> Result<Folds, ResampleError> {
        if folds < 2 {
            return Err(out_of_range("folds", folds, "at least 2 folds"));
        }
        if repeats < 1 {
            return Err(out_of_range("repeats", repeats, "at least 1 repeat"));
        }
        let len = ctx.len();
        if folds > len {
            return Err(ResampleError::MoreFoldsThanRows { folds, rows: len });
        }
        let layout = match (ctx.facts.group, stratify) {
            (None, false) => Layout::Plain,
            (None, true) => {
                let lists = class_lists(ctx.rows, ctx.class("stratified k-fold")?);
                check_classes(lists.iter().map(|(code, list)| (*code, list.len())), folds)?;
                Layout::Stratified(lists.into_iter().map(|(_, list)| list).collect())
            }
            (Some(group), _) => grouped(ctx, group, folds, stratify)?,
        };
        Ok(Folds { folds, len, layout })
    }

    /// The fold of each position for one repeat.
    pub fn assign(&self, mix: &mut Mix) -> Vec<u32> {
        let k = self.folds;
        match &self.layout {
            Layout::Plain => {
                let mut order: Vec<u32> = (0..self.len as u32).collect();
                mix.shuffle(&mut order);
                let mut fold_of = vec![0u32; self.len];
                for (i, &pos) in order.iter().enumerate() {
                    fold_of[pos as usize] = (i % k) as u32;
                }
                fold_of
            }
            Layout::Stratified(lists) => {
                let mut lists = lists.clone();
                lists.iter_mut().for_each(|list| mix.shuffle(list));
                deal_lists(&lists, self.len, k)
            }
            Layout::Grouped(units) => {
                let unit_fold = least_rows(units, &units.shuffled(mix), k);
                units.of.iter().map(|&u| unit_fold[u as usize]).collect()
            }
            Layout::GroupedStratified(units, classes) => {
                let order = units.shuffled(mix);
                let unit_fold = closest_shares(units, &order, &vec![1; k], *classes);
                units.of.iter().map(|&u| unit_fold[u as usize]).collect()
            }
        }
    }
}

fn grouped(
    ctx: &Ctx<'_>,
    group: &[u32],
    folds: usize,
    stratify: bool,
) -> Result<Layout, ResampleError> {
    let units = Units::new(ctx.rows, group);
    if folds > units.len() {
        return Err(ResampleError::MoreFoldsThanGroups {
            folds,
            groups: units.len(),
        });
    }
    if !stratify {
        return Ok(Layout::Grouped(units));
    }
    let (codes, class_of) = class_index(ctx.rows, ctx.class("stratified k-fold")?);
    let mut sizes = vec![0usize; codes.len()];
    class_of.iter().for_each(|&c| sizes[c as usize] += 1);
    check_classes(codes.iter().copied().zip(sizes), folds)?;
    Ok(Layout::GroupedStratified(
        units.with_classes(&class_of),
        codes.len(),
    ))
}

/// Every class must have at least one row per fold; the lowest class code
/// that has fewer is reported.
fn check_classes(
    sizes: impl Iterator<Item = (u32, usize)>,
    folds: usize,
) -> Result<(), ResampleError> {
    match sizes.into_iter().find(|&(_, rows)| rows < folds) {
        Some((class, rows)) => Err(ResampleError::ClassTooSmall { class, rows, folds }),
        None => Ok(()),
    }
}

pub(super) fn out_of_range(
    key: &'static str,
    value: impl ToString,
    expected: &'static str,
) -> ResampleError {
    ResampleError::OutOfRange {
        key,
        value: value.to_string(),
        expected,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::resample::RowFacts;

    fn ctx<'a>(rows: &'a [u32], facts: RowFacts<'a>) -> Ctx<'a> {
        Ctx {
            rows,
            facts,
            seed: 7,
            prefix: "resample",
        }
    }

    /// (validation rows per fold) of one unshuffled repeat.
    fn identity_folds(
        rows: &[u32],
        facts: RowFacts<'_>,
        folds: usize,
        stratify: bool,
    ) -> Vec<Vec<u32>> {
        let c = ctx(rows, facts);
        let plan = Folds::new(&c, folds, 1, stratify).expect("valid settings");
        emit_folds(rows, &plan.assign(&mut Mix::Identity), folds, 0)
            .into_iter()
            .map(|s| s.validation)
            .collect()
    }

    #[test]
    fn plain_deal_without_shuffle() {
        // By hand: rows 10..=16 dealt round-robin to 3 folds.
        let rows = [10, 11, 12, 13, 14, 15, 16];
        let want = vec![vec![10, 13, 16], vec![11, 14], vec![12, 15]];
        assert_eq!(identity_folds(&rows, RowFacts::default(), 3, false), want);
    }

    #[test]
    fn stratified_deal_without_shuffle() {
        // By hand, the METHODS.md deal on rows 0..10 with classes
        // a,a,a,a,b,b,b,c,c,c (codes 0, 1, 2): a to folds 0,1,2,0; b to
        // 1,2,0; c to 1,2,0. (The METHODS.md check itself, with only two c
        // rows, is an error here, since c has fewer rows than folds; the
        // deal alone is checked in `place`.)
        let class = [0, 0, 0, 0, 1, 1, 1, 2, 2, 2];
        let facts = RowFacts {
            class: Some(&class),
            ..RowFacts::default()
        };
        let rows: Vec<u32> = (0..10).collect();
        let want = vec![vec![0, 3, 6, 9], vec![1, 4, 7], vec![2, 5, 8]];
        assert_eq!(identity_folds(&rows, facts, 3, true), want);
        let short = RowFacts {
            class: Some(&class[..9]),
            ..RowFacts::default()
        };
        let got = Folds::new(&ctx(&rows[..9], short), 3, 1, true).err();
        let want = ResampleError::ClassTooSmall {
            class: 2,
            rows: 2,
            folds: 3,
        };
        assert_eq!(got, Some(want));
    }

    #[test]
    fn grouped_without_shuffle_places_groups_in_order() {
        // By hand: groups (code: rows) 0: {0,1,2}, 1: {3}, 2: {4,5}, 3: {6,7};
        // in order to the fold with fewest rows, ties to the lowest fold:
        // g0 -> 0 (3); g1 -> 1 (1); g2 -> 1 (1 < 3) -> 3; g3 -> 0 (3 = 3, lowest) -> 5.
        let group = [0, 0, 0, 1, 2, 2, 3, 3];
        let facts = RowFacts {
            group: Some(&group),
            ..RowFacts::default()
        };
        let rows: Vec<u32> = (0..8).collect();
        let want = vec![vec![0, 1, 2, 6, 7], vec![3, 4, 5]];
        assert_eq!(identity_folds(&rows, facts, 2, false), want);
    }

    #[test]
    fn grouped_repeats_differ_even_when_every_group_size_differs() {
        // Ten groups of sizes 1..=10: a largest-first placement would make
        // every repeat identical; shuffled placement must not.
        let group: Vec<u32> = (0..10u32)
            .flat_map(|g| std::iter::repeat_n(g, g as usize + 1))
            .collect();
        let facts = RowFacts {
            group: Some(&group),
            ..RowFacts::default()
        };
        let rows: Vec<u32> = (0..group.len() as u32).collect();
        let scheme = crate::resample::Scheme::KFold {
            folds: 3,
            repeats: 2,
            stratify: false,
        };
        let splits = crate::resample::splits(&scheme, &rows, facts, 5).expect("splits");
        let (first, second): (Vec<_>, Vec<_>) = splits.iter().partition(|s| s.repeat == 0);
        let parts = |v: &[&Split]| v.iter().map(|s| s.validation.clone()).collect::<Vec<_>>();
        assert_ne!(parts(&first), parts(&second));
    }

    #[test]
    fn grouped_stratified_without_shuffle_balances_classes() {
        // By hand: four groups of two rows, groups 0 and 1 class 0, groups 2
        // and 3 class 1 (equal sizes, so the order stays 0, 1, 2, 3). Two
        // folds: g0 -> 0; g1 -> 1 (row term); g2 -> 0 (fold 0 has 2 rows, as
        // has fold 1, and lacks class 1 as much: tie, lowest); g3 -> 1.
        let group = [0, 0, 1, 1, 2, 2, 3, 3];
        let class = [0, 0, 0, 0, 1, 1, 1, 1];
        let facts = RowFacts {
            class: Some(&class),
            group: Some(&group),
            ..RowFacts::default()
        };
        let rows: Vec<u32> = (0..8).collect();
        let want = vec![vec![0, 1, 4, 5], vec![2, 3, 6, 7]];
        assert_eq!(identity_folds(&rows, facts, 2, true), want);
    }

    #[test]
    fn bad_settings_are_errors() {
        let group = [0, 0, 1, 1, 2, 2];
        let class = [0, 0, 0, 0, 1, 1];
        let rows: Vec<u32> = (0..6).collect();
        let plain = RowFacts::default();
        let grouped = RowFacts {
            group: Some(&group),
            ..plain
        };
        let classed = RowFacts {
            class: Some(&class),
            ..plain
        };
        let cases = [
            (
                plain,
                1,
                1,
                false,
                out_of_range("folds", 1, "at least 2 folds"),
            ),
            (
                plain,
                2,
                0,
                false,
                out_of_range("repeats", 0, "at least 1 repeat"),
            ),
            (
                plain,
                7,
                1,
                false,
                ResampleError::MoreFoldsThanRows { folds: 7, rows: 6 },
            ),
            (
                grouped,
                5,
                1,
                false,
                ResampleError::MoreFoldsThanGroups {
                    folds: 5,
                    groups: 3,
                },
            ),
            (
                plain,
                2,
                1,
                true,
                ResampleError::NeedsClass {
                    what: "stratified k-fold",
                },
            ),
            (
                classed,
                3,
                1,
                true,
                ResampleError::ClassTooSmall {
                    class: 1,
                    rows: 2,
                    folds: 3,
                },
            ),
        ];
        for (facts, folds, repeats, stratify, want) in cases {
            let got = kfold(&ctx(&rows, facts), folds, repeats, stratify).err();
            assert_eq!(got, Some(want));
        }
    }

    #[test]
    fn message_names_groups_and_the_way_out() {
        let err = ResampleError::MoreFoldsThanGroups {
            folds: 5,
            groups: 3,
        };
        assert_eq!(
            err.to_string(),
            "5 folds but only 3 groups in the development partition; use at most 3 folds or leave-one-group-out"
        );
    }
}
