//! The `logistic` learner: binary and multinomial logistic regression with an
//! L2 penalty on the coefficients.
//!
//! Parametrisation: reference class. Of the classes present in the training
//! part, the lowest code is the reference, with all-zero coefficients; each
//! other present class `k` has an intercept `a_k` and coefficients `b_k`, and
//! `P(k | x)` is the softmax of `(0, a_k + x . b_k, ...)`. Two present classes
//! is ordinary binary logistic regression (the same code path). This is the
//! parametrisation of statsmodels' `Logit`/`MNLogit`, so at `lambda = 0` the
//! coefficients are comparable one to one (the test does).
//!
//! Objective: `deviance/2 + lambda/2 * sum_k |b_k|^2`, i.e. the negative
//! log-likelihood plus half the penalty, so that `lambda` plays the same role
//! as in `ridge` (whose residual sum of squares is the Gaussian deviance).
//! Intercepts are not penalised. With `lambda > 0` the reference-class
//! penalty is not symmetric in the classes (penalising `b_k` shrinks class
//! `k` towards the reference class, not towards the average); we accept that
//! for the identifiable, well-posed Hessian it gives at `lambda = 0` and for
//! the match with the reference library. `lambda` penalises coefficients in
//! the units the features arrive in (the internal standardisation below is a
//! reparametrisation and does not change that).
//!
//! Solver: Newton's method on the full Hessian of all `(K-1)(p+1)` parameters,
//! starting from zero, with step halving (at most 40 halvings) until the
//! objective does not increase. Internally each feature is standardised by
//! its training mean and sample sd (1 for a constant feature): an exact
//! reparametrisation (the penalty is carried over as `lambda / sd_j^2` on the
//! standardised coefficient, so the optimum is the same point), which keeps
//! the Hessian well conditioned when features come in very different units;
//! reported coefficients are converted back. The Newton step uses the
//! pseudo-inverse of the Hessian (SVD, rank tolerance as in `ridge`), so a
//! rank-deficient design (a constant or duplicated feature) converges to the
//! optimum of minimum norm in the standardised coordinates instead of
//! failing; the note says so.
//!
//! Convergence (in the standardised coordinates, relative to
//! `1 + max |parameter|`): once the Newton step is at most `1e-5` the full
//! step is taken without a line search (the objective, a sum of `n` rounded
//! terms, cannot resolve such small decreases, and Newton steps are accurate
//! there); the fit has converged when a step is at most `1e-10`, or when a
//! step in that region fails to halve the previous one (the rounding floor of
//! an ill-conditioned problem). Larger steps use step halving. The cap is 100
//! iterations. Step size, not the Newton decrement (which also tends to zero
//! along a diverging direction), is what makes separation show: with
//! separable classes and `lambda = 0` the steps stay near 1 while the
//! coefficients grow. A fit that hits the cap, or whose step halving finds no
//! decrease, is reported with `converged = Some(false)` and a remark; its last
//! iterate still predicts. Every outcome sets `converged`.
//!
//! Classes absent from the training part get probability 0; a training part
//! with one class predicts it with probability 1 (converged, with a remark).
//! Probabilities use a max-shifted softmax, and `exp`/`ln` are the portable
//! ones in [`numeric`](super::ridge::numeric) (the platform's are chosen by
//! CPU at load time).

use nalgebra::DMatrix;
use ndarray::{Array2, ArrayView1, ArrayView2};

use super::ridge::numeric::{
    Svd, check_inputs, column_means, column_scales, exp, ln, read_nonnegative,
};
use super::{
    LearnError, Learner, Note, Outcome, Predictions, SettingDefault, SettingKind, SettingSpec,
    Settings, Targets, Task, TrainPart,
};

/// The `logistic` learner.
#[derive(Clone, Copy, Debug, Default)]
pub struct Logistic;

const NAME: &str = "logistic";
const MAX_ITERATIONS: usize = 100;
const MAX_HALVINGS: usize = 40;
/// Converged when the largest step is at most this, relative to `1 + max |parameter|`.
const STEP_TOLERANCE: f64 = 1e-10;
/// Relative steps at most this are taken whole (see `fit`).
const QUADRATIC_REGION: f64 = 1e-5;

const SETTINGS: &[SettingSpec] = &[SettingSpec {
    name: "lambda",
    kind: SettingKind::Float { min: 0.0 },
    default: SettingDefault::Float(1.0),
    help: "L2 penalty on the coefficients (the intercept is not penalised)",
}];

/// A fitted logistic model on the features' own scale.
#[derive(Clone, Debug, PartialEq)]
pub struct LogisticCoefficients {
    /// The reference class (lowest class present); its coefficients are zero.
    pub reference: u32,
    /// For each other present class in class order: the class and
    /// `[intercept, b_1, ..., b_p]`.
    pub classes: Vec<(u32, Vec<f64>)>,
    /// Newton iterations taken.
    pub iterations: usize,
    /// Convergence and remarks, as the learner reports them.
    pub note: Note,
}

impl Logistic {
    /// Fit one `lambda` on `train` (class codes `< classes`) and return the
    /// coefficients; the same computation `evaluate_family` predicts with.
    pub fn fit_coefficients(
        train: &TrainPart<'_>,
        classes: usize,
        lambda: f64,
    ) -> Result<LogisticCoefficients, LearnError> {
        if !(lambda.is_finite() && lambda >= 0.0) {
            return Err(LearnError::Setting {
                learner: NAME,
                setting: "lambda".into(),
                message: "must be a finite number at least 0".into(),
            });
        }
        let data = Prepared::new(Task::Classification { classes }, train, &[])?;
        let fit = data.fit(lambda);
        let d = data.width();
        let rows = data.present[1..]
            .iter()
            .enumerate()
            .map(|(k, &class)| {
                let block = &fit.theta[k * d..(k + 1) * d];
                let b: Vec<f64> = block[1..]
                    .iter()
                    .zip(&data.x_scale)
                    .map(|(g, s)| g / s)
                    .collect();
                let mut shift = 0.0;
                for (m, bj) in data.x_mean.iter().zip(&b) {
                    shift += m * bj;
                }
                (class, std::iter::once(block[0] - shift).chain(b).collect())
            })
            .collect();
        Ok(LogisticCoefficients {
            reference: data.present[0],
            classes: rows,
            iterations: fit.iterations,
            note: data.note(&fit),
        })
    }
}

/// The checked, centred training part.
struct Prepared<'a> {
    /// Standardised features `(x - mean) / scale`, row-major `n x p`.
    xc: Vec<f64>,
    x_mean: Vec<f64>,
    x_scale: Vec<f64>,
    y: &'a [u32],
    /// Number of classes of the task.
    classes: usize,
    /// Classes present in the training part, ascending; `present[0]` is the
    /// reference.
    present: Vec<u32>,
    /// Position in `present` of each row's class.
    slot: Vec<usize>,
}

/// One fit: parameters in centred coordinates, one block `[a_k, b_k]` per
/// non-reference present class.
struct Fit {
    theta: Vec<f64>,
    iterations: usize,
    converged: bool,
    failure: Option<String>,
    rank_deficient: bool,
}

impl<'a> Prepared<'a> {
    fn new(
        task: Task,
        train: &TrainPart<'a>,
        queries: &[ArrayView2<'_, f64>],
    ) -> Result<Self, LearnError> {
        let (classes, y) = match (task, train.y) {
            (Task::Classification { classes }, Targets::Classes(y)) => (classes, y),
            _ => {
                return Err(LearnError::Task {
                    learner: NAME,
                    task: "regression",
                });
            }
        };
        check_inputs(NAME, train.x, y.len(), queries)?;
        if let Some(bad) = y.iter().find(|&&c| c as usize >= classes) {
            return Err(LearnError::Data {
                learner: NAME,
                message: format!("class code {bad} is not below the class count {classes}"),
            });
        }
        let mut seen = vec![false; classes];
        y.iter().for_each(|&c| seen[c as usize] = true);
        let present: Vec<u32> = (0..classes as u32).filter(|&c| seen[c as usize]).collect();
        let slot = y
            .iter()
            .map(|c| present.iter().position(|p| p == c).unwrap_or(0))
            .collect();
        let x_mean = column_means(train.x);
        let x_scale = column_scales(train.x, &x_mean);
        let mut data = Prepared {
            xc: Vec::new(),
            x_mean,
            x_scale,
            y,
            classes,
            present,
            slot,
        };
        data.xc = train
            .x
            .rows()
            .into_iter()
            .flat_map(|r| data.standardise(r))
            .collect();
        Ok(data)
    }

    fn n(&self) -> usize {
        self.y.len()
    }

    /// Parameters per non-reference class: intercept plus features.
    fn width(&self) -> usize {
        self.x_mean.len() + 1
    }

    /// Non-reference present classes.
    fn others(&self) -> usize {
        self.present.len() - 1
    }

    fn row(&self, i: usize) -> &[f64] {
        let p = self.x_mean.len();
        &self.xc[i * p..(i + 1) * p]
    }

    fn fit(&self, lambda: f64) -> Fit {
        let mut fit = Fit {
            theta: vec![0.0; self.others() * self.width()],
            iterations: 0,
            converged: false,
            failure: None,
            rank_deficient: false,
        };
        if self.others() == 0 {
            fit.converged = true;
            return fit;
        }
        let mut f = self.objective(&fit.theta, lambda);
        let mut previous_small: Option<f64> = None;
        while fit.iterations < MAX_ITERATIONS {
            fit.iterations += 1;
            let Some((step, rank_deficient)) = self.newton_step(&fit.theta, lambda) else {
                fit.failure = Some("the decomposition of the Hessian did not converge".into());
                return fit;
            };
            fit.rank_deficient = rank_deficient;
            let largest_step = step.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
            let size = largest_step / (1.0 + fit.theta.iter().fold(0.0_f64, |m, v| m.max(v.abs())));
            if size <= QUADRATIC_REGION {
                // Full Newton steps, no line search: the objective (a sum of
                // n rounded terms) cannot resolve decreases this small, and
                // the step is accurate here. Stop when the step is tiny, or
                // when it no longer halves (the rounding floor).
                fit.theta = axpy(&fit.theta, -1.0, &step);
                let floor = previous_small.is_some_and(|p| size > p / 2.0);
                if size <= STEP_TOLERANCE || floor {
                    fit.converged = true;
                    return fit;
                }
                previous_small = Some(size);
                f = self.objective(&fit.theta, lambda);
                continue;
            }
            previous_small = None;
            match self.halve(&fit.theta, &step, f, lambda) {
                Some((theta, f_new)) => (fit.theta, f) = (theta, f_new),
                None => {
                    fit.failure = Some(format!(
                        "step halving found no decrease at newton iteration {}",
                        fit.iterations
                    ));
                    return fit;
                }
            }
        }
        fit
    }

    /// `H^+ g` at `theta`, and whether `H` is rank-deficient.
    fn newton_step(&self, theta: &[f64], lambda: f64) -> Option<(Vec<f64>, bool)> {
        let (g, h) = self.gradient_hessian(theta, lambda);
        let svd = Svd::new(DMatrix::from_row_slice(g.len(), g.len(), &h))?;
        Some((svd.apply(&g, |s| 1.0 / s), svd.rank() < g.len()))
    }

    /// The first of `theta - t * step`, `t = 1, 1/2, 1/4, ...`, whose
    /// objective does not exceed `f`.
    fn halve(&self, theta: &[f64], step: &[f64], f: f64, lambda: f64) -> Option<(Vec<f64>, f64)> {
        let mut t = 1.0;
        for _ in 0..=MAX_HALVINGS {
            let candidate = axpy(theta, -t, step);
            let f_new = self.objective(&candidate, lambda);
            if f_new <= f {
                return Some((candidate, f_new));
            }
            t /= 2.0;
        }
        None
    }

    /// Logits of the non-reference classes for a centred row.
    fn logits(&self, theta: &[f64], z: &[f64]) -> Vec<f64> {
        theta
            .chunks(self.width())
            .map(|block| {
                let mut eta = block[0];
                for (b, x) in block[1..].iter().zip(z) {
                    eta += b * x;
                }
                eta
            })
            .collect()
    }

    /// `-log-likelihood + lambda/2 |b|^2`, rows in order.
    fn objective(&self, theta: &[f64], lambda: f64) -> f64 {
        let mut total = 0.0;
        for i in 0..self.n() {
            let eta = self.logits(theta, self.row(i));
            let (max, sum) = shifted_sum(&eta);
            let own = if self.slot[i] == 0 {
                0.0
            } else {
                eta[self.slot[i] - 1]
            };
            total += max + ln(sum) - own;
        }
        total + lambda / 2.0 * self.penalty_sum(theta)
    }

    /// `sum_kj b_kj^2` with `b_kj = g_kj / scale_j` (the penalty is on the
    /// features' own units, not the standardised ones).
    fn penalty_sum(&self, theta: &[f64]) -> f64 {
        let mut sum = 0.0;
        for block in theta.chunks(self.width()) {
            for (g, s) in block[1..].iter().zip(&self.x_scale) {
                let b = g / s;
                sum += b * b;
            }
        }
        sum
    }

    /// Gradient and row-major Hessian of the objective at `theta`. Only the
    /// upper triangle is accumulated and then mirrored; each entry is
    /// `w_kl * (z_a * z_b)` with `w_kl = w_lk` bit for bit, so the mirror is
    /// what the lower triangle would have summed.
    fn gradient_hessian(&self, theta: &[f64], lambda: f64) -> (Vec<f64>, Vec<f64>) {
        let (q, d) = (self.others(), self.width());
        let dim = q * d;
        let mut g = vec![0.0; dim];
        let mut h = vec![0.0; dim * dim];
        let mut z = vec![1.0; d];
        let mut w = vec![0.0; q * q];
        for i in 0..self.n() {
            z[1..].copy_from_slice(self.row(i));
            let pi = softmax(&self.logits(theta, &z[1..]));
            for k in 0..q {
                let r = pi[k + 1] - if self.slot[i] == k + 1 { 1.0 } else { 0.0 };
                for a in 0..d {
                    g[k * d + a] += r * z[a];
                }
                for l in 0..q {
                    w[k * q + l] = pi[k + 1] * (if k == l { 1.0 } else { 0.0 } - pi[l + 1]);
                }
            }
            for u in 0..dim {
                let (k, a) = (u / d, u % d);
                for v in u..dim {
                    let (l, b) = (v / d, v % d);
                    h[u * dim + v] += w[k * q + l] * (z[a] * z[b]);
                }
            }
        }
        for u in 0..dim {
            for v in 0..u {
                h[u * dim + v] = h[v * dim + u];
            }
        }
        for k in 0..q {
            for (a, s) in (1..d).zip(&self.x_scale) {
                let (at, pen) = (k * d + a, lambda / (s * s));
                g[at] += pen * theta[at];
                h[at * dim + at] += pen;
            }
        }
        (g, h)
    }

    /// Class probabilities (all `classes` columns) and labels for `x`.
    fn predict(&self, theta: &[f64], x: ArrayView2<'_, f64>) -> Predictions {
        let mut probabilities = Array2::zeros((x.nrows(), self.classes));
        let mut labels = Vec::with_capacity(x.nrows());
        for (i, row) in x.rows().into_iter().enumerate() {
            let z = self.standardise(row);
            let pi = softmax(&self.logits(theta, &z));
            for (slot, &class) in self.present.iter().enumerate() {
                probabilities[[i, class as usize]] = pi[slot];
            }
            labels.push(first_max(probabilities.row(i)));
        }
        Predictions::Classes {
            labels,
            probabilities,
        }
    }

    fn standardise(&self, row: ArrayView1<'_, f64>) -> Vec<f64> {
        row.iter()
            .zip(self.x_mean.iter().zip(&self.x_scale))
            .map(|(v, (m, s))| (v - m) / s)
            .collect()
    }

    fn note(&self, fit: &Fit) -> Note {
        let mut remarks = Vec::new();
        if self.others() == 0 {
            remarks.push("the training part has one class; every prediction is that class".into());
        }
        let absent = self.classes - self.present.len();
        if absent > 0 && self.others() > 0 {
            remarks.push(format!(
                "{absent} class(es) absent from the training part get probability 0"
            ));
        }
        if let Some(failure) = &fit.failure {
            remarks.push(format!("{failure}; predictions use the last iterate"));
        } else if !fit.converged {
            remarks.push(format!(
                "newton did not converge in {MAX_ITERATIONS} iterations (with lambda 0 the \
                 classes may be separable in the training part; a lambda above 0 gives a finite \
                 fit); predictions use the last iterate"
            ));
        }
        if fit.rank_deficient {
            remarks.push(
                "the training design is rank-deficient (a constant or duplicated feature); \
                 the optimum of minimum norm in standardised coordinates is used"
                    .into(),
            );
        }
        Note {
            converged: Some(fit.converged),
            remark: (!remarks.is_empty()).then(|| remarks.join("; ")),
            ..Note::default()
        }
    }
}

/// `theta + t * step`.
fn axpy(theta: &[f64], t: f64, step: &[f64]) -> Vec<f64> {
    theta.iter().zip(step).map(|(a, s)| a + t * s).collect()
}

/// For logits `(0, eta...)`: the max `m` and `sum exp(eta - m)`, in order.
fn shifted_sum(eta: &[f64]) -> (f64, f64) {
    let max = eta.iter().fold(0.0_f64, |m, &v| m.max(v));
    let mut sum = exp(-max);
    for &e in eta {
        sum += exp(e - max);
    }
    (max, sum)
}

/// Probabilities of `(reference, others...)` for logits `(0, eta...)`.
fn softmax(eta: &[f64]) -> Vec<f64> {
    let (max, sum) = shifted_sum(eta);
    std::iter::once(exp(-max) / sum)
        .chain(eta.iter().map(|&e| exp(e - max) / sum))
        .collect()
}

/// The first index of the largest value (ties go to the lower class).
fn first_max(row: ArrayView1<'_, f64>) -> u32 {
    let mut best = 0;
    for (k, &v) in row.iter().enumerate() {
        if v > row[best] {
            best = k;
        }
    }
    best as u32
}

impl Learner for Logistic {
    fn name(&self) -> &'static str {
        NAME
    }

    fn settings(&self) -> &'static [SettingSpec] {
        SETTINGS
    }

    fn supports(&self, task: Task) -> bool {
        matches!(task, Task::Classification { .. })
    }

    /// `[lambda]`: a larger penalty is simpler.
    fn simplicity(&self, settings: &Settings) -> Vec<f64> {
        let lambda = settings.get("lambda").and_then(|v| v.as_f64());
        vec![lambda.filter(|l| l.is_finite()).unwrap_or(1.0)]
    }

    fn evaluate_family(
        &self,
        task: Task,
        train: &TrainPart<'_>,
        queries: &[ArrayView2<'_, f64>],
        family: &[Settings],
    ) -> Vec<Result<Outcome, LearnError>> {
        let data = match Prepared::new(task, train, queries) {
            Ok(data) => data,
            Err(e) => return family.iter().map(|_| Err(e.clone())).collect(),
        };
        family
            .iter()
            .map(|settings| {
                let lambda = read_nonnegative(NAME, settings, "lambda")?;
                let fit = data.fit(lambda);
                Ok(Outcome {
                    predictions: queries
                        .iter()
                        .map(|q| data.predict(&fit.theta, *q))
                        .collect(),
                    note: data.note(&fit),
                })
            })
            .collect()
    }
}

#[cfg(test)]
mod tests;
