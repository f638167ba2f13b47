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

use std::cmp::Ordering;

use ndarray::ArrayView2;

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
        let placeholder = Node {
            level: 0,
            value: NodeValue::Mean(0.0),
            split: None,
        };
        let mut nodes = vec![placeholder.clone()];
        let mut stack = vec![((0..x.nrows()).collect::<Vec<usize>>(), 0_usize, 0_usize)];
        while let Some((rows, level, at)) = stack.pop() {
            let value = node_value(&rows, y);
            let best = if level < max_depth {
                best_split(x, y, &rows, min_leaf)
            } else {
                None
            };
            let split = best.map(|c| {
                let (left_rows, right_rows): (Vec<usize>, Vec<usize>) = rows
                    .iter()
                    .partition(|&&r| x[[r, c.feature]] <= c.threshold);
                let (left, right) = (nodes.len(), nodes.len() + 1);
                nodes.push(placeholder.clone());
                nodes.push(placeholder.clone());
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

fn best_split(
    x: ArrayView2<'_, f64>,
    y: Response<'_>,
    rows: &[usize],
    min_leaf: usize,
) -> Option<Candidate> {
    if rows.len() < 2 * min_leaf {
        return None;
    }
    let scan = Scan::new(y, rows)?;
    let mut best: Option<Candidate> = None;
    let mut order = rows.to_vec();
    for feature in 0..x.ncols() {
        order.sort_by(|&a, &b| x[[a, feature]].total_cmp(&x[[b, feature]]).then(a.cmp(&b)));
        let found = scan.run(x, feature, &order, min_leaf);
        if let Some(c) = found
            && best.as_ref().is_none_or(|b| c.score.beats(b.score))
        {
            best = Some(c);
        }
    }
    best
}

/// The node-level quantities a scan over one feature needs.
enum Scan<'a> {
    Classes {
        y: &'a [u32],
        counts: Vec<u64>,
        parent: Score,
    },
    Values {
        centred: Vec<(usize, f64)>,
        total: f64,
        parent: Score,
    },
}

impl<'a> Scan<'a> {
    /// `None` when the node cannot improve (pure, or a constant target).
    fn new(y: Response<'a>, rows: &[usize]) -> Option<Scan<'a>> {
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
                let centred: Vec<(usize, f64)> = rows.iter().map(|&r| (r, v[r] - m)).collect();
                let mut total = 0.0;
                for &(_, c) in &centred {
                    total += c;
                }
                Some(Scan::Values {
                    centred,
                    total,
                    parent: Score::Real(total * total / n as f64),
                })
            }
        }
    }

    /// The best threshold on `feature` (rows in `order`, sorted by value),
    /// if any strictly improves on the node.
    fn run(
        &self,
        x: ArrayView2<'_, f64>,
        feature: usize,
        order: &[usize],
        min_leaf: usize,
    ) -> Option<Candidate> {
        let n = order.len();
        let mut best: Option<Candidate> = None;
        let mut state = self.start();
        for i in 0..n - 1 {
            state.add(self, order[i]);
            let (lo, hi) = (x[[order[i], feature]], x[[order[i + 1], feature]]);
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
    fn add(&mut self, scan: &Scan<'_>, row: usize) {
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
            (Running::Values { left_sum }, Scan::Values { centred, .. }) => {
                let at = centred.partition_point(|&(r, _)| r < row);
                *left_sum += centred[at].1;
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
