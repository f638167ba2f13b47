//! The `shrunken-centroid` learner (classification): nearest shrunken
//! centroids, Tibshirani, Hastie, Narasimhan and Chu (2002), PNAS
//! 99:6567-6572, exactly as restated in METHODS.md. On the training part
//! only, with n rows, K classes present and n_k rows in class k:
//!
//! - `s_i^2 = sum_k sum_{j in k} (x_ij - xbar_ik)^2 / (n - K)` (summed in
//!   row order), `s_0` the median of the `s_i`;
//! - `m_k = sqrt(1/n_k - 1/n)`;
//! - `d_ik = (xbar_ik - xbar_i) / (m_k (s_i + s_0))`, soft-thresholded by
//!   `delta` to `d'_ik = sign(d_ik) max(|d_ik| - delta, 0)`;
//! - `xbar'_ik = xbar_i + m_k (s_i + s_0) d'_ik`;
//! - `score_k(x) = sum_i (x_i - xbar'_ik)^2 / (s_i + s_0)^2 - 2 log pi_k`
//!   with `pi_k = n_k / n`; the smallest score wins (ties by class order) and the probabilities
//!   are `softmax(-score_k / 2)` with the maximum subtracted.
//!
//! A feature is active when any `d'_ik != 0`; the count is in the note of
//! every candidate.
//!
//! How a family is computed: one fit (means, spreads, `m_k`, `d_ik`) serves
//! every `delta`. The score is evaluated in its expanded form (see
//! [`Path`]): per class the features are ordered by decreasing `|d_ik|`, so
//! the active features of any `delta` are a prefix of that order; per query
//! row the prefix sums along each class's order are computed once, and each
//! `delta` reads its score off them in constant time per class. The term
//! `sum_i u_i^2` common to every class is left out (it changes neither the
//! winner nor the softmax). What a `delta` computes does not depend on the
//! other members of its family, so a family's results are those of each
//! candidate alone, bit for bit.
//!
//! Degenerate parts (decided here): a part with one class predicts it with
//! a remark (0 active features); a class with fewer than two training rows,
//! no features, or a feature with `s_i + s_0 == 0` (it has no within-class
//! spread and neither have at least half of the features) is a
//! [`LearnError::Data`] that says what to do. A constant feature with
//! `s_0 > 0` is fine: `s_i = 0`, and its `d_ik` is exactly 0 because means
//! are shifted means (a constant column's mean is the constant). Classes of
//! the task absent from the part get no centroid and probability 0, with a
//! remark. Simplicity key: `[delta]` (a larger threshold keeps fewer
//! features, so it is simpler).

use ndarray::{Array2, ArrayView2};

use super::baseline::fit_common::{
    ClassPart, argmin, check_known, check_matrices, class_part, data_error, fail_all, join_remarks,
    probability_matrix, read_float, shifted_mean, softmax_into,
};
use super::nearest_centroid::class_means;
use super::{
    LearnError, Learner, Note, Outcome, Predictions, SettingDefault, SettingKind, SettingSpec,
    Settings, Task, TrainPart,
};

/// The `shrunken-centroid` learner.
#[derive(Clone, Copy, Debug, Default)]
pub struct ShrunkenCentroid;

const NAME: &str = "shrunken-centroid";

const SETTINGS: &[SettingSpec] = &[SettingSpec {
    name: "delta",
    kind: SettingKind::Float { min: 0.0 },
    default: SettingDefault::Float(0.0),
    help: "shrinkage threshold applied to the standardised centroid differences",
}];

impl Learner for ShrunkenCentroid {
    fn name(&self) -> &'static str {
        NAME
    }

    fn settings(&self) -> &'static [SettingSpec] {
        SETTINGS
    }

    fn supports(&self, task: Task) -> bool {
        matches!(task, Task::Classification { .. })
    }

    /// `[delta]`: a larger threshold shrinks more centroids to the overall
    /// mean and keeps fewer features, so it is simpler. An unreadable delta
    /// sorts as the most complex.
    fn simplicity(&self, settings: &Settings) -> Vec<f64> {
        vec![read_float(NAME, &SETTINGS[0], 0.0, settings).unwrap_or(f64::NEG_INFINITY)]
    }

    fn evaluate_family(
        &self,
        task: Task,
        train: &TrainPart<'_>,
        queries: &[ArrayView2<'_, f64>],
        family: &[Settings],
    ) -> Vec<Result<Outcome, LearnError>> {
        let fitted = class_part(NAME, task, train)
            .and_then(|part| check_matrices(NAME, train, queries).map(|()| part))
            .and_then(|part| Model::new(train.x, &part, queries));
        let model = match fitted {
            Err(e) => return fail_all(&e, family.len()),
            Ok(model) => model,
        };
        let deltas: Vec<Result<f64, LearnError>> = family
            .iter()
            .map(|s| {
                check_known(NAME, SETTINGS, s)?;
                read_float(NAME, &SETTINGS[0], 0.0, s)
            })
            .collect();
        match &model {
            Model::OneClass(outcome) => deltas
                .into_iter()
                .map(|d| d.map(|_| outcome.clone()))
                .collect(),
            Model::Shrunken(fit) => {
                let good: Vec<f64> = deltas
                    .iter()
                    .filter_map(|d| d.as_ref().ok())
                    .copied()
                    .collect();
                let mut outcomes = fit.outcomes(&good, queries).into_iter();
                deltas
                    .into_iter()
                    .map(|d| {
                        d.and_then(|_| {
                            outcomes
                                .next()
                                .unwrap_or_else(|| Err(data_error(NAME, "no outcome was computed")))
                        })
                    })
                    .collect()
            }
        }
    }
}

/// What one training part gives, shared by every `delta`.
#[derive(Debug)]
enum Model {
    /// The part has one class: every candidate predicts it.
    OneClass(Outcome),
    Shrunken(Fit),
}

impl Model {
    fn new(
        x: ArrayView2<'_, f64>,
        part: &ClassPart<'_>,
        queries: &[ArrayView2<'_, f64>],
    ) -> Result<Model, LearnError> {
        let present = part.present();
        if present.len() == 1 {
            return Ok(Model::OneClass(one_class_outcome(
                part, present[0], queries,
            )));
        }
        Fit::new(x, part).map(Model::Shrunken)
    }
}

/// The centroids, spreads and standardised differences of a part with at
/// least two classes.
#[derive(Debug)]
struct Fit {
    classes: usize,
    /// Present classes in class order: (code, n_k).
    present: Vec<(usize, usize)>,
    /// Overall mean per feature.
    xbar: Vec<f64>,
    /// Pooled within-class standard deviation per feature.
    s: Vec<f64>,
    s0: f64,
    /// Per present class.
    m: Vec<f64>,
    /// Per present class, per feature.
    d: Vec<Vec<f64>>,
    /// Per present class: log(n_k / n).
    log_prior: Vec<f64>,
    /// Remark on absent classes.
    remark: Option<String>,
}

impl Fit {
    fn new(x: ArrayView2<'_, f64>, part: &ClassPart<'_>) -> Result<Fit, LearnError> {
        let present: Vec<(usize, usize)> = part
            .present()
            .iter()
            .map(|&c| (c, part.counts[c]))
            .collect();
        check_sizes(x.ncols(), &present)?;
        let xbar: Vec<f64> = (0..x.ncols())
            .map(|i| shifted_mean(x.column(i).iter().copied()))
            .collect();
        // One mean per present class, in class order, as `present`.
        let class_mean: Vec<Vec<f64>> = class_means(x, part).into_iter().flatten().collect();
        let (s, s0) = spreads(x, part, &present, &class_mean)?;
        let n = part.y.len() as f64;
        let m: Vec<f64> = present
            .iter()
            .map(|&(_, nk)| (1.0 / nk as f64 - 1.0 / n).sqrt())
            .collect();
        let d = class_mean
            .iter()
            .zip(&m)
            .map(|(mean, mk)| {
                (0..xbar.len())
                    .map(|i| (mean[i] - xbar[i]) / (mk * (s[i] + s0)))
                    .collect()
            })
            .collect();
        let log_prior = present
            .iter()
            .map(|&(_, nk)| libm::log(nk as f64 / n))
            .collect();
        Ok(Fit {
            classes: part.classes,
            present,
            xbar,
            s,
            s0,
            m,
            d,
            log_prior,
            remark: part.remark("they get no centroid and probability 0"),
        })
    }

    /// The outcome of every `delta` in `deltas`, in order, from one pass
    /// over the query rows.
    fn outcomes(
        &self,
        deltas: &[f64],
        queries: &[ArrayView2<'_, f64>],
    ) -> Vec<Result<Outcome, LearnError>> {
        let paths: Vec<Path> = self.d.iter().map(|dk| Path::new(dk)).collect();
        let terms: Vec<Terms> = deltas.iter().map(|&d| self.terms(&paths, d)).collect();
        let mut per_query: Vec<Vec<Option<Predictions>>> = Vec::with_capacity(queries.len());
        for q in queries {
            per_query.push(self.predict(&paths, &terms, *q));
        }
        terms
            .iter()
            .enumerate()
            .map(|(c, t)| {
                let predictions = per_query
                    .iter_mut()
                    .map(|preds| preds[c].take())
                    .collect::<Option<Vec<Predictions>>>()
                    .ok_or_else(|| {
                        data_error(NAME, "a class score overflows; scale the features")
                    })?;
                Ok(Outcome {
                    predictions,
                    note: self.note(t),
                })
            })
            .collect()
    }

    /// What one `delta` needs beyond the row: per present class the number
    /// of active features and the part of the score that does not depend
    /// on the row.
    fn terms(&self, paths: &[Path], delta: f64) -> Terms {
        let active: Vec<usize> = paths
            .iter()
            .map(|p| p.abs.partition_point(|&a| a > delta))
            .collect();
        let constant = paths
            .iter()
            .zip(&active)
            .zip(self.m.iter().zip(&self.log_prior))
            .map(|((p, &a), (mk, lp))| {
                let squares = p.squares[a] - 2.0 * delta * p.sizes[a] + delta * delta * a as f64;
                mk * mk * squares - 2.0 * lp
            })
            .collect();
        let features = (0..self.xbar.len())
            .filter(|&i| self.d.iter().any(|dk| dk[i].abs() > delta))
            .count();
        Terms {
            delta,
            active,
            constant,
            features,
        }
    }

    fn note(&self, t: &Terms) -> Note {
        let mut remarks: Vec<String> = self.remark.iter().cloned().collect();
        if t.features == 0 {
            remarks.push(format!(
                "no feature is active at delta = {}; predictions follow the class priors",
                t.delta
            ));
        }
        Note {
            active_features: Some(t.features),
            remark: join_remarks(remarks),
            ..Note::default()
        }
    }

    /// Every candidate's predictions on `q` (`None` for a candidate whose
    /// class score overflows). Per row the standardised `u_i` and each
    /// class's prefix sums along its path are computed once; each candidate
    /// then reads its score off in constant time per class.
    fn predict(
        &self,
        paths: &[Path],
        terms: &[Terms],
        q: ArrayView2<'_, f64>,
    ) -> Vec<Option<Predictions>> {
        let rows = q.nrows();
        let mut sinks: Vec<Option<Sink>> = terms
            .iter()
            .map(|_| Some(Sink::new(rows, self.classes)))
            .collect();
        let mut u = vec![0.0; self.xbar.len()];
        let mut prefix: Vec<Vec<(f64, f64)>> = paths
            .iter()
            .map(|p| vec![(0.0, 0.0); p.order.len() + 1])
            .collect();
        let (mut scores, mut halves) = (vec![None; self.classes], vec![None; self.classes]);
        for (r, row) in q.rows().into_iter().enumerate() {
            for (i, x) in row.iter().enumerate() {
                u[i] = (x - self.xbar[i]) / (self.s[i] + self.s0);
            }
            for (path, sums) in paths.iter().zip(prefix.iter_mut()) {
                path.prefix_sums(&u, sums);
            }
            for (t, sink) in terms.iter().zip(sinks.iter_mut()) {
                let Some(out) = sink else { continue };
                for (k, &(c, _)) in self.present.iter().enumerate() {
                    let (along, signs) = prefix[k][t.active[k]];
                    let score = t.constant[k] - 2.0 * self.m[k] * (along - t.delta * signs);
                    scores[c] = Some(score);
                    halves[c] = Some(-score / 2.0);
                }
                if !out.push(r, (&scores, &halves), self.present[0].0) {
                    *sink = None;
                }
            }
        }
        sinks.into_iter().map(|s| s.map(Sink::finish)).collect()
    }
}

/// One present class's features in order of decreasing `|d_ik|` (ties by
/// feature index), so that the active features of any `delta` are a prefix
/// of it, with the prefix sums that do not depend on the row.
///
/// Expanding the square, with `u_i = (x_i - xbar_i) / (s_i + s_0)` and the
/// active features those with `|d_ik| > delta`:
/// `score_k(x) = sum_i u_i^2 - 2 m_k sum_active u_i (d_ik - delta sign(d_ik))`
/// `+ m_k^2 sum_active (|d_ik| - delta)^2 - 2 log pi_k`. The first sum is
/// the same for every class, so it changes neither the winner nor the
/// softmax and is left out.
#[derive(Debug)]
struct Path {
    order: Vec<usize>,
    /// `|d_ik|` along the order.
    abs: Vec<f64>,
    /// `d_ik` along the order.
    d: Vec<f64>,
    /// `sign(d_ik)` along the order.
    sign: Vec<f64>,
    /// `squares[a]`: the sum of `d_ik^2` over the first `a` features.
    squares: Vec<f64>,
    /// `sizes[a]`: the sum of `|d_ik|` over the first `a` features.
    sizes: Vec<f64>,
}

impl Path {
    fn new(dk: &[f64]) -> Path {
        let mut order: Vec<usize> = (0..dk.len()).collect();
        order.sort_by(|&a, &b| dk[b].abs().total_cmp(&dk[a].abs()).then(a.cmp(&b)));
        let abs: Vec<f64> = order.iter().map(|&i| dk[i].abs()).collect();
        let d: Vec<f64> = order.iter().map(|&i| dk[i]).collect();
        let sign = d
            .iter()
            .map(|&v| if v < 0.0 { -1.0 } else { 1.0 })
            .collect();
        let running = |f: &dyn Fn(f64) -> f64| {
            let mut sums = vec![0.0; abs.len() + 1];
            for (j, &a) in abs.iter().enumerate() {
                sums[j + 1] = sums[j] + f(a);
            }
            sums
        };
        let squares = running(&|a| a * a);
        let sizes = running(&|a| a);
        Path {
            order,
            abs,
            d,
            sign,
            squares,
            sizes,
        }
    }

    /// `sums[a] = (sum of u_i d_ik, sum of u_i sign(d_ik))` over the first
    /// `a` features of the path, added in path order.
    fn prefix_sums(&self, u: &[f64], sums: &mut [(f64, f64)]) {
        let (mut along, mut signs) = (0.0, 0.0);
        for (j, &i) in self.order.iter().enumerate() {
            along += u[i] * self.d[j];
            signs += u[i] * self.sign[j];
            sums[j + 1] = (along, signs);
        }
    }
}

/// What one `delta` needs beyond the row.
#[derive(Debug)]
struct Terms {
    delta: f64,
    /// Per present class, the number of active features of its path.
    active: Vec<usize>,
    /// Per present class, `m_k^2 sum_active (|d_ik| - delta)^2 - 2 log pi_k`.
    constant: Vec<f64>,
    /// Features active in some class.
    features: usize,
}

/// One candidate's labels and probabilities on one query matrix, filled
/// row by row.
struct Sink {
    classes: usize,
    labels: Vec<u32>,
    probabilities: Vec<f64>,
}

impl Sink {
    fn new(rows: usize, classes: usize) -> Sink {
        Sink {
            classes,
            labels: Vec::with_capacity(rows),
            probabilities: vec![0.0; rows * classes],
        }
    }

    /// Records row `r` from the class scores and their halved negatives
    /// (`None` for absent classes): the smallest score wins, ties by class
    /// order. False when a score is not finite.
    fn push(
        &mut self,
        r: usize,
        (scores, halves): (&[Option<f64>], &[Option<f64>]),
        fallback: usize,
    ) -> bool {
        if scores.iter().flatten().any(|h| !h.is_finite()) {
            return false;
        }
        let best = argmin(scores).unwrap_or(fallback);
        self.labels.push(best as u32);
        softmax_into(
            halves,
            &mut self.probabilities[r * self.classes..(r + 1) * self.classes],
        );
        true
    }

    fn finish(self) -> Predictions {
        let rows = self.labels.len();
        let probabilities = Array2::from_shape_vec((rows, self.classes), self.probabilities)
            .unwrap_or_else(|_| Array2::zeros((rows, self.classes)));
        Predictions::Classes {
            labels: self.labels,
            probabilities,
        }
    }
}

/// The outcome of a part with one class: that class with probability 1 for
/// every row of every query matrix, 0 active features, and a remark.
fn one_class_outcome(
    part: &ClassPart<'_>,
    code: usize,
    queries: &[ArrayView2<'_, f64>],
) -> Outcome {
    let predictions = queries
        .iter()
        .map(|q| {
            let mut one = vec![0.0; part.classes];
            one[code] = 1.0;
            Predictions::Classes {
                labels: vec![code as u32; q.nrows()],
                probabilities: probability_matrix(vec![one; q.nrows()], part.classes),
            }
        })
        .collect();
    let remark = part.remark("they get no centroid and probability 0");
    Outcome {
        predictions,
        note: Note {
            active_features: Some(0),
            remark,
            ..Note::default()
        },
    }
}

/// Fails without features or with a class of fewer than two rows.
fn check_sizes(features: usize, present: &[(usize, usize)]) -> Result<(), LearnError> {
    if features == 0 {
        return Err(data_error(NAME, "the training part has no features"));
    }
    match present.iter().find(|(_, nk)| *nk < 2) {
        None => Ok(()),
        Some((c, nk)) => Err(data_error(
            NAME,
            format!(
                "class code {c} has {nk} training row; shrunken centroids need at least two rows per class (stratify the resampling or merge rare classes)"
            ),
        )),
    }
}

/// `(s_i, s_0)`, failing when some `s_i + s_0` is 0 (its standardised
/// differences would divide by zero).
fn spreads(
    x: ArrayView2<'_, f64>,
    part: &ClassPart<'_>,
    present: &[(usize, usize)],
    class_mean: &[Vec<f64>],
) -> Result<(Vec<f64>, f64), LearnError> {
    let s = pooled_sd(x, part, present, class_mean);
    let s0 = median(&s);
    match s.iter().position(|si| si + s0 == 0.0) {
        None => Ok((s, s0)),
        Some(i) => Err(data_error(
            NAME,
            format!(
                "feature {i} has no within-class spread and neither have at least half of the features (s_i + s_0 = 0); drop constant features"
            ),
        )),
    }
}

/// `s_i`: the pooled within-class standard deviation with `n - K` degrees
/// of freedom, residuals summed in row order (the caller guarantees at
/// least two classes of at least two rows, so `n - K >= 2`).
fn pooled_sd(
    x: ArrayView2<'_, f64>,
    part: &ClassPart<'_>,
    present: &[(usize, usize)],
    class_mean: &[Vec<f64>],
) -> Vec<f64> {
    let mut slot = vec![0usize; part.classes];
    for (k, &(c, _)) in present.iter().enumerate() {
        slot[c] = k;
    }
    let dof = (part.y.len() - present.len()) as f64;
    (0..x.ncols())
        .map(|i| {
            let mut ss = 0.0;
            for (r, &c) in part.y.iter().enumerate() {
                let t = x[[r, i]] - class_mean[slot[c as usize]][i];
                ss += t * t;
            }
            (ss / dof).sqrt()
        })
        .collect()
}

/// The median (mean of the two middle values for an even count); the input
/// is non-empty and finite.
fn median(values: &[f64]) -> f64 {
    let mut v = values.to_vec();
    v.sort_by(f64::total_cmp);
    let h = v.len() / 2;
    if v.len() % 2 == 1 {
        v[h]
    } else {
        (v[h - 1] + v[h]) / 2.0
    }
}

#[cfg(test)]
mod tests {
    use ndarray::{Array2, array};

    use super::*;
    use crate::learn::{MeanCentroid, SettingValue, Targets};

    fn delta(d: f64) -> Settings {
        let mut s = Settings::new();
        s.insert("delta".into(), SettingValue::Float(d));
        s
    }

    fn run(
        x: &Array2<f64>,
        y: &[u32],
        q: &Array2<f64>,
        deltas: &[f64],
    ) -> Vec<Result<Outcome, LearnError>> {
        let classes = y.iter().max().map_or(0, |m| *m as usize + 1);
        let train = TrainPart {
            x: x.view(),
            y: Targets::Classes(y),
        };
        let family: Vec<Settings> = deltas.iter().map(|&d| delta(d)).collect();
        ShrunkenCentroid.evaluate_family(
            Task::Classification { classes },
            &train,
            &[q.view()],
            &family,
        )
    }

    fn unpack(r: &Result<Outcome, LearnError>) -> (Vec<u32>, Array2<f64>, Note) {
        let o = r.as_ref().unwrap();
        match &o.predictions[0] {
            Predictions::Classes {
                labels,
                probabilities,
            } => (labels.clone(), probabilities.clone(), o.note.clone()),
            Predictions::Values(_) => panic!("expected classes"),
        }
    }

    /// Six rows, two features, classes of three rows each (equal priors).
    fn hand_table() -> (Array2<f64>, Vec<u32>) {
        let x = array![
            [1.0, 2.0],
            [2.0, 6.0],
            [3.0, 4.0],
            [5.0, 3.0],
            [6.0, 7.0],
            [7.0, 5.0]
        ];
        (x, vec![0, 0, 0, 1, 1, 1])
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1.0)
    }

    #[test]
    fn hand_worked_fit() {
        // Worked by hand from the formulas in METHODS.md (Tibshirani et al.
        // 2002). Feature 1: class means 2 and 6, overall 4; residuals
        // -1,0,1,-1,0,1, SS = 4, n - K = 4, s_1 = 1. Feature 2: class means 4
        // and 5, overall 4.5; residuals -2,2,0,-2,2,0, SS = 16, s_2 = 2.
        // s_0 = median(1, 2) = 1.5. m_k = sqrt(1/3 - 1/6) = 1/sqrt(6).
        // d_1k = -/+ 2 / (2.5 m) = -/+ 0.8 sqrt(6); d_2k = -/+ 0.5 / (3.5 m)
        // = -/+ sqrt(6) / 7.
        let (x, y) = hand_table();
        let part = class_part(
            NAME,
            Task::Classification { classes: 2 },
            &TrainPart {
                x: x.view(),
                y: Targets::Classes(&y),
            },
        )
        .unwrap();
        let fit = Fit::new(x.view(), &part).unwrap();
        assert_eq!(fit.xbar, vec![4.0, 4.5]);
        assert_eq!((fit.s.clone(), fit.s0), (vec![1.0, 2.0], 1.5));
        let r6 = 6f64.sqrt();
        assert!(fit.m.iter().all(|&m| close(m, 1.0 / r6)));
        let want = [[-0.8 * r6, -r6 / 7.0], [0.8 * r6, r6 / 7.0]];
        for (got, want) in fit.d.iter().flatten().zip(want.iter().flatten()) {
            assert!(close(*got, *want), "d {got} vs {want}");
        }
        // delta = 0.5: |d_2k| = 0.35 < 0.5 shrinks to 0; d'_1k = -/+ (0.8
        // sqrt(6) - 0.5). xbar'_1k = 4 -/+ 2.5 m (0.8 sqrt(6) - 0.5)
        // = 4 -/+ (2 - 1.25 / sqrt(6)); xbar'_2k = 4.5.
        let paths: Vec<Path> = fit.d.iter().map(|dk| Path::new(dk)).collect();
        let t = fit.terms(&paths, 0.5);
        assert_eq!((t.active.clone(), t.features), (vec![1, 1], 1));
        assert_eq!(paths[0].order, vec![0, 1]);
        let off = 2.0 - 1.25 / r6;
        // Query (3, 5): score_k = (3 - xbar'_1k)^2 / 2.5^2 + 0.5^2 / 3.5^2 + 2 ln 2.
        // The learner leaves out sum_i u_i^2 (common to both classes), so it
        // is added back here: u = ((3 - 4) / 2.5, (5 - 4.5) / 3.5).
        let u = [-1.0 / 2.5, 0.5 / 3.5];
        let common = u[0] * u[0] + u[1] * u[1];
        let tail = 0.25 / 12.25 + 2.0 * 2f64.ln();
        let want = [
            (3.0 - 4.0 + off).powi(2) / 6.25 + tail,
            (3.0 - 4.0 - off).powi(2) / 6.25 + tail,
        ];
        for (k, path) in paths.iter().enumerate() {
            let mut sums = vec![(0.0, 0.0); 3];
            path.prefix_sums(&u, &mut sums);
            let (along, signs) = sums[t.active[k]];
            let score = t.constant[k] - 2.0 * fit.m[k] * (along - 0.5 * signs);
            assert!(
                close(score + common, want[k]),
                "class {k}: {} vs {}",
                score + common,
                want[k]
            );
        }
        let q = array![[3.0, 5.0]];
        // The learner: class 0, one active feature, p_0 = 1 / (1 + exp(-(s1 - s0) / 2)).
        let (labels, p, note) = unpack(&run(&x, &y, &q, &[0.5])[0]);
        assert_eq!((labels, note.active_features), (vec![0], Some(1)));
        let gap = ((3.0 - 4.0 - off).powi(2) - (3.0 - 4.0 + off).powi(2)) / 6.25;
        assert!(close(p[[0, 0]], 1.0 / (1.0 + (-gap / 2.0).exp())));
    }

    #[test]
    fn delta_zero_ranks_like_standardised_nearest_centroid() {
        // With equal priors the prior term is common, so at delta = 0 the
        // score is the squared distance to the class mean in units of
        // s_i + s_0 (METHODS.md, Tibshirani et al. 2002): nearest centroid
        // on x_i / (s_i + s_0) must agree.
        let (x, y) = hand_table();
        let scale = [2.5, 3.5];
        let scaled = Array2::from_shape_fn((6, 2), |(r, c)| x[[r, c]] / scale[c]);
        let q = Array2::from_shape_fn((49, 2), |(r, c)| {
            if c == 0 {
                (r % 7) as f64 * 1.3
            } else {
                (r / 7) as f64 * 1.1
            }
        });
        let q_scaled = Array2::from_shape_fn((49, 2), |(r, c)| q[[r, c]] / scale[c]);
        let (labels, _, note) = unpack(&run(&x, &y, &q, &[0.0])[0]);
        assert_eq!(note.active_features, Some(2));
        let train = TrainPart {
            x: scaled.view(),
            y: Targets::Classes(&y),
        };
        let nc = MeanCentroid.evaluate_family(
            Task::Classification { classes: 2 },
            &train,
            &[q_scaled.view()],
            &[Settings::new()],
        );
        let (nc_labels, _, _) = unpack(&nc[0]);
        assert_eq!(labels, nc_labels);
        assert!(labels.contains(&0) && labels.contains(&1));
    }

    #[test]
    fn delta_past_every_d_keeps_no_feature_and_follows_the_priors() {
        // Class 1 has 4 of 6 rows: pi = (1/3, 2/3). With no active feature
        // every score is the same sum minus 2 log pi_k, so the probabilities
        // are the priors (softmax of log pi_k) and class 1 always wins.
        let x = array![
            [1.0, 2.0],
            [2.0, 6.0],
            [5.0, 3.0],
            [6.0, 7.0],
            [7.0, 5.0],
            [6.5, 4.0]
        ];
        let y = [0, 0, 1, 1, 1, 1];
        let q = array![[0.0, 0.0], [1.0, 2.0], [9.0, 9.0]];
        let (labels, p, note) = unpack(&run(&x, &y, &q, &[100.0])[0]);
        assert_eq!((labels, note.active_features), (vec![1, 1, 1], Some(0)));
        assert!(note.remark.unwrap().contains("no feature is active"));
        for r in 0..3 {
            assert!(close(p[[r, 0]], 1.0 / 3.0) && close(p[[r, 1]], 2.0 / 3.0));
        }
    }

    #[test]
    fn family_is_bitwise_each_alone_and_repeatable() {
        let (x, y) = hand_table();
        let q = array![[3.0, 5.0], [4.0, 4.0], [0.0, 9.0], [6.0, 1.0]];
        let deltas = [0.0, 0.25, 0.5, 1.0, 2.0, 3.0];
        let fam = run(&x, &y, &q, &deltas);
        let again = run(&x, &y, &q, &deltas);
        for (i, &d) in deltas.iter().enumerate() {
            let alone = run(&x, &y, &q, &[d]);
            let bits = |r: &Result<Outcome, LearnError>| {
                let (l, p, n) = unpack(r);
                (l, p.iter().map(|v| v.to_bits()).collect::<Vec<_>>(), n)
            };
            assert_eq!(bits(&fam[i]), bits(&alone[0]));
            assert_eq!(bits(&fam[i]), bits(&again[i]));
        }
    }

    #[test]
    fn degenerate_parts() {
        let q = array![[1.0, 1.0]];
        // One class: a remark, 0 active features, that class.
        let x = array![[1.0, 2.0], [2.0, 3.0]];
        let (labels, p, note) = unpack(&run(&x, &[1, 1], &q, &[0.0])[0]);
        assert_eq!((labels, p.row(0).to_vec()), (vec![1], vec![0.0, 1.0]));
        assert!(note.remark.unwrap().contains("one class"));
        // A class with one row: an error that names it.
        let x = array![[1.0, 2.0], [2.0, 3.0], [4.0, 4.0]];
        let err = run(&x, &[0, 0, 1], &q, &[0.0]).remove(0).unwrap_err();
        assert!(
            err.to_string().contains("class code 1 has 1 training row"),
            "{err}"
        );
        // A constant feature with s_0 > 0: finite, feature inactive even at 0.
        let x = array![[0.1, 1.0], [0.1, 2.0], [0.1, 5.0], [0.1, 7.0]];
        let (_, p, note) = unpack(&run(&x, &[0, 0, 1, 1], &q, &[0.0])[0]);
        assert!(p.iter().all(|v| v.is_finite()));
        assert_eq!(note.active_features, Some(1));
        // Every feature without within-class spread: s_i + s_0 = 0, an error.
        let x = array![[0.0, 1.0], [0.0, 1.0], [1.0, 1.0], [1.0, 1.0]];
        let err = run(&x, &[0, 0, 1, 1], &q, &[0.0]).remove(0).unwrap_err();
        assert!(err.to_string().contains("s_i + s_0 = 0"), "{err}");
        // A negative delta is a setting error.
        let x = array![[0.1, 1.0], [0.1, 2.0], [0.1, 5.0], [0.1, 7.0]];
        assert!(matches!(
            run(&x, &[0, 0, 1, 1], &q, &[-1.0])[0],
            Err(LearnError::Setting { .. })
        ));
    }

    #[test]
    fn simplicity_is_delta() {
        assert_eq!(ShrunkenCentroid.simplicity(&delta(2.5)), vec![2.5]);
        assert!(
            ShrunkenCentroid.simplicity(&delta(3.0)) > ShrunkenCentroid.simplicity(&delta(1.0))
        );
    }
}
