//! Placing rows or groups into parts (folds, or train / validation / rest).
//!
//! - [`deal`]: the stratified deal of METHODS.md. For each class in sorted
//!   order, its items go to folds round-robin, the fold pointer carrying on
//!   from the previous class; the seeded schemes shuffle each class's items
//!   first. Every fold gets within one of its share of every class, and fold
//!   sizes differ by at most one.
//! - [`least_rows`]: each group in the given order to the fold with the
//!   fewest rows so far, ties by lowest fold index.
//! - [`closest_shares`]: each group in the given order to the part where the
//!   class counts stay closest to their targets. Part `b` has weight `w_b`
//!   (`W` = the sum of the weights), so its target for class `c` is
//!   `N_c * w_b / W` and for rows `N * w_b / W`. The cost of a placement
//!   is the sum over parts `b` of
//!   `sum_c (x_bc - N_c w_b / W)^2 + (x_b - N w_b / W)^2`, with `x_bc` the
//!   rows of class `c` and `x_b` all rows in part `b`; each group goes where it raises the cost least,
//!   ties by lowest part index. The row term keeps parts balanced in size
//!   when groups hold a single class each (then the class terms alone could
//!   tie). The increase is computed exactly in integers scaled by `W`: for
//!   a group with `g_c` rows of class `c` and `g` rows in all, it is
//!   `sum_c g_c (2 (W x_bc - w_b N_c) + W g_c) + g (2 (W x_b - w_b N) + W g)`
//!   (divided by `W`, which does not change the choice). An empty part
//!   costs strictly less than a non-empty part of no larger weight, so with
//!   equal weights (k-fold) the first groups go to the empty folds, and
//!   every fold gets a group when there are at least as many groups.
//! - [`fill`]: groups in the given order fill parts up to target row
//!   counts; a group joins the first part still below its target when
//!   joining leaves the part no farther from the target than before (its
//!   size is at most twice the rows still missing), otherwise it stays out.

use std::cmp::Reverse;
use std::collections::{BTreeMap, BinaryHeap};

use super::units::Units;

/// The stratified deal without shuffling: `labels[i]` is item `i`'s class;
/// returns the fold of each item. Items of a class are dealt in index order.
pub fn deal(labels: &[u32], folds: usize) -> Vec<usize> {
    let mut lists: BTreeMap<u32, Vec<u32>> = BTreeMap::new();
    for (i, &label) in labels.iter().enumerate() {
        lists.entry(label).or_default().push(i as u32);
    }
    let lists: Vec<Vec<u32>> = lists.into_values().collect();
    deal_lists(&lists, labels.len(), folds)
        .into_iter()
        .map(|f| f as usize)
        .collect()
}

/// Deal the items of each list (lists in class order, items in the order
/// given) to `folds` folds; items are indices below `len`.
pub(super) fn deal_lists(lists: &[Vec<u32>], len: usize, folds: usize) -> Vec<u32> {
    let mut fold_of = vec![0u32; len];
    let mut next = 0usize;
    for &item in lists.iter().flatten() {
        fold_of[item as usize] = next as u32;
        next = (next + 1) % folds.max(1);
    }
    fold_of
}

/// Each unit of `order` to the fold with the fewest rows so far (ties:
/// lowest fold index); returns the fold of each unit.
pub(super) fn least_rows(units: &Units, order: &[u32], folds: usize) -> Vec<u32> {
    let mut heap: BinaryHeap<Reverse<(usize, u32)>> =
        (0..folds as u32).map(|f| Reverse((0, f))).collect();
    let mut fold_of = vec![0u32; units.len()];
    for &u in order {
        if let Some(Reverse((rows, f))) = heap.pop() {
            fold_of[u as usize] = f;
            heap.push(Reverse((rows + units.size(u as usize), f)));
        }
    }
    fold_of
}

/// Each unit of `order` to the part where class counts stay closest to
/// their targets (module docs); `weights` are the parts' target weights and
/// `classes` the number of class indices. Returns the part of each unit.
pub(super) fn closest_shares(
    units: &Units,
    order: &[u32],
    weights: &[u64],
    classes: usize,
) -> Vec<u32> {
    let parts = weights.len();
    let mut totals = vec![0i128; classes];
    for u in 0..units.len() {
        for &(c, rows) in units.comp(u) {
            totals[c as usize] += i128::from(rows);
        }
    }
    let all: i128 = totals.iter().sum();
    let w_all: i128 = weights.iter().map(|&w| i128::from(w)).sum();
    let mut counts = vec![vec![0i128; classes]; parts];
    let mut sizes = vec![0i128; parts];
    let mut part_of = vec![0u32; units.len()];
    for &u in order {
        let comp = units.comp(u as usize);
        let g = units.size(u as usize) as i128;
        let raise = |b: usize| {
            let w = i128::from(weights[b]);
            let class_term: i128 = comp
                .iter()
                .map(|&(c, rows)| {
                    let (gc, c) = (i128::from(rows), c as usize);
                    gc * (2 * (w_all * counts[b][c] - w * totals[c]) + w_all * gc)
                })
                .sum();
            class_term + g * (2 * (w_all * sizes[b] - w * all) + w_all * g)
        };
        // min_by_key keeps the first minimum: ties go to the lowest part.
        let best = (0..parts).min_by_key(|&b| raise(b)).unwrap_or(0);
        for &(c, rows) in comp {
            counts[best][c as usize] += i128::from(rows);
        }
        sizes[best] += g;
        part_of[u as usize] = best as u32;
    }
    part_of
}

/// Units of `order` fill parts up to `targets` rows (module docs); returns
/// the part of each unit, `targets.len()` for units left out.
pub(super) fn fill(units: &Units, order: &[u32], targets: &[usize]) -> Vec<u32> {
    let mut got = vec![0usize; targets.len()];
    let mut part_of = vec![targets.len() as u32; units.len()];
    for &u in order {
        let g = units.size(u as usize);
        let fits = |p: usize| got[p] < targets[p] && g <= 2 * (targets[p] - got[p]);
        if let Some(p) = (0..targets.len()).find(|&p| fits(p)) {
            got[p] += g;
            part_of[u as usize] = p as u32;
        }
    }
    part_of
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn deal_matches_the_methods_check() {
        // [ref, by definition] METHODS.md, stratified fold assignment:
        // labels a,a,a,a,b,b,b,c,c, 3 folds, no shuffle: a to folds 0,1,2,0;
        // b to 1,2,0; c to 1,2; sizes (3,3,3).
        let labels = [0, 0, 0, 0, 1, 1, 1, 2, 2];
        let folds = deal(&labels, 3);
        assert_eq!(folds, vec![0, 1, 2, 0, 1, 2, 0, 1, 2]);
        let sizes: Vec<usize> = (0..3)
            .map(|f| folds.iter().filter(|&&x| x == f).count())
            .collect();
        assert_eq!(sizes, vec![3, 3, 3]);
    }

    #[test]
    fn deal_sorts_classes_but_keeps_item_order_within_a_class() {
        // By hand: class 5 items 0, 2; class 1 items 1, 3, 4; two folds.
        // Class 1 first: items 1, 3, 4 to folds 0, 1, 0; then class 5:
        // items 0, 2 to folds 1, 0.
        assert_eq!(deal(&[5, 1, 5, 1, 1], 2), vec![1, 0, 0, 1, 0]);
    }

    /// Units of the given sizes, one class per unit (`classes[u]`).
    fn units_of(sizes: &[usize], classes: &[u32]) -> Units {
        let mut group = Vec::new();
        let mut class_of = Vec::new();
        for (u, &size) in sizes.iter().enumerate() {
            group.extend(std::iter::repeat_n(u as u32, size));
            class_of.extend(std::iter::repeat_n(classes[u], size));
        }
        let rows: Vec<u32> = (0..group.len() as u32).collect();
        Units::new(&rows, &group).with_classes(&class_of)
    }

    #[test]
    fn least_rows_balances_largest_first() {
        // By hand: sizes 5, 4, 3, 3, 1 placed in that order on 2 folds:
        // 5 -> 0 (tie, lowest); 4 -> 1; 3 -> 1 (4 < 5); 3 -> 0 (5 < 7);
        // 1 -> 1 (7 < 8); loads 8 and 8.
        let units = units_of(&[5, 4, 3, 3, 1], &[0; 5]);
        assert_eq!(least_rows(&units, &[0, 1, 2, 3, 4], 2), vec![0, 1, 1, 0, 1]);
    }

    #[test]
    fn closest_shares_spreads_single_class_groups_over_folds() {
        // By hand: two groups of 10 rows, class 0 and class 1, two folds of
        // equal weight. Group 0 goes to fold 0 (both empty: tie, lowest);
        // group 1 raises fold 0's row term, so it goes to fold 1.
        let units = units_of(&[10, 10], &[0, 1]);
        assert_eq!(closest_shares(&units, &[0, 1], &[1, 1], 2), vec![0, 1]);
    }

    #[test]
    fn closest_shares_pairs_classes_by_hand() {
        // By hand: groups (order of placement) A: 4 rows class 0, B: 4 rows
        // class 1, C: 4 rows class 0, D: 4 rows class 1; two folds. Targets
        // per fold: 4 of each class, 8 rows. A -> 0, B -> 1 (row term),
        // C -> 1 (fold 0 already has its class-0 target), D -> 0.
        let units = units_of(&[4, 4, 4, 4], &[0, 1, 0, 1]);
        assert_eq!(
            closest_shares(&units, &[0, 1, 2, 3], &[1, 1], 2),
            vec![0, 1, 1, 0]
        );
    }

    #[test]
    fn fill_skips_groups_that_overshoot() {
        // By hand: targets 6 and 3 rows; sizes in order 4, 10, 3, 2, 2.
        // 4 -> part 0 (4 <= 2 * 6); 10 fits neither (10 > 2 * 2, 10 > 2 * 3);
        // 3 -> part 0 (2 missing, 3 <= 4), now 7 rows; 2 -> part 1 (2 <= 6);
        // 2 -> part 1 (1 missing, 2 <= 2), now 4 rows.
        let units = units_of(&[4, 10, 3, 2, 2], &[0; 5]);
        assert_eq!(fill(&units, &[0, 1, 2, 3, 4], &[6, 3]), vec![0, 2, 0, 1, 1]);
    }
}
