//! The split type, the per-row facts that steer resampling, and errors.
//!
//! Errors carry codes (class, group) rather than names: the caller maps codes
//! to names and prefixes the plan file and table.

use serde::Serialize;

/// Whether a split belongs to the outer or the inner loop of nested
/// cross-validation; plain schemes give `Outer` splits only.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Role {
    Outer,
    Inner,
}

/// One (training rows, validation rows) pair.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Split {
    pub role: Role,
    /// For an inner split: the index (in the returned list) of its outer split.
    pub parent: Option<usize>,
    /// Repeat number, from 0 (schemes without repeats: 0).
    pub repeat: u32,
    /// Fold (or draw, or origin) number within the repeat, from 0.
    pub fold: u32,
    /// Sorted ascending; may repeat an index for bootstrap.
    pub train: Vec<u32>,
    /// Sorted ascending, no repeats.
    pub validation: Vec<u32>,
}

/// Per-row columns that steer resampling, indexed by file row.
#[derive(Clone, Copy, Debug, Default)]
pub struct RowFacts<'a> {
    /// Class code per row (classification only).
    pub class: Option<&'a [u32]>,
    /// Group code per row, when the plan names a group column.
    pub group: Option<&'a [u32]>,
    /// Order value per row, when the plan names an order column.
    pub order: Option<&'a [f64]>,
}

/// A scheme or seal that cannot be carried out on these rows. Messages are
/// lowercase fragments that say what is wrong and what to do; the caller adds
/// the plan file and table. Setting names are the plan's kebab-case keys.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum ResampleError {
    /// Anything without a variant of its own.
    #[error("{0}")]
    Impossible(String),
    #[error("the development partition has no rows; seal a smaller fraction")]
    NoRows,
    #[error("the data has no rows; add rows to the data file")]
    NoData,
    #[error(
        "rows are not sorted ascending and distinct at row {row}; pass each row once, in order"
    )]
    RowsUnsorted { row: u32 },
    #[error(
        "row {row} has no value in the {column} column ({len} values); pass one value per file row"
    )]
    FactsTooShort {
        column: &'static str,
        row: u32,
        len: usize,
    },
    #[error(
        "the order value of row {row} is not a number; fill or drop rows without an order value"
    )]
    OrderNotANumber { row: u32 },
    #[error("{what} needs a class column; use a classification target or set stratify = false")]
    NeedsClass { what: &'static str },
    #[error("{what} needs a group column; name one as group in [data] or {instead}")]
    NeedsGroup {
        what: &'static str,
        instead: &'static str,
    },
    #[error("{what} needs an order column; name one as order in [data] or {instead}")]
    NeedsOrder {
        what: &'static str,
        instead: &'static str,
    },
    /// A setting outside its range: `expected` says what is allowed.
    #[error("{key} = {value} is out of range; use {expected}")]
    OutOfRange {
        key: &'static str,
        value: String,
        expected: &'static str,
    },
    #[error(
        "{folds} folds but only {rows} rows in the development partition; use at most {rows} folds or leave-one-out"
    )]
    MoreFoldsThanRows { folds: usize, rows: usize },
    #[error(
        "{folds} folds but only {groups} groups in the development partition; use at most {groups} folds or leave-one-group-out"
    )]
    MoreFoldsThanGroups { folds: usize, groups: usize },
    /// Stratified k-fold with a class too small to reach every fold.
    #[error(
        "class code {class} has only {rows} rows in the development partition, fewer than the {folds} folds; use at most {rows} folds or set stratify = false"
    )]
    ClassTooSmall {
        class: u32,
        rows: usize,
        folds: usize,
    },
    #[error("{key} = {value} of {rows} rows rounds to {got} rows; {fix}")]
    SizeRounds {
        key: &'static str,
        value: String,
        rows: usize,
        got: usize,
        fix: &'static str,
    },
    #[error(
        "train ({train} rows) and validation ({validation} rows) together exceed the {rows} rows of the development partition; make them smaller"
    )]
    PartsTooLarge {
        train: usize,
        validation: usize,
        rows: usize,
    },
    /// Whole groups could not give a part any row (or left nothing outside
    /// it); `part` names it.
    #[error(
        "with whole groups the {part} part gets {got} of its {target} target rows (group sizes {smallest} to {largest}); {fix}"
    )]
    GroupsTooCoarse {
        part: &'static str,
        got: usize,
        target: usize,
        smallest: usize,
        largest: usize,
        fix: &'static str,
    },
    #[error(
        "sealing the latest rows by order seals {got} of the {target} target rows of {rows}, because rows sharing an order value stay together; change fraction or seal a random fraction"
    )]
    TimePointsTooCoarse {
        got: usize,
        target: usize,
        rows: usize,
    },
    #[error(
        "leave-one-out would put rows of group code {group} ({rows} rows) on both sides of a split; use leave-one-group-out"
    )]
    GroupedLeaveOneOut { group: u32, rows: usize },
    #[error(
        "{scheme} needs at least {need} rows but the development partition has {rows}; add rows"
    )]
    TooFewRows {
        scheme: &'static str,
        need: usize,
        rows: usize,
    },
    #[error(
        "leave-one-group-out needs at least 2 groups but the development partition has {groups}; add groups or use leave-one-out"
    )]
    TooFewGroups { groups: usize },
    #[error(
        "forward-chaining needs min-train + gap + validation = {needed} time points but the development partition has {points}; lower min-train, gap or validation"
    )]
    TooFewTimePoints { needed: usize, points: usize },
    #[error(
        "bootstrap draws can never leave a {unit} out of the bag: there is only one {unit}{}; add rows{}",
        if *per_class { " per class" } else { "" },
        if *per_class { " or set stratify = false" } else { "" }
    )]
    NoOutOfBag { unit: &'static str, per_class: bool },
    #[error("{draws} bootstrap draws in a row left no {unit} out of the bag; add rows")]
    OutOfBagEmpty { draws: usize, unit: &'static str },
    #[error(
        "the outer scheme of nested cannot be {scheme}; use k-fold, monte-carlo, leave-one-out, leave-one-group-out or forward-chaining"
    )]
    NestedOuter { scheme: &'static str },
    #[error("the inner scheme of nested cannot be nested; nest one level only")]
    NestedInner,
    /// The inner scheme failed inside one outer training part.
    #[error(
        "the inner scheme cannot be carried out inside the training part of outer split {outer} ({rows} rows; the smallest outer training part has {smallest}): {source}"
    )]
    Inner {
        outer: usize,
        rows: usize,
        smallest: usize,
        source: Box<ResampleError>,
    },
}

/// Rows of each class code among `rows`, in class-code order: the achieved
/// class counts of a part, for reports. Rows beyond `class` are skipped.
pub fn class_counts(rows: &[u32], class: &[u32]) -> Vec<(u32, usize)> {
    let mut counts = std::collections::BTreeMap::new();
    for &row in rows {
        if let Some(&code) = class.get(row as usize) {
            *counts.entry(code).or_insert(0) += 1;
        }
    }
    counts.into_iter().collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn class_counts_by_hand() {
        let class = [2, 0, 2, 2, 1];
        assert_eq!(class_counts(&[0, 2, 3, 4, 9], &class), vec![(1, 1), (2, 3)]);
    }
}
