//! Exact k-nearest-neighbour search for the `nearest-neighbors` learner:
//! brute force and a k-d tree behind one [`Index`].
//!
//! Invariants:
//! - Every reported distance comes from [`distance`], which sums over the
//!   features in feature order (no FMA, no reordering), so both search paths
//!   report the same bits for the same pair of rows. Rows are scanned
//!   `LANES` at a time with the same operations per lane (compile-time SIMD
//!   of the baseline target at most; Rust never contracts `a * b + c` into
//!   an FMA); those values only screen, and a row that may enter the list is
//!   re-measured with [`distance`], whose value is the one reported.
//! - Candidates are ordered by `(distance, training row position)`, a strict
//!   total order (distances are finite and non-negative). A search returns
//!   the `k` smallest candidates under that order, sorted ascending. That set
//!   is unique, so brute force and the k-d tree return identical lists, and
//!   the list for a smaller `k` is a prefix of the list for a larger one.
//! - The k-d tree skips a node only when a lower bound on the distance of
//!   every row in it is *strictly* greater than the current k-th distance.
//!   The bound is the gap from the query to the node's bounding box per
//!   axis, combined with the operations of [`distance`] in feature order. It
//!   is never larger than what [`distance`] computes for any row in the box:
//!   rounding is monotone, each gap is at most the rounded coordinate
//!   difference, and the terms are summed in the same order. So pruning
//!   never drops a row that belongs in the list, including rows tied with
//!   the k-th distance. The bound is kept as a sum (before the square root)
//!   and compared with [`screen_limit`] of the k-th distance, the margin the
//!   row screen uses, so no square root is taken per node.
//! - Query rows are searched in parallel (rayon) but each row's list depends
//!   only on that row, so results do not depend on the thread count.

use std::cmp::Ordering;
use std::collections::BinaryHeap;

use ndarray::ArrayView2;
use rayon::prelude::*;

/// How the distance between two rows is measured.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub(crate) enum Distance {
    Euclidean,
    Manhattan,
}

/// The distance between rows `a` and `b` (same length), summed in feature
/// order. The only function that computes a reported distance.
#[inline]
pub(crate) fn distance(metric: Distance, a: &[f64], b: &[f64]) -> f64 {
    let mut sum = 0.0;
    match metric {
        Distance::Euclidean => {
            for (x, y) in a.iter().zip(b) {
                let t = x - y;
                sum += t * t;
            }
            sum.sqrt()
        }
        Distance::Manhattan => {
            for (x, y) in a.iter().zip(b) {
                sum += (x - y).abs();
            }
            sum
        }
    }
}

/// What [`distance`] does to its sum last.
#[inline]
fn finish(metric: Distance, sum: f64) -> f64 {
    match metric {
        Distance::Euclidean => sum.sqrt(),
        Distance::Manhattan => sum,
    }
}

/// A sum above which [`finish`] is surely above `worst`, so the row can be
/// skipped without taking a square root. For Euclidean sums it is
/// `worst^2 (1 + 2^-30)`: with rounding of at most 2^-53 per operation, a
/// sum `S` above it has `sqrt(S) >= worst (1 + 2^-33)`, whose rounded value
/// exceeds `worst`. Where `worst^2` is not a normal number (below about
/// 1e-154, or overflowing) the margin argument fails, so nothing is skipped
/// and the exact comparison decides.
#[inline]
fn screen_limit(metric: Distance, worst: f64) -> f64 {
    match metric {
        Distance::Manhattan => worst,
        Distance::Euclidean => {
            let square = worst * worst;
            if square.is_normal() || worst == 0.0 {
                square * (1.0 + 1.0 / (1u64 << 30) as f64)
            } else {
                f64::INFINITY
            }
        }
    }
}

/// One neighbour of a query row.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Neighbor {
    pub distance: f64,
    /// Position of the row in the training part.
    pub row: u32,
}

impl Eq for Neighbor {}

impl Ord for Neighbor {
    fn cmp(&self, other: &Self) -> Ordering {
        self.distance
            .total_cmp(&other.distance)
            .then(self.row.cmp(&other.row))
    }
}

impl PartialOrd for Neighbor {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

/// The `k` best candidates seen so far (a max-heap on the order above).
struct Best {
    k: usize,
    heap: BinaryHeap<Neighbor>,
}

impl Best {
    fn new(k: usize) -> Best {
        Best {
            k,
            heap: BinaryHeap::with_capacity(k + 1),
        }
    }

    fn full(&self) -> bool {
        self.heap.len() >= self.k
    }

    /// The k-th distance, once full.
    fn worst(&self) -> f64 {
        self.heap.peek().map_or(f64::INFINITY, |n| n.distance)
    }

    #[inline]
    fn offer(&mut self, candidate: Neighbor) {
        if !self.full() {
            self.heap.push(candidate);
        } else if let Some(mut worst) = self.heap.peek_mut()
            && candidate < *worst
        {
            // Replacing the top sifts once, where pop then push sifts twice.
            *worst = candidate;
        }
    }

    fn into_sorted(self) -> Vec<Neighbor> {
        self.heap.into_sorted_vec()
    }
}

/// Which search path an [`Index`] uses.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Method {
    Brute,
    KdTree,
}

/// The search path for `rows` training rows of `dims` features when up to
/// `k` neighbours are wanted.
///
/// Rule: the k-d tree when `1 <= dims <= 8`, `rows >= max(1000, 16 * 2^dims)`
/// and `k <= rows / 16`; brute force otherwise.
///
/// Measured with `cargo bench --bench search -- search/crossover` (see
/// BENCHMARKS.md; release build, 2 cores shared with other builds, load
/// average about 3, so absolute numbers are noisy and only each cell's
/// ratio is meaningful; 2,000 Gaussian query rows against Gaussian training
/// rows, k = 10, Euclidean), milliseconds brute / tree:
///
/// | dims | 1,000 rows | 4,000 | 16,000 | 80,000 |
/// |---|---|---|---|---|
/// | 2 | 8.8 / 1.8 | 17 / 3.6 | 95 / 7.0 | 395 / 28 |
/// | 4 | 12.8 / 6.3 | 32 / 8.2 | 99 / 14 | 434 / 68 |
/// | 6 | 14.2 / 11.2 | 30 / 16 | 106 / 34 | 504 / 150 |
/// | 8 | 17.3 / 16.5 | 43 / 30 | 152 / 80 | 693 / 285 |
/// | 10 | 7.0 / 8.5 | 25 / 42 | 131 / 127 | 623 / 743 |
/// | 12 | 17.6 / 25.7 | 60 / 85 | 204 / 214 | 849 / 1718 |
/// | 16 | 20.2 / 23.9 | 51 / 100 | 174 / 365 | 1230 / 4506 |
///
/// So the tree wins from 1,000 rows at 2 to 6 features and from 4,000 at
/// 8 (a tie at 1,000); from 10 features on brute force (16 rows at a time,
/// see `LANES`, with the half-sum early exit in `scan`) wins or ties at
/// every size measured, on Gaussian data. An earlier measurement, before
/// the tree took no square root per node and brute force exited early,
/// put the 8-feature crossover at 16,000 rows; this rule follows the new
/// figures. Below 1,000 rows nothing was measured and either path takes
/// well under a millisecond per 100 queries. Data with structure (a low
/// intrinsic dimension) favours the tree more than Gaussian noise does,
/// so the rule is conservative. The limit on `k` is a guess, not
/// measured: with many neighbours the tree has to visit most leaves anyway.
pub(crate) fn choose_method(rows: usize, dims: usize, k: usize) -> Method {
    let enough_rows = rows >= (16usize << dims.min(8)).max(1000);
    if (1..=8).contains(&dims) && enough_rows && k.saturating_mul(16) <= rows {
        Method::KdTree
    } else {
        Method::Brute
    }
}

/// Rows scanned together: the distances of one query row to `LANES`
/// training rows are accumulated side by side (each lane still summing in
/// feature order), which the compiler turns into SIMD of the baseline
/// target; the lanes are independent, so the bits are those of
/// [`distance`]. 16 lanes keep 8 two-wide accumulators in flight, which hid
/// the addition latency best (35% less CPU time than 8 lanes on the
/// performance target); it also equals `LEAF`, so a leaf is one block.
const LANES: usize = 16;

/// A padding slot of a block (no training row).
const PAD: u32 = u32::MAX;

/// Training rows ready to be searched.
pub(crate) struct Index {
    metric: Distance,
    dims: usize,
    rows: usize,
    /// Rows in training order, row-major: what [`distance`] reads.
    points: Vec<f64>,
    /// Rows in blocks of `LANES`: entry `b * dims + j` holds feature `j` of
    /// the rows of block `b`. Blocks are in training order (brute force) or
    /// leaf by leaf (k-d tree), each leaf starting a new block.
    blocks: Vec<[f64; LANES]>,
    /// Training position per slot of each block, `PAD` for padding.
    slots: Vec<[u32; LANES]>,
    /// Empty for brute force.
    nodes: Vec<Node>,
    /// Per node, the bounding box of its rows: `dims` lower corners then
    /// `dims` upper corners.
    boxes: Vec<f64>,
}

#[derive(Clone, Copy, Debug)]
enum Node {
    /// Rows `order[start..end]` while building; blocks `start..end` after.
    Leaf {
        start: usize,
        end: usize,
    },
    Split {
        left: usize,
        right: usize,
    },
}

/// Rows per k-d tree leaf, at most.
const LEAF: usize = 16;

impl Index {
    /// An index over the rows of `x` (finite values, fewer than 2^32 rows).
    pub(crate) fn build(x: ArrayView2<'_, f64>, metric: Distance, method: Method) -> Index {
        let dims = x.ncols();
        let mut index = Index {
            metric,
            dims,
            rows: x.nrows(),
            points: x.rows().into_iter().flatten().copied().collect(),
            blocks: Vec::new(),
            slots: Vec::new(),
            nodes: Vec::new(),
            boxes: Vec::new(),
        };
        let mut order: Vec<usize> = (0..x.nrows()).collect();
        if method == Method::KdTree && dims > 0 && !order.is_empty() {
            let mut tree = Tree {
                x,
                nodes: Vec::new(),
                boxes: Vec::new(),
            };
            tree.node(&mut order, 0);
            (index.nodes, index.boxes) = (tree.nodes, tree.boxes);
            let mut nodes = std::mem::take(&mut index.nodes);
            for node in &mut nodes {
                if let Node::Leaf { start, end } = node {
                    let first = index.slots.len();
                    index.push_blocks(x, &order[*start..*end]);
                    (*start, *end) = (first, index.slots.len());
                }
            }
            index.nodes = nodes;
        } else {
            index.push_blocks(x, &order);
        }
        index
    }

    /// Appends the rows `rows` of `x` as blocks, the last one padded.
    fn push_blocks(&mut self, x: ArrayView2<'_, f64>, rows: &[usize]) {
        for chunk in rows.chunks(LANES) {
            let mut slots = [PAD; LANES];
            for (slot, &r) in slots.iter_mut().zip(chunk) {
                *slot = r as u32;
            }
            self.slots.push(slots);
            for j in 0..self.dims {
                let mut column = [0.0; LANES];
                for (v, &r) in column.iter_mut().zip(chunk) {
                    *v = x[[r, j]];
                }
                self.blocks.push(column);
            }
        }
    }

    fn point(&self, row: usize) -> &[f64] {
        &self.points[row * self.dims..(row + 1) * self.dims]
    }

    /// The `min(k, len)` nearest training rows of `q`, sorted by
    /// `(distance, row)`.
    pub(crate) fn query(&self, q: &[f64], k: usize) -> Vec<Neighbor> {
        let mut best = Best::new(k.min(self.rows));
        if best.k == 0 {
            return Vec::new();
        }
        if self.nodes.is_empty() {
            for b in 0..self.slots.len() {
                self.scan(q, b, &mut best);
            }
        } else {
            self.descend(0, q, 0.0, &mut best);
        }
        best.into_sorted()
    }

    /// [`Index::query`] for every row of `q`, in row order.
    pub(crate) fn query_rows(&self, q: ArrayView2<'_, f64>, k: usize) -> Vec<Vec<Neighbor>> {
        (0..q.nrows())
            .into_par_iter()
            .map(|r| {
                let row: Vec<f64> = q.row(r).to_vec();
                self.query(&row, k)
            })
            .collect()
    }

    /// Offers the rows of block `b`. The block's sums are a screen only: a
    /// row that might enter the list has its distance computed by
    /// [`distance`] (the same operations, so the same bits) and that value
    /// is offered. With a full list, the first half of the features is
    /// summed first and the block is dropped when every lane is already
    /// above the limit: the terms are never negative and rounding is
    /// monotone, so a partial sum never exceeds the whole sum.
    fn scan(&self, q: &[f64], b: usize, best: &mut Best) {
        let limit = if best.full() {
            screen_limit(self.metric, best.worst())
        } else {
            f64::INFINITY
        };
        let half = if limit.is_finite() { self.dims / 2 } else { 0 };
        let mut sums = [0.0; LANES];
        self.accumulate(q, b, 0..half, &mut sums);
        if half > 0 && sums.iter().all(|&s| s > limit) {
            return;
        }
        self.accumulate(q, b, half..self.dims, &mut sums);
        for (l, &row) in self.slots[b].iter().enumerate() {
            if row == PAD || sums[l] > limit {
                continue;
            }
            let exact = distance(self.metric, q, self.point(row as usize));
            debug_assert_eq!(exact.to_bits(), finish(self.metric, sums[l]).to_bits());
            best.offer(Neighbor {
                distance: exact,
                row,
            });
        }
    }

    /// The sums of [`distance`] (before its square root) from `q` to the
    /// `LANES` slots of block `b`, each lane with the same operations in the
    /// same order.
    #[cfg(test)]
    fn block_sums(&self, q: &[f64], b: usize) -> [f64; LANES] {
        let mut sum = [0.0; LANES];
        self.accumulate(q, b, 0..self.dims, &mut sum);
        sum
    }

    /// Adds the terms of `features` (in order) from `q` to the `LANES`
    /// slots of block `b` into `sum`.
    #[inline]
    fn accumulate(
        &self,
        q: &[f64],
        b: usize,
        features: std::ops::Range<usize>,
        sum: &mut [f64; LANES],
    ) {
        let columns = &self.blocks[b * self.dims..(b + 1) * self.dims];
        let (q, columns) = (&q[features.clone()], &columns[features]);
        match self.metric {
            Distance::Euclidean => {
                for (x, column) in q.iter().zip(columns) {
                    for l in 0..LANES {
                        let t = x - column[l];
                        sum[l] += t * t;
                    }
                }
            }
            Distance::Manhattan => {
                for (x, column) in q.iter().zip(columns) {
                    for l in 0..LANES {
                        sum[l] += (x - column[l]).abs();
                    }
                }
            }
        }
    }

    /// A lower bound on the sum of [`distance`] (before its square root)
    /// from `q` to every row of `node`: the gap to the node's bounding box
    /// per axis (0 inside), combined with the operations of [`distance`] in
    /// feature order. The gap is `max(l - x, x - h, 0)`, the same value as
    /// the case analysis (`l <= h`), without branches.
    fn box_bound(&self, node: usize, q: &[f64]) -> f64 {
        let corners = &self.boxes[node * 2 * self.dims..(node + 1) * 2 * self.dims];
        let (lo, hi) = corners.split_at(self.dims);
        let mut sum = 0.0;
        let gaps = q
            .iter()
            .zip(lo)
            .zip(hi)
            .map(|((x, l), h)| (l - x).max(x - h).max(0.0));
        match self.metric {
            Distance::Euclidean => gaps.for_each(|gap| sum += gap * gap),
            Distance::Manhattan => gaps.for_each(|gap| sum += gap),
        }
        sum
    }

    /// Searches `node`, whose rows all have [`distance`] sums of at least
    /// `bound` from `q`, nearer child first. Skips it only when the bound
    /// is above [`screen_limit`] of the current k-th distance, which makes
    /// every row's distance strictly greater than it (the screen's own
    /// argument); near the limit the node is searched, which is only slower.
    fn descend(&self, node: usize, q: &[f64], bound: f64, best: &mut Best) {
        if best.full() && bound > screen_limit(self.metric, best.worst()) {
            return;
        }
        match self.nodes[node] {
            Node::Leaf { start, end } => {
                for b in start..end {
                    self.scan(q, b, best);
                }
            }
            Node::Split { left, right } => {
                let (bl, br) = (self.box_bound(left, q), self.box_bound(right, q));
                if bl <= br {
                    self.descend(left, q, bl, best);
                    self.descend(right, q, br, best);
                } else {
                    self.descend(right, q, br, best);
                    self.descend(left, q, bl, best);
                }
            }
        }
    }
}

/// A k-d tree being built over the rows of `x`.
struct Tree<'a> {
    x: ArrayView2<'a, f64>,
    nodes: Vec<Node>,
    boxes: Vec<f64>,
}

impl Tree<'_> {
    /// Builds the subtree over `order` (training positions; `offset` is
    /// where the slice starts in the final row order) and returns its node
    /// index. Splits at the median of the axis with the largest spread
    /// (ties: the lower axis), ordering rows by `(value, position)` so the
    /// split is unique; stops at `LEAF` rows or when all rows are equal.
    fn node(&mut self, order: &mut [usize], offset: usize) -> usize {
        let id = self.nodes.len();
        self.nodes.push(Node::Leaf {
            start: offset,
            end: offset + order.len(),
        });
        let (lo, hi) = bounding_box(self.x, order);
        let axis = widest_axis(&lo, &hi);
        self.boxes.extend(lo);
        self.boxes.extend(hi);
        let Some(axis) = axis.filter(|_| order.len() > LEAF) else {
            return id;
        };
        let x = self.x;
        let mid = order.len() / 2;
        order.select_nth_unstable_by(mid, |&a, &b| {
            x[[a, axis]].total_cmp(&x[[b, axis]]).then(a.cmp(&b))
        });
        let (low, high) = order.split_at_mut(mid);
        let left = self.node(low, offset);
        let right = self.node(high, offset + mid);
        self.nodes[id] = Node::Split { left, right };
        id
    }
}

/// The per-axis minimum and maximum over the rows `order` of `x`.
fn bounding_box(x: ArrayView2<'_, f64>, order: &[usize]) -> (Vec<f64>, Vec<f64>) {
    let mut lo = vec![f64::INFINITY; x.ncols()];
    let mut hi = vec![f64::NEG_INFINITY; x.ncols()];
    for &r in order {
        for (j, v) in x.row(r).iter().enumerate() {
            lo[j] = lo[j].min(*v);
            hi[j] = hi[j].max(*v);
        }
    }
    (lo, hi)
}

/// The axis with the largest `hi - lo` (ties: the lower axis), `None` when
/// every axis is constant (all rows equal: nothing to split).
fn widest_axis(lo: &[f64], hi: &[f64]) -> Option<usize> {
    let mut best: Option<(usize, f64)> = None;
    for (axis, (l, h)) in lo.iter().zip(hi).enumerate() {
        let spread = h - l;
        if spread > 0.0 && best.is_none_or(|(_, s)| spread > s) {
            best = Some((axis, spread));
        }
    }
    best.map(|(axis, _)| axis)
}

#[cfg(test)]
mod tests {
    use ndarray::Array2;
    use rand_chacha::ChaCha8Rng;
    use rand_core::{Rng, SeedableRng};

    use super::*;

    /// Every row sorted by `(distance, row)`: the definition, by exhaustion.
    fn by_definition(x: &Array2<f64>, q: &[f64], k: usize, metric: Distance) -> Vec<Neighbor> {
        let mut all: Vec<Neighbor> = (0..x.nrows())
            .map(|r| Neighbor {
                distance: distance(metric, q, x.row(r).as_slice().unwrap()),
                row: r as u32,
            })
            .collect();
        all.sort();
        all.truncate(k);
        all
    }

    fn grid_data(rows: usize, dims: usize, levels: u64, seed: u64) -> Array2<f64> {
        // Small integer coordinates: many exact distance ties and duplicate rows.
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        Array2::from_shape_fn((rows, dims), |_| (rng.next_u64() % levels) as f64)
    }

    #[test]
    fn both_paths_match_the_definition_with_many_ties() {
        for (dims, levels) in [(1, 3), (2, 4), (3, 3), (5, 2), (8, 3)] {
            let x = grid_data(700, dims, levels, dims as u64);
            let q = grid_data(30, dims, levels + 1, 99);
            for metric in [Distance::Euclidean, Distance::Manhattan] {
                let brute = Index::build(x.view(), metric, Method::Brute);
                let tree = Index::build(x.view(), metric, Method::KdTree);
                for k in [1, 2, 7, 40, 700, 900] {
                    for r in 0..q.nrows() {
                        let row = q.row(r).to_vec();
                        let want = by_definition(&x, &row, k, metric);
                        assert_eq!(brute.query(&row, k), want, "brute d={dims} k={k}");
                        assert_eq!(tree.query(&row, k), want, "tree d={dims} k={k}");
                    }
                }
            }
        }
    }

    #[test]
    fn paths_agree_on_real_valued_data_and_rows_are_independent_of_threads() {
        let mut rng = ChaCha8Rng::seed_from_u64(5);
        let mut unit = || (rng.next_u64() >> 11) as f64 / (1u64 << 53) as f64;
        let x = Array2::from_shape_fn((3000, 6), |_| unit() * 10.0 - 5.0);
        let q = Array2::from_shape_fn((200, 6), |_| unit() * 12.0 - 6.0);
        let brute = Index::build(x.view(), Distance::Euclidean, Method::Brute);
        let tree = Index::build(x.view(), Distance::Euclidean, Method::KdTree);
        let all = tree.query_rows(q.view(), 9);
        let one_thread = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap();
        let serial = one_thread.install(|| tree.query_rows(q.view(), 9));
        assert_eq!(all, serial);
        assert_eq!(brute.query_rows(q.view(), 9), all);
    }

    #[test]
    fn block_screen_gives_the_bits_of_distance() {
        let mut rng = ChaCha8Rng::seed_from_u64(8);
        let mut unit = || (rng.next_u64() >> 11) as f64 / (1u64 << 53) as f64;
        let x = Array2::from_shape_fn((37, 5), |_| unit() * 1e3 - 3e2);
        let q: Vec<f64> = (0..5).map(|_| unit() * 1e3).collect();
        for metric in [Distance::Euclidean, Distance::Manhattan] {
            let index = Index::build(x.view(), metric, Method::Brute);
            for b in 0..index.slots.len() {
                let lanes = index.block_sums(&q, b).map(|v| finish(metric, v));
                for (l, &row) in index.slots[b]
                    .iter()
                    .enumerate()
                    .filter(|(_, r)| **r != PAD)
                {
                    let want = distance(metric, &q, x.row(row as usize).as_slice().unwrap());
                    assert_eq!(lanes[l].to_bits(), want.to_bits());
                }
            }
        }
    }

    #[test]
    fn the_square_root_screen_never_skips_a_row_that_could_enter() {
        // Any sum above the limit must have a square root above `worst`.
        let mut rng = ChaCha8Rng::seed_from_u64(21);
        for _ in 0..20_000 {
            let exponent = (rng.next_u64() % 600) as i32 - 300;
            let worst =
                (1.0 + (rng.next_u64() >> 11) as f64 / (1u64 << 53) as f64) * 2f64.powi(exponent);
            let limit = screen_limit(Distance::Euclidean, worst);
            let mut sum = limit.next_up();
            for _ in 0..4 {
                assert!(limit.is_infinite() || sum.sqrt() > worst, "worst {worst:e}");
                sum = sum.next_up();
            }
        }
        assert_eq!(screen_limit(Distance::Euclidean, 1e-160), f64::INFINITY);
        assert_eq!(screen_limit(Distance::Euclidean, 0.0), 0.0);
    }

    #[test]
    fn identical_rows_and_no_features_fall_back_to_row_order() {
        let x = Array2::from_elem((50, 3), 1.5);
        let tree = Index::build(x.view(), Distance::Euclidean, Method::KdTree);
        let got: Vec<u32> = tree
            .query(&[0.0, 0.0, 0.0], 4)
            .iter()
            .map(|n| n.row)
            .collect();
        assert_eq!(got, vec![0, 1, 2, 3]);
        let x = Array2::<f64>::zeros((5, 0));
        let index = Index::build(x.view(), Distance::Manhattan, Method::KdTree);
        let got: Vec<u32> = index.query(&[], 2).iter().map(|n| n.row).collect();
        assert_eq!(got, vec![0, 1]);
    }

    #[test]
    fn distance_is_summed_in_feature_order() {
        // sqrt(3^2 + 4^2) = 5 and |3| + |4| = 7, worked by hand.
        assert_eq!(
            distance(Distance::Euclidean, &[0.0, 0.0], &[3.0, -4.0]),
            5.0
        );
        assert_eq!(
            distance(Distance::Manhattan, &[0.0, 0.0], &[3.0, -4.0]),
            7.0
        );
        // Feature order matters: with round-half-to-even (IEEE 754, common
        // practice) (1e16 + 1) + 1 rounds to 1e16 at each step, whereas
        // 1 + 1 + 1e16 is exactly 1e16 + 2.
        let d = distance(Distance::Manhattan, &[1e16, 1.0, 1.0], &[0.0, 0.0, 0.0]);
        assert_eq!(d, 1e16);
        assert_ne!(d, 1e16 + 2.0);
    }
}
