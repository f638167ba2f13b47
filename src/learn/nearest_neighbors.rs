//! The `nearest-neighbors` learner (classification and regression): the `k`
//! training rows nearest to a query row vote on its class or average their
//! targets.
//!
//! - Search is exact (brute force or a k-d tree, see
//!   `neighbor_search::choose_method` for the rule and its measurement);
//!   neighbours are ordered by `(distance, training row position)`, so equal
//!   distances break by the lower row position.
//! - `vote = "equal"`: every neighbour weighs 1. `vote = "inverse-distance"`:
//!   a neighbour weighs `1 / d`, computed as `d_1 / d` with `d_1` the
//!   nearest distance (the same shares, without overflow for tiny `d`). When
//!   any of the `k` neighbours is at distance 0, only the zero-distance
//!   neighbours vote, equally (1 / 0 has no value; they are the exact
//!   matches).
//! - Classification: the probabilities are the (weighted) vote shares; the
//!   class with the largest share wins; ties go to the class of the nearest
//!   tied neighbour (smallest distance), then to the lower class code.
//!   Regression: the (weighted) mean of the neighbours' targets, summed in
//!   neighbour order.
//! - `k` larger than the training part: all training rows vote and the note
//!   says so (not an error).
//! - A family is served by one search per distance with its largest `k`:
//!   the list for a smaller `k` is a prefix of that list. Per query row one
//!   walk along the list (per vote) adds the voters in neighbour order and
//!   records each `k` when its voters are in; those sums are exactly what a
//!   lone candidate adds, so the results are identical bit for bit.
//! - Simplicity key: `[k]` (more neighbours smooth more: larger `k` is
//!   simpler).

#[path = "neighbor_search.rs"]
mod neighbor_search;

use ndarray::{Array2, ArrayView2, s};

use self::neighbor_search::{Distance, Index, Neighbor, choose_method};
use super::baseline::fit_common::{
    ClassPart, check_known, check_matrices, class_part, data_error, fail_all, join_remarks,
    read_choice, read_int, value_part,
};
use super::{
    LearnError, Learner, Note, Outcome, Predictions, SettingDefault, SettingKind, SettingSpec,
    Settings, Task, TrainPart,
};

/// The `nearest-neighbors` learner.
#[derive(Clone, Copy, Debug, Default)]
pub struct NearestNeighbors;

const NAME: &str = "nearest-neighbors";

const VOTES: &[&str] = &["equal", "inverse-distance"];
const DISTANCES: &[&str] = &["euclidean", "manhattan"];

const SETTINGS: &[SettingSpec] = &[
    SettingSpec {
        name: "k",
        kind: SettingKind::Int { min: 1 },
        default: SettingDefault::Int(5),
        help: "number of neighbours that vote",
    },
    SettingSpec {
        name: "vote",
        kind: SettingKind::Choice(VOTES),
        default: SettingDefault::Text("equal"),
        help: "how neighbours are weighted: equal, or by 1/distance",
    },
    SettingSpec {
        name: "distance",
        kind: SettingKind::Choice(DISTANCES),
        default: SettingDefault::Text("euclidean"),
        help: "the distance between rows",
    },
];

impl Learner for NearestNeighbors {
    fn name(&self) -> &'static str {
        NAME
    }

    fn settings(&self) -> &'static [SettingSpec] {
        SETTINGS
    }

    fn supports(&self, task: Task) -> bool {
        let _ = task;
        true
    }

    /// `[k]`: larger `k` averages over more rows, so it is simpler. An
    /// unreadable `k` sorts as the most complex.
    fn simplicity(&self, settings: &Settings) -> Vec<f64> {
        vec![read_int(NAME, &SETTINGS[0], 1, settings).map_or(f64::NEG_INFINITY, |k| k as f64)]
    }

    fn evaluate_family(
        &self,
        task: Task,
        train: &TrainPart<'_>,
        queries: &[ArrayView2<'_, f64>],
        family: &[Settings],
    ) -> Vec<Result<Outcome, LearnError>> {
        match prepare(task, train, queries) {
            Err(e) => fail_all(&e, family.len()),
            Ok(part) => evaluate(&part, train.x, queries, family),
        }
    }
}

/// One candidate's settings, read.
#[derive(Clone, Copy, Debug)]
struct Candidate {
    k: usize,
    inverse: bool,
    metric: Distance,
}

fn parse(settings: &Settings) -> Result<Candidate, LearnError> {
    check_known(NAME, SETTINGS, settings)?;
    let k = read_int(NAME, &SETTINGS[0], 1, settings)?;
    let vote = read_choice(NAME, &SETTINGS[1], VOTES, settings)?;
    let metric = match read_choice(NAME, &SETTINGS[2], DISTANCES, settings)? {
        0 => Distance::Euclidean,
        _ => Distance::Manhattan,
    };
    Ok(Candidate {
        k: usize::try_from(k).unwrap_or(usize::MAX),
        inverse: vote == 1,
        metric,
    })
}

/// The checked targets of the training part.
enum Part<'a> {
    Classes(ClassPart<'a>),
    Values(&'a [f64]),
}

fn prepare<'a>(
    task: Task,
    train: &TrainPart<'a>,
    queries: &[ArrayView2<'_, f64>],
) -> Result<Part<'a>, LearnError> {
    check_matrices(NAME, train, queries)?;
    if train.x.nrows() > u32::MAX as usize {
        return Err(data_error(NAME, "the training part has 2^32 rows or more"));
    }
    match task {
        Task::Classification { .. } => class_part(NAME, task, train).map(Part::Classes),
        Task::Regression => value_part(NAME, train).map(Part::Values),
    }
}

fn evaluate(
    part: &Part<'_>,
    x: ArrayView2<'_, f64>,
    queries: &[ArrayView2<'_, f64>],
    family: &[Settings],
) -> Vec<Result<Outcome, LearnError>> {
    let parsed: Vec<Result<Candidate, LearnError>> = family.iter().map(parse).collect();
    let mut predictions: Vec<Vec<Predictions>> = vec![Vec::new(); family.len()];
    for metric in [Distance::Euclidean, Distance::Manhattan] {
        let members: Vec<(usize, Candidate)> = parsed
            .iter()
            .enumerate()
            .filter_map(|(i, c)| {
                c.as_ref()
                    .ok()
                    .filter(|c| c.metric == metric)
                    .map(|c| (i, *c))
            })
            .collect();
        let Some(k_max) = members.iter().map(|(_, c)| c.k.min(x.nrows())).max() else {
            continue;
        };
        let index = Index::build(x, metric, choose_method(x.nrows(), x.ncols(), k_max));
        for q in queries {
            let per_member = predict_query(part, &index, *q, k_max, &members);
            for ((slot, _), p) in members.iter().zip(per_member) {
                predictions[*slot].push(p);
            }
        }
    }
    parsed
        .into_iter()
        .zip(predictions)
        .map(|(c, p)| c.and_then(|c| finish(part, x.nrows(), c, p)))
        .collect()
}

/// The outcome of candidate `c` from its predictions: the note, and a
/// check that no regression prediction overflowed.
fn finish(
    part: &Part<'_>,
    rows: usize,
    c: Candidate,
    predictions: Vec<Predictions>,
) -> Result<Outcome, LearnError> {
    let mut remarks = Vec::new();
    if let Part::Classes(p) = part {
        remarks.extend(p.remark("their probability is 0"));
    }
    if c.k > rows {
        remarks.push(format!(
            "k = {} is more than the {rows} training rows; all {rows} rows vote",
            c.k
        ));
    }
    let overflow = predictions.iter().any(|p| match p {
        Predictions::Values(v) => v.iter().any(|v| !v.is_finite()),
        Predictions::Classes { .. } => false,
    });
    if overflow {
        return Err(data_error(
            NAME,
            "a predicted value overflows; rescale the target",
        ));
    }
    let note = Note {
        remark: join_remarks(remarks),
        ..Note::default()
    };
    Ok(Outcome { predictions, note })
}

/// Query rows searched at once: bounds the memory of the neighbour lists to
/// about 2^22 entries while leaving enough rows to share among threads.
fn chunk_rows(k_max: usize) -> usize {
    ((1usize << 22) / k_max.max(1)).clamp(64, 8192)
}

/// Predictions of every member for the query matrix `q`, from one search
/// with `k_max` per chunk of rows.
fn predict_query(
    part: &Part<'_>,
    index: &Index,
    q: ArrayView2<'_, f64>,
    k_max: usize,
    members: &[(usize, Candidate)],
) -> Vec<Predictions> {
    let mut out: Vec<Collect> = members
        .iter()
        .map(|_| Collect::new(part, q.nrows()))
        .collect();
    let groups = vote_groups(members);
    let mut walk = Walk::default();
    let step = chunk_rows(k_max);
    let mut start = 0;
    while start < q.nrows() {
        let end = (start + step).min(q.nrows());
        let lists = index.query_rows(q.slice(s![start..end, ..]), k_max);
        for list in &lists {
            for (inverse, group) in &groups {
                walk.row(part, list, *inverse, group, &mut out);
            }
        }
        start = end;
    }
    out.into_iter().map(Collect::finish).collect()
}

/// The members (by position) and their `k`, split by vote, each group in
/// increasing `k` (ties by position): one walk along a row's neighbour list
/// serves a whole group.
fn vote_groups(members: &[(usize, Candidate)]) -> Vec<(bool, Vec<(usize, usize)>)> {
    [false, true]
        .into_iter()
        .map(|inverse| {
            let mut group: Vec<(usize, usize)> = members
                .iter()
                .enumerate()
                .filter(|(_, (_, c))| c.inverse == inverse)
                .map(|(i, (_, c))| (i, c.k))
                .collect();
            group.sort_by_key(|&(i, k)| (k, i));
            (inverse, group)
        })
        .filter(|(_, group)| !group.is_empty())
        .collect()
}

/// Scratch for one walk along a neighbour list, reused from row to row.
#[derive(Default)]
struct Walk {
    weights: Vec<f64>,
    /// Per class, the summed weight so far.
    shares: Vec<f64>,
    /// Per class, the nearest voter's distance so far.
    nearest: Vec<f64>,
}

impl Walk {
    /// Walks `list` once, adding voters in neighbour order, and records each
    /// member of `group` when its `k` voters are in. A member's vote is the
    /// sums over the first `k` voters added in neighbour order, so it is
    /// exactly what a walk for that member alone would give.
    fn row(
        &mut self,
        part: &Part<'_>,
        list: &[Neighbor],
        inverse: bool,
        group: &[(usize, usize)],
        sinks: &mut [Collect],
    ) {
        let last = group.last().map_or(0, |g| g.1).min(list.len());
        let voters = &list[..last];
        weights(voters, inverse, &mut self.weights);
        let due =
            |next: usize, added: usize| next < group.len() && group[next].1.min(last) <= added;
        let mut next = 0;
        match part {
            Part::Classes(p) => {
                self.shares.clear();
                self.shares.resize(p.classes, 0.0);
                self.nearest.clear();
                self.nearest.resize(p.classes, f64::INFINITY);
                for (j, (n, &w)) in voters.iter().zip(&self.weights).enumerate() {
                    let c = p.y[n.row as usize] as usize;
                    self.shares[c] += w;
                    if w > 0.0 && n.distance < self.nearest[c] {
                        self.nearest[c] = n.distance;
                    }
                    while due(next, j + 1) {
                        sinks[group[next].0].push_vote(&self.shares, &self.nearest);
                        next += 1;
                    }
                }
                while next < group.len() {
                    sinks[group[next].0].push_vote(&self.shares, &self.nearest);
                    next += 1;
                }
            }
            Part::Values(y) => {
                let (mut sum, mut total) = (0.0, 0.0);
                for (j, (n, &w)) in voters.iter().zip(&self.weights).enumerate() {
                    sum += w * y[n.row as usize];
                    total += w;
                    while due(next, j + 1) {
                        sinks[group[next].0].push_mean(sum / total);
                        next += 1;
                    }
                }
                while next < group.len() {
                    sinks[group[next].0].push_mean(sum / total);
                    next += 1;
                }
            }
        }
    }
}

/// Predictions of one candidate on one query matrix, row by row.
enum Collect {
    Classes {
        classes: usize,
        labels: Vec<u32>,
        probabilities: Vec<f64>,
    },
    Values(Vec<f64>),
}

impl Collect {
    fn new(part: &Part<'_>, rows: usize) -> Collect {
        match part {
            Part::Classes(p) => Collect::Classes {
                classes: p.classes,
                labels: Vec::with_capacity(rows),
                probabilities: Vec::with_capacity(rows * p.classes),
            },
            Part::Values(_) => Collect::Values(Vec::with_capacity(rows)),
        }
    }

    /// Records a row's vote from the summed weights per class: the shares
    /// are the weights over their total, and the winner is the largest
    /// weight, then the smallest nearest distance among its voters, then the
    /// lower code.
    fn push_vote(&mut self, shares: &[f64], nearest: &[f64]) {
        if let Collect::Classes {
            labels,
            probabilities,
            ..
        } = self
        {
            let mut best = 0;
            for c in 1..shares.len() {
                let better = shares[c] > shares[best]
                    || (shares[c] == shares[best] && nearest[c] < nearest[best]);
                if better {
                    best = c;
                }
            }
            let total: f64 = shares.iter().sum();
            probabilities.extend(shares.iter().map(|v| v / total));
            labels.push(best as u32);
        }
    }

    fn push_mean(&mut self, value: f64) {
        if let Collect::Values(values) = self {
            values.push(value);
        }
    }

    fn finish(self) -> Predictions {
        match self {
            Collect::Classes {
                classes,
                labels,
                probabilities,
            } => {
                let rows = labels.len();
                let probabilities = Array2::from_shape_vec((rows, classes), probabilities)
                    .unwrap_or_else(|_| Array2::zeros((rows, classes)));
                Predictions::Classes {
                    labels,
                    probabilities,
                }
            }
            Collect::Values(values) => Predictions::Values(values),
        }
    }
}

/// The weight of each voter: 1 each (equal), `d_1 / d_i` (inverse-distance),
/// or, when the nearest distance is 0, 1 for each zero-distance voter and 0
/// for the rest. The first voter always weighs 1, so the total is positive.
/// Written into `out` (cleared first), which is reused from row to row. The
/// weights of the first `k` voters do not depend on how many follow.
fn weights(voters: &[Neighbor], inverse: bool, out: &mut Vec<f64>) {
    out.clear();
    let nearest = voters.first().map_or(0.0, |n| n.distance);
    if !inverse {
        out.resize(voters.len(), 1.0);
    } else if nearest == 0.0 {
        out.extend(
            voters
                .iter()
                .map(|n| if n.distance == 0.0 { 1.0 } else { 0.0 }),
        );
    } else {
        out.extend(voters.iter().map(|n| nearest / n.distance));
    }
}

/// Direct access to the exact search for the benchmarks under `benches/`
/// (the crossover between brute force and the k-d tree). Hidden from the
/// docs: not part of the supported API.
#[doc(hidden)]
pub mod search_bench {
    use ndarray::ArrayView2;

    use super::neighbor_search::{Distance, Index, Method, choose_method};

    /// `Some(true)` forces the k-d tree, `Some(false)` brute force, `None`
    /// lets `choose_method` pick.
    pub type Path = Option<bool>;

    /// Whether `choose_method` picks the k-d tree for this shape.
    pub fn chooses_tree(rows: usize, dims: usize, k: usize) -> bool {
        choose_method(rows, dims, k) == Method::KdTree
    }

    /// Euclidean: the `k` nearest training positions of each query row, in
    /// `(distance, position)` order, and the sum of all reported distances
    /// (so that a benchmark's result is used).
    pub fn search(
        train: ArrayView2<'_, f64>,
        queries: ArrayView2<'_, f64>,
        k: usize,
        path: Path,
    ) -> (Vec<Vec<u32>>, f64) {
        let method = match path {
            Some(true) => Method::KdTree,
            Some(false) => Method::Brute,
            None => choose_method(train.nrows(), train.ncols(), k),
        };
        let index = Index::build(train, Distance::Euclidean, method);
        let lists = index.query_rows(queries, k);
        let total = lists.iter().flatten().map(|n| n.distance).sum();
        let rows = lists
            .into_iter()
            .map(|l| l.into_iter().map(|n| n.row).collect())
            .collect();
        (rows, total)
    }
}

#[cfg(test)]
mod tests;
