//! The fitted transform: imputation and scaling statistics computed from the
//! training rows of one split, then applied unchanged to any rows.
//!
//! Invariants: [`Transform::fit`] sees only the rows it is given, and
//! [`Transform::apply`] works row by row with the fitted statistics, so no
//! validation or sealed row can change how any row is transformed. Sums run in
//! row order.
//!
//! Numeric columns (`FeatureKind::Numeric`):
//! - `impute`: a missing (NaN) cell becomes the training column's mean or
//!   median over its observed cells (median of an even count: the midpoint of
//!   the two middle values). A column with no observed cell in the training
//!   part cannot be imputed: `fit` fails with an error naming the column.
//! - `scale` is fitted on the training column *after* imputation (as an
//!   impute-then-scale pipeline would): `z-score` is `(x - mean) / sd` with
//!   the sample sd (n - 1); a constant column (all training values equal,
//!   which includes a single row) is only centred, divisor 1, so training rows
//!   become 0 and other rows keep their offset from the training value.
//!   `min-max` is `(x - min) / (max - min)`; a constant column maps every
//!   value to 0 (there is no range to scale by, and the column told the
//!   learner nothing).
//! - With `impute = "none"` a missing cell stays NaN through `apply`: nothing
//!   hides it, statistics use the observed cells only, and the learners
//!   reject a non-finite value with an error that says to set `impute` (the
//!   loader already refuses missing cells unless `impute` is set). With
//!   imputation on, `apply` leaves no NaN.
//! - An infinite training value is an error (no statistic is defined), and so
//!   is a column whose range overflows a double (`max - min` or a deviation
//!   from the mean is infinite). The sd is computed with deviations divided
//!   by the largest one, so tiny or huge but representable spreads neither
//!   underflow nor overflow.
//!
//! Indicator columns (`FeatureKind::Indicator`, one level of a one-hot block)
//! are never scaled or imputed. An indicator that is zero in every training
//! row (a level not seen in training) is zeroed by `apply`, so a row with a
//! level unseen in training has all zeros in its block. When imputing, a NaN
//! indicator cell (which the loader never produces: a missing category is
//! all zeros) becomes 0, the loader's own convention for a missing category.

use ndarray::{Array2, ArrayView2};
use serde::Serialize;

use crate::data::FeatureKind;

/// How numeric columns are scaled.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Scale {
    ZScore,
    MinMax,
    None,
}

/// How missing numeric cells are filled.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Impute {
    Mean,
    Median,
    None,
}

/// The `[prep]` table, resolved.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub struct PrepSpec {
    pub scale: Scale,
    pub impute: Impute,
}

/// Why a transform could not be fitted or applied.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum PrepError {
    #[error("preprocessing: {0}")]
    Data(String),
}

/// What `apply` does to one column.
#[derive(Clone, Debug, PartialEq)]
enum ColumnMap {
    /// Fill a NaN with `fill` (when imputing), then `(v - offset) / divisor`,
    /// or 0 for every value when `zero` (a constant column under min-max).
    Numeric {
        fill: Option<f64>,
        scale: Option<(f64, f64)>,
        zero: bool,
    },
    /// Pass through, or 0 when the level was unseen in training.
    Indicator { unseen: bool },
}

/// A transform fitted on one training part.
#[derive(Clone, Debug, PartialEq)]
pub struct Transform {
    spec: PrepSpec,
    columns: Vec<ColumnMap>,
}

impl Transform {
    /// Fit on the training rows `x` whose columns are described by `kinds`.
    pub fn fit(
        spec: PrepSpec,
        kinds: &[FeatureKind],
        x: ArrayView2<'_, f64>,
    ) -> Result<Transform, PrepError> {
        if kinds.len() != x.ncols() {
            return Err(PrepError::Data(format!(
                "the training matrix has {} columns but {} feature kinds were given",
                x.ncols(),
                kinds.len()
            )));
        }
        if x.nrows() == 0 {
            return Err(PrepError::Data(
                "cannot fit on an empty training part".into(),
            ));
        }
        let columns = kinds
            .iter()
            .enumerate()
            .map(|(j, kind)| {
                let col: Vec<f64> = x.column(j).to_vec();
                match kind {
                    FeatureKind::Indicator { .. } => Ok(ColumnMap::Indicator {
                        unseen: col.iter().all(|&v| v == 0.0 || v.is_nan()),
                    }),
                    FeatureKind::Numeric { column } => fit_numeric(spec, column, &col),
                }
            })
            .collect::<Result<Vec<_>, _>>()?;
        Ok(Transform { spec, columns })
    }

    /// The spec this transform was fitted with.
    pub fn spec(&self) -> PrepSpec {
        self.spec
    }

    /// Apply to any rows with the same columns as the training part (a
    /// column beyond those passes through unchanged).
    pub fn apply(&self, x: ArrayView2<'_, f64>) -> Array2<f64> {
        let imputing = self.spec.impute != Impute::None;
        let mut out = x.to_owned();
        for (j, map) in self.columns.iter().enumerate().take(x.ncols()) {
            for v in out.column_mut(j) {
                *v = map.apply(*v, imputing);
            }
        }
        out
    }
}

impl ColumnMap {
    fn apply(&self, v: f64, imputing: bool) -> f64 {
        match *self {
            ColumnMap::Indicator { unseen } => {
                if unseen || (imputing && v.is_nan()) {
                    0.0
                } else {
                    v
                }
            }
            ColumnMap::Numeric { fill, scale, zero } => {
                let v = match fill {
                    Some(f) if v.is_nan() => f,
                    _ => v,
                };
                match scale {
                    _ if v.is_nan() => v,
                    _ if zero => 0.0,
                    Some((offset, divisor)) => (v - offset) / divisor,
                    None => v,
                }
            }
        }
    }
}

fn fit_numeric(spec: PrepSpec, column: &str, col: &[f64]) -> Result<ColumnMap, PrepError> {
    if col.iter().any(|v| v.is_infinite()) {
        return Err(PrepError::Data(format!(
            "column {column} has an infinite value in the training part; no statistic is defined"
        )));
    }
    let observed: Vec<f64> = col.iter().copied().filter(|v| !v.is_nan()).collect();
    let none_observed = || {
        PrepError::Data(format!(
            "column {column} has no observed value in the training part, so it cannot be \
             imputed or scaled; drop it from the features or check the data"
        ))
    };
    let fill = match spec.impute {
        Impute::None => None,
        _ if observed.is_empty() => return Err(none_observed()),
        Impute::Mean => Some(mean(&observed)),
        Impute::Median => Some(median(&observed)),
    };
    let values: Vec<f64> = match fill {
        Some(f) => col
            .iter()
            .map(|&v| if v.is_nan() { f } else { v })
            .collect(),
        None => observed,
    };
    if spec.scale != Scale::None && values.is_empty() {
        return Err(none_observed());
    }
    let (min, max) = min_max(&values);
    let constant = min == max;
    let too_wide = || {
        PrepError::Data(format!(
            "column {column} spans a range too wide to scale in double precision; rescale it \
             in the data"
        ))
    };
    let scale = match spec.scale {
        Scale::None => None,
        Scale::ZScore | Scale::MinMax if constant => Some((min, 1.0)),
        Scale::ZScore => {
            let m = mean(&values);
            Some((m, sample_sd(&values, m).ok_or_else(too_wide)?))
        }
        Scale::MinMax if (max - min).is_finite() => Some((min, max - min)),
        Scale::MinMax => return Err(too_wide()),
    };
    Ok(ColumnMap::Numeric {
        fill,
        scale,
        zero: spec.scale == Scale::MinMax && constant,
    })
}

/// `(min, max)` of non-empty `values` (`(0, 0)` when empty, unused then).
fn min_max(values: &[f64]) -> (f64, f64) {
    let first = values.first().copied().unwrap_or(0.0);
    values
        .iter()
        .fold((first, first), |(lo, hi), &v| (lo.min(v), hi.max(v)))
}

/// Mean in row order, exactly the value when all are equal, and never
/// outside `[min, max]` (rounding could otherwise push it there).
fn mean(values: &[f64]) -> f64 {
    let (min, max) = min_max(values);
    if min == max {
        return min;
    }
    let mut sum = 0.0;
    for &v in values {
        sum += v;
    }
    (sum / values.len() as f64).clamp(min, max)
}

fn median(values: &[f64]) -> f64 {
    let mut sorted = values.to_vec();
    sorted.sort_by(f64::total_cmp);
    let n = sorted.len();
    if n % 2 == 1 {
        sorted[n / 2]
    } else {
        sorted[n / 2 - 1].midpoint(sorted[n / 2])
    }
}

/// Sample sd (n - 1) about `m` for a non-constant column (so at least two
/// values). Deviations are divided by the largest one before squaring, so
/// neither tiny nor huge values underflow or overflow; `None` when a
/// deviation itself overflows.
fn sample_sd(values: &[f64], m: f64) -> Option<f64> {
    let largest = values.iter().fold(0.0_f64, |a, &v| a.max((v - m).abs()));
    if !(largest.is_finite() && largest > 0.0) {
        return None;
    }
    let mut ss = 0.0;
    for &v in values {
        let d = (v - m) / largest;
        ss += d * d;
    }
    Some(largest * (ss / (values.len() - 1) as f64).sqrt())
}

#[cfg(test)]
mod tests;
