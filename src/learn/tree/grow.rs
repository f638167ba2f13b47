//! Growing one CART tree: split search, node predictions, truncated walks.
//!
//! A node holds the prediction it would make as a leaf, so one tree grown to
//! the largest depth answers every shallower depth: a walk simply stops at
//! that depth. The split chosen at a node depends only on the node's rows and
//! `min-leaf`, never on the depth limit, which is why truncation equals
//! growing the shallower tree alone.
//!
//! Rules (all deterministic):
//! - Candidate thresholds are midpoints between consecutive distinct values of
//!   a feature among the node's rows (`f64::midpoint`; if rounding puts it on
//!   the upper value, the lower value is used, so the partition is as meant).
//!   A row goes left when `x <= threshold`. Both children need `min-leaf` rows.
//! - Classification minimises the size-weighted Gini impurity of the children,
//!   `n_L G_L + n_R G_R` with `G = 1 - sum_k p_k^2`; equivalently it maximises
//!   `sum_k c_Lk^2 / n_L + sum_k c_Rk^2 / n_R` over class counts `c`, which we
//!   compare exactly as fractions of integers (`u128`), so equal splits tie
//!   exactly. Regression minimises the children's summed squared error,
//!   equivalently maximises `S_L^2 / n_L + S_R^2 / n_R` over sums of the
//!   node-centred targets (floats, in a fixed order).
//! - A split must strictly improve on the node itself; a pure node or one with
//!   a constant target stays a leaf.
//! - Ties between equally good splits go to the lower feature index, then the
//!   lower threshold (features and thresholds are scanned in ascending order
//!   and only a strictly better candidate replaces the best so far).
//! - Rows keep their training order inside every node, so node means and
//!   counts are summed in the same order however the tree is grown.
//!
//! Speed: each feature is sorted once, at the root, by `(value, row)`; a
//! split then partitions every feature's sorted rows stably into the two
//! children, which leaves each child's rows in `(value, row)` order, the
//! order a fresh sort would give (the order is total, so it is unique).
//! Growing a level costs a linear pass per feature instead of a sort; the
//! scans, and so the tree, are the same bit for bit (a test grows trees both
//! ways). On nodes of at least [`PARALLEL_ROWS`] rows the features are
//! scanned and partitioned in parallel; each feature's result depends only
//! on its own rows and the best is still picked in feature order.

use std::cmp::Ordering;
use std::ops::Range;

use ndarray::ArrayView2;
use rayon::prelude::*;

/// The training response.
#[derive(Clone, Copy)]
pub(super) enum Response<'a> {
    Classes { y: &'a [u32], classes: usize },
    Values(&'a [f64]),
}

/// What a node predicts if the walk stops there.
#[derive(Clone, Debug, PartialEq)]
pub(super) enum NodeValue {
    /// Majority class (ties to the lower class) and class shares.
    Classes { label: u32, shares: Vec<f64> },
    /// Mean target.
    Mean(f64),
}

#[derive(Clone, Debug, PartialEq)]
pub(super) struct Split {
    pub feature: usize,
    pub threshold: f64,
    pub left: usize,
    pub right: usize,
}

#[derive(Clone, Debug, PartialEq)]
pub(super) struct Node {
    pub level: usize,
    pub value: NodeValue,
    pub split: Option<Split>,
}

/// A grown tree; `nodes[0]` is the root.
#[derive(Clone, Debug, PartialEq)]
pub(super) struct Grown {
    pub nodes: Vec<Node>,
}

/// A split's quality; larger is better.
#[derive(Clone, Copy, Debug)]
enum Score {
    /// `num / den`, exact.
    Ratio(u128, u128),
    Real(f64),
}

impl Score {
    fn beats(self, other: Score) -> bool {
        match (self, other) {
            (Score::Ratio(a, b), Score::Ratio(c, d)) => a * d > c * b,
            (Score::Real(a), Score::Real(b)) => a > b,
            _ => false,
        }
    }
}

struct Candidate {
    feature: usize,
    threshold: f64,
    score: Score,
}

impl Grown {
    /// Grow depth-first to `max_depth` with leaves of at least `min_leaf` rows.
    pub fn new(
        x: ArrayView2<'_, f64>,
        y: Response<'_>,
        max_depth: usize,
        min_leaf: usize,
    ) -> Grown {
        let mut sorted = Sorted::new(x);
        let mut nodes = vec![placeholder()];
        let mut stack = vec![(0..x.nrows(), 0_usize, 0_usize)];
        while let Some((range, level, at)) = stack.pop() {
            let value = node_value(&sorted.members[range.clone()], y);
            let best = if level < max_depth {
                sorted.best_split(y, range.clone(), min_leaf)
            } else {
                None
            };
            let split = best.map(|c| {
                let n_left = sorted.partition(x, range.clone(), c.feature, c.threshold);
                let (left, right) = (nodes.len(), nodes.len() + 1);
                nodes.push(placeholder());
                nodes.push(placeholder());
                let mid = range.start + n_left;
                stack.push((mid..range.end, level + 1, right));
                stack.push((range.start..mid, level + 1, left));
                Split {
                    feature: c.feature,
                    threshold: c.threshold,
                    left,
                    right,
                }
            });
            nodes[at] = Node {
                level,
                value,
                split,
            };
        }
        Grown { nodes }
    }

    /// The prediction for `row` of the tree truncated at `depth`.
    pub fn walk(&self, row: ndarray::ArrayView1<'_, f64>, depth: usize) -> &NodeValue {
        let mut node = &self.nodes[0];
        while let Some(split) = node.split.as_ref().filter(|_| node.level < depth) {
            let next = if row[split.feature] <= split.threshold {
                split.left
            } else {
                split.right
            };
            node = &self.nodes[next];
        }
        &node.value
    }
}

fn node_value(rows: &[usize], y: Response<'_>) -> NodeValue {
    match y {
        Response::Classes { y, classes } => {
            let counts = class_counts(rows, y, classes);
            let mut label = 0;
            for (k, &c) in counts.iter().enumerate() {
                if c > counts[label] {
                    label = k;
                }
            }
            let n = rows.len() as f64;
            NodeValue::Classes {
                label: label as u32,
                shares: counts.iter().map(|&c| c as f64 / n).collect(),
            }
        }
        Response::Values(y) => NodeValue::Mean(mean(rows, y)),
    }
}

fn class_counts(rows: &[usize], y: &[u32], classes: usize) -> Vec<u64> {
    let mut counts = vec![0_u64; classes];
    for &r in rows {
        counts[y[r] as usize] += 1;
    }
    counts
}

fn mean(rows: &[usize], y: &[f64]) -> f64 {
    let mut sum = 0.0;
    for &r in rows {
        sum += y[r];
    }
    sum / rows.len() as f64
}

fn placeholder() -> Node {
    Node {
        level: 0,
        value: NodeValue::Mean(0.0),
        split: None,
    }
}

/// Nodes at least this large scan and partition their features in
/// parallel; below it the work is too small to share.
const PARALLEL_ROWS: usize = 1 << 14;

/// One feature's rows sorted by `(value, row)` within every node's range.
struct Column {
    values: Vec<f64>,
    rows: Vec<usize>,
}

/// The training rows as the grower keeps them: a node is a range of
/// positions, the same range in `members` (rows in training order) and in
/// every column (rows in `(value, row)` order).
struct Sorted {
    members: Vec<usize>,
    columns: Vec<Column>,
    /// Per training row, its target centred on the current node's mean
    /// (regression scans; written by [`Scan::new`]).
    centred: Vec<f64>,
    /// Per training row, whether it goes left at the split being made
    /// (written by [`Sorted::partition`] for the node's rows).
    left: Vec<bool>,
}

impl Sorted {
    fn new(x: ArrayView2<'_, f64>) -> Sorted {
        let sort = |feature: usize| {
            let mut rows: Vec<usize> = (0..x.nrows()).collect();
            rows.sort_by(|&a, &b| x[[a, feature]].total_cmp(&x[[b, feature]]).then(a.cmp(&b)));
            let values = rows.iter().map(|&r| x[[r, feature]]).collect();
            Column { values, rows }
        };
        let columns = if x.nrows() >= PARALLEL_ROWS {
            (0..x.ncols()).into_par_iter().map(sort).collect()
        } else {
            (0..x.ncols()).map(sort).collect()
        };
        Sorted {
            members: (0..x.nrows()).collect(),
            columns,
            centred: vec![0.0; x.nrows()],
            left: vec![false; x.nrows()],
        }
    }

    /// The best split of the node `range`, features in ascending order.
    fn best_split(
        &mut self,
        y: Response<'_>,
        range: Range<usize>,
        min_leaf: usize,
    ) -> Option<Candidate> {
        if range.len() < 2 * min_leaf {
            return None;
        }
        let scan = Scan::new(y, &self.members[range.clone()], &mut self.centred)?;
        let centred = &self.centred;
        let run = |(feature, c): (usize, &Column)| {
            let (values, rows) = (&c.values[range.clone()], &c.rows[range.clone()]);
            scan.run(feature, values, rows, centred, min_leaf)
        };
        let found: Vec<Option<Candidate>> = if range.len() >= PARALLEL_ROWS {
            self.columns.par_iter().enumerate().map(run).collect()
        } else {
            self.columns.iter().enumerate().map(run).collect()
        };
        let mut best: Option<Candidate> = None;
        for c in found.into_iter().flatten() {
            if best.as_ref().is_none_or(|b| c.score.beats(b.score)) {
                best = Some(c);
            }
        }
        best
    }

    /// Splits the node `range` (rows with `x <= threshold` on `feature` go
    /// left), stably in `members` and every column; returns the left count.
    fn partition(
        &mut self,
        x: ArrayView2<'_, f64>,
        range: Range<usize>,
        feature: usize,
        threshold: f64,
    ) -> usize {
        for &r in &self.members[range.clone()] {
            self.left[r] = x[[r, feature]] <= threshold;
        }
        let flags = &self.left;
        let goes_left = |r: usize| flags[r];
        let n_left = stable_partition(&mut self.members[range.clone()], &mut [], goes_left);
        let part = |c: &mut Column| {
            let (rows, values) = (&mut c.rows[range.clone()], &mut c.values[range.clone()]);
            stable_partition(rows, values, goes_left);
        };
        if range.len() >= PARALLEL_ROWS {
            self.columns.par_iter_mut().for_each(part);
        } else {
            self.columns.iter_mut().for_each(part);
        }
        n_left
    }
}

/// Moves the rows for which `left` holds to the front, keeping the order on
/// both sides; `values` (empty, or one per row) moves along. Returns the
/// number on the left.
fn stable_partition(rows: &mut [usize], values: &mut [f64], left: impl Fn(usize) -> bool) -> usize {
    let with_values = !values.is_empty();
    let mut right: Vec<(usize, f64)> = Vec::new();
    let mut n_left = 0;
    for i in 0..rows.len() {
        let (r, v) = (rows[i], if with_values { values[i] } else { 0.0 });
        if left(r) {
            rows[n_left] = r;
            if with_values {
                values[n_left] = v;
            }
            n_left += 1;
        } else {
            right.push((r, v));
        }
    }
    for (i, (r, v)) in right.into_iter().enumerate() {
        rows[n_left + i] = r;
        if with_values {
            values[n_left + i] = v;
        }
    }
    n_left
}

/// The tree grown by sorting each node's rows afresh on every feature, the
/// way it was grown before [`Sorted`]: the reference the tests compare
/// [`Grown::new`] with.
#[cfg(test)]
pub(super) fn grown_by_sorting(
    x: ArrayView2<'_, f64>,
    y: Response<'_>,
    max_depth: usize,
    min_leaf: usize,
) -> Grown {
    let mut nodes = vec![placeholder()];
    let mut centred = vec![0.0; x.nrows()];
    let mut stack = vec![((0..x.nrows()).collect::<Vec<usize>>(), 0_usize, 0_usize)];
    while let Some((rows, level, at)) = stack.pop() {
        let value = node_value(&rows, y);
        let mut best: Option<Candidate> = None;
        let scan = (level < max_depth && rows.len() >= 2 * min_leaf)
            .then(|| Scan::new(y, &rows, &mut centred))
            .flatten();
        for feature in 0..x.ncols() {
            let Some(scan) = scan.as_ref() else { break };
            let mut order = rows.clone();
            order.sort_by(|&a, &b| x[[a, feature]].total_cmp(&x[[b, feature]]).then(a.cmp(&b)));
            let values: Vec<f64> = order.iter().map(|&r| x[[r, feature]]).collect();
            let found = scan.run(feature, &values, &order, &centred, min_leaf);
            if let Some(c) = found
                && best.as_ref().is_none_or(|b| c.score.beats(b.score))
            {
                best = Some(c);
            }
        }
        let split = best.map(|c| {
            let (left_rows, right_rows): (Vec<usize>, Vec<usize>) = rows
                .iter()
                .partition(|&&r| x[[r, c.feature]] <= c.threshold);
            let (left, right) = (nodes.len(), nodes.len() + 1);
            nodes.push(placeholder());
            nodes.push(placeholder());
            stack.push((right_rows, level + 1, right));
            stack.push((left_rows, level + 1, left));
            Split {
                feature: c.feature,
                threshold: c.threshold,
                left,
                right,
            }
        });
        nodes[at] = Node {
            level,
            value,
            split,
        };
    }
    Grown { nodes }
}

/// The node-level quantities a scan over one feature needs.
enum Scan<'a> {
    Classes {
        y: &'a [u32],
        counts: Vec<u64>,
        parent: Score,
    },
    Values {
        total: f64,
        parent: Score,
    },
}

impl<'a> Scan<'a> {
    /// `None` when the node cannot improve (pure, or a constant target).
    /// For regression, writes each row's target centred on the node mean
    /// into `centred` (indexed by training row).
    fn new(y: Response<'a>, rows: &[usize], centred: &mut [f64]) -> Option<Scan<'a>> {
        let n = rows.len() as u128;
        match y {
            Response::Classes { y, classes } => {
                let counts = class_counts(rows, y, classes);
                if counts.iter().filter(|&&c| c > 0).count() < 2 {
                    return None;
                }
                let squares: u128 = counts.iter().map(|&c| u128::from(c) * u128::from(c)).sum();
                Some(Scan::Classes {
                    y,
                    counts,
                    parent: Score::Ratio(squares, n),
                })
            }
            Response::Values(v) => {
                let first = v[rows[0]];
                if rows.iter().all(|&r| v[r] == first) {
                    return None;
                }
                let m = mean(rows, v);
                let mut total = 0.0;
                for &r in rows {
                    let c = v[r] - m;
                    centred[r] = c;
                    total += c;
                }
                Some(Scan::Values {
                    total,
                    parent: Score::Real(total * total / n as f64),
                })
            }
        }
    }

    /// The best threshold on `feature` (the node's rows in `rows` with their
    /// values in `values`, sorted by `(value, row)`), if any strictly
    /// improves on the node.
    fn run(
        &self,
        feature: usize,
        values: &[f64],
        rows: &[usize],
        centred: &[f64],
        min_leaf: usize,
    ) -> Option<Candidate> {
        let n = rows.len();
        let mut best: Option<Candidate> = None;
        let mut state = self.start();
        for i in 0..n - 1 {
            state.add(self, rows[i], centred);
            let (lo, hi) = (values[i], values[i + 1]);
            let n_left = i + 1;
            if n_left < min_leaf
                || n - n_left < min_leaf
                || lo.partial_cmp(&hi) != Some(Ordering::Less)
            {
                continue;
            }
            let score = state.score(self, n_left, n - n_left);
            let improves = score.beats(self.parent());
            if improves && best.as_ref().is_none_or(|b| score.beats(b.score)) {
                best = Some(Candidate {
                    feature,
                    threshold: threshold(lo, hi),
                    score,
                });
            }
        }
        best
    }

    fn parent(&self) -> Score {
        match self {
            Scan::Classes { parent, .. } | Scan::Values { parent, .. } => *parent,
        }
    }

    fn start(&self) -> Running {
        match self {
            Scan::Classes { counts, .. } => Running::Classes {
                left: vec![0; counts.len()],
                right: counts.clone(),
                left_squares: 0,
                right_squares: counts.iter().map(|&c| u128::from(c) * u128::from(c)).sum(),
            },
            Scan::Values { .. } => Running::Values { left_sum: 0.0 },
        }
    }
}

/// Running sums of the left part during a scan.
enum Running {
    Classes {
        left: Vec<u64>,
        right: Vec<u64>,
        left_squares: u128,
        right_squares: u128,
    },
    Values {
        left_sum: f64,
    },
}

impl Running {
    /// Move `row` from the right part to the left.
    fn add(&mut self, scan: &Scan<'_>, row: usize, centred: &[f64]) {
        match (self, scan) {
            (
                Running::Classes {
                    left,
                    right,
                    left_squares,
                    right_squares,
                },
                Scan::Classes { y, .. },
            ) => {
                let k = y[row] as usize;
                // (c + 1)^2 - c^2 = 2c + 1 and c^2 - (c - 1)^2 = 2c - 1.
                *left_squares += 2 * u128::from(left[k]) + 1;
                *right_squares -= 2 * u128::from(right[k]) - 1;
                left[k] += 1;
                right[k] -= 1;
            }
            (Running::Values { left_sum }, Scan::Values { .. }) => {
                *left_sum += centred[row];
            }
            _ => {}
        }
    }

    fn score(&self, scan: &Scan<'_>, n_left: usize, n_right: usize) -> Score {
        let (nl, nr) = (n_left as u128, n_right as u128);
        match (self, scan) {
            (
                Running::Classes {
                    left_squares,
                    right_squares,
                    ..
                },
                _,
            ) => Score::Ratio(nr * left_squares + nl * right_squares, nl * nr),
            (Running::Values { left_sum }, Scan::Values { total, .. }) => {
                let right_sum = total - left_sum;
                Score::Real(
                    left_sum * left_sum / n_left as f64 + right_sum * right_sum / n_right as f64,
                )
            }
            _ => Score::Real(f64::NEG_INFINITY),
        }
    }
}

/// The midpoint of `lo < hi`, or `lo` when rounding lands it on `hi`.
fn threshold(lo: f64, hi: f64) -> f64 {
    let mid = lo.midpoint(hi);
    if mid < hi { mid } else { lo }
}
