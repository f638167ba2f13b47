//! The `ridge` learner: least squares with an L2 penalty on the coefficients.
//!
//! It minimises `sum_i (y_i - b0 - x_i . b)^2 + lambda * |b|^2` over the
//! training part. The intercept `b0` is not penalised: `X` and `y` are centred
//! on their training means, `b` is fitted to the centred data, and
//! `b0 = mean(y) - mean(x) . b`.
//!
//! One decomposition serves the whole family: the thin SVD of the centred
//! design, `Xc = U diag(s) V^T`, gives `b(lambda) = V diag(1/(s + lambda/s))
//! U^T yc` for every `lambda` (that is `s/(s^2 + lambda)`, written so that it
//! neither overflows nor underflows, and is exactly `1/s` at `lambda = 0`).
//!
//! No column scaling. Scaling column `j` by `d_j` turns the penalty into
//! `lambda * sum_j (g_j/d_j)^2` on the scaled coefficients `g`, which one SVD
//! of the scaled design cannot serve for every `lambda`; so `lambda`
//! penalises the coefficients in the units the features arrive in (after the
//! plan's `[prep]`, which should usually be `scale = "z-score"` for ridge).
//! Centring alone is enough for accuracy on hard cases: on the Longley data
//! the centred design has condition number about 6e5 and `lambda = 0`
//! reproduces the NIST certified values with a log relative error of 13.6
//! or more for every coefficient (see the test; the task asks for 7).
//!
//! Rank: singular values at or below `max(s) * max(n, p) * eps` are treated
//! as exact zeros for every `lambda` (they are rounding noise). At
//! `lambda = 0` a rank-deficient design (a duplicated or constant feature,
//! more features than rows) then gets the minimum-norm least-squares
//! solution, and the outcome's note says so; never a NaN.
//!
//! Determinism: nalgebra's SVD (Householder bidiagonalisation, then Givens
//! QR sweeps) never reaches the run-time-dispatched `matrixmultiply` kernels,
//! because every product inside it has a one-column output and nalgebra only
//! hands products with more than 5 rows and columns to `matrixmultiply`; our
//! own products (`U^T y`, `V w`, predictions) are fixed-order loops. See
//! [`numeric`] for the source files read and the platform math library.

pub(super) mod numeric;

use nalgebra::DMatrix;
use ndarray::ArrayView2;

use numeric::{Svd, check_inputs, column_means, read_nonnegative};

use super::{
    LearnError, Learner, Note, Outcome, Predictions, SettingDefault, SettingKind, SettingSpec,
    Settings, Targets, Task, TrainPart,
};

/// The `ridge` learner.
#[derive(Clone, Copy, Debug, Default)]
pub struct Ridge;

const NAME: &str = "ridge";

const SETTINGS: &[SettingSpec] = &[SettingSpec {
    name: "lambda",
    kind: SettingKind::Float { min: 0.0 },
    default: SettingDefault::Float(1.0),
    help: "L2 penalty on the coefficients (the intercept is not penalised)",
}];

/// A fitted ridge model on the features' own scale.
#[derive(Clone, Debug, PartialEq)]
pub struct RidgeCoefficients {
    /// `b0`.
    pub intercept: f64,
    /// One coefficient per feature, in feature order.
    pub coefficients: Vec<f64>,
    /// Numerical rank of the centred training design.
    pub rank: usize,
}

impl Ridge {
    /// Fit one `lambda` on `train` (regression targets) and return the
    /// coefficients; the same computation `evaluate_family` predicts with.
    pub fn fit_coefficients(
        train: &TrainPart<'_>,
        lambda: f64,
    ) -> Result<RidgeCoefficients, LearnError> {
        if !(lambda.is_finite() && lambda >= 0.0) {
            return Err(setting_error("must be a finite number at least 0"));
        }
        let fit = Decomposed::new(train, &[])?;
        let b = fit.solve(lambda);
        let intercept = fit.y_mean - dot(&fit.x_mean, &b);
        Ok(RidgeCoefficients {
            intercept,
            coefficients: b,
            rank: fit.svd.rank(),
        })
    }
}

/// `sum_j m_j b_j` in feature order.
fn dot(m: &[f64], b: &[f64]) -> f64 {
    let mut acc = 0.0;
    for (&mj, &bj) in m.iter().zip(b) {
        acc += mj * bj;
    }
    acc
}

fn setting_error(message: &str) -> LearnError {
    LearnError::Setting {
        learner: NAME,
        setting: "lambda".into(),
        message: message.into(),
    }
}

/// The centred training data and the SVD of its design.
struct Decomposed {
    x_mean: Vec<f64>,
    y_mean: f64,
    /// `u_i . (y - ybar)` per component: shared by every `lambda`.
    projected: Vec<f64>,
    svd: Svd,
}

impl Decomposed {
    fn new(train: &TrainPart<'_>, queries: &[ArrayView2<'_, f64>]) -> Result<Self, LearnError> {
        let y = match train.y {
            Targets::Values(v) => v,
            Targets::Classes(_) => {
                return Err(LearnError::Task {
                    learner: NAME,
                    task: "classification",
                });
            }
        };
        check_inputs(NAME, train.x, y.len(), queries)?;
        if y.iter().any(|v| !v.is_finite()) {
            return Err(data_error("a training target is missing or not finite"));
        }
        let x_mean = column_means(train.x);
        let y_mean = y.iter().fold(0.0, |acc, v| acc + v) / y.len() as f64;
        let y_centred: Vec<f64> = y.iter().map(|v| v - y_mean).collect();
        let (n, p) = train.x.dim();
        let centred = DMatrix::from_fn(n, p, |i, j| train.x[[i, j]] - x_mean[j]);
        let svd = Svd::new(centred)
            .ok_or_else(|| data_error("the decomposition of the design did not converge"))?;
        let projected = svd.project(&y_centred);
        Ok(Decomposed {
            x_mean,
            y_mean,
            projected,
            svd,
        })
    }

    /// Coefficients for `lambda` (finite, >= 0).
    fn solve(&self, lambda: f64) -> Vec<f64> {
        self.svd
            .apply_projected(&self.projected, |s| 1.0 / (s + lambda / s))
    }

    fn note(&self) -> Note {
        let (rank, p) = (self.svd.rank(), self.x_mean.len());
        let remark = (rank < p).then(|| {
            format!(
                "the centred training design has rank {rank} of {p} features; directions at or \
                 below the rank tolerance are set to zero (with lambda 0 this is the \
                 minimum-norm least-squares solution)"
            )
        });
        Note {
            remark,
            ..Note::default()
        }
    }

    /// Every coefficient vector's predictions on `q`, in one pass over its
    /// rows: each row is centred once, then `ybar + sum_j (x_j - xbar_j) b_j`
    /// in feature order per vector.
    fn predict_all(&self, coefficients: &[Vec<f64>], q: ArrayView2<'_, f64>) -> Vec<Vec<f64>> {
        let mut out: Vec<Vec<f64>> = coefficients
            .iter()
            .map(|_| Vec::with_capacity(q.nrows()))
            .collect();
        let mut centred = vec![0.0; self.x_mean.len()];
        for row in q.rows() {
            for ((c, &x), &m) in centred.iter_mut().zip(row).zip(&self.x_mean) {
                *c = x - m;
            }
            for (b, values) in coefficients.iter().zip(out.iter_mut()) {
                let mut acc = 0.0;
                for (&c, &bj) in centred.iter().zip(b) {
                    acc += c * bj;
                }
                values.push(self.y_mean + acc);
            }
        }
        out
    }
}

fn data_error(message: &str) -> LearnError {
    LearnError::Data {
        learner: NAME,
        message: message.into(),
    }
}

impl Learner for Ridge {
    fn name(&self) -> &'static str {
        NAME
    }

    fn settings(&self) -> &'static [SettingSpec] {
        SETTINGS
    }

    fn supports(&self, task: Task) -> bool {
        matches!(task, Task::Regression)
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
        let fit = match task {
            Task::Regression => Decomposed::new(train, queries),
            Task::Classification { .. } => Err(LearnError::Task {
                learner: NAME,
                task: "classification",
            }),
        };
        let fit = match fit {
            Ok(fit) => fit,
            Err(e) => return family.iter().map(|_| Err(e.clone())).collect(),
        };
        let note = fit.note();
        let solved: Vec<Result<Vec<f64>, LearnError>> = family
            .iter()
            .map(|settings| read_nonnegative(NAME, settings, "lambda").map(|l| fit.solve(l)))
            .collect();
        let good: Vec<Vec<f64>> = solved
            .iter()
            .filter_map(|b| b.as_ref().ok())
            .cloned()
            .collect();
        let mut per_query: Vec<std::vec::IntoIter<Vec<f64>>> = queries
            .iter()
            .map(|q| fit.predict_all(&good, *q).into_iter())
            .collect();
        solved
            .into_iter()
            .map(|b| {
                b.map(|_| Outcome {
                    predictions: per_query
                        .iter_mut()
                        .map(|p| Predictions::Values(p.next().unwrap_or_default()))
                        .collect(),
                    note: note.clone(),
                })
            })
            .collect()
    }
}

#[cfg(test)]
mod tests;
