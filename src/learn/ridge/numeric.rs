//! Numerics shared by `ridge` and `logistic`: a singular value decomposition
//! with a rank tolerance, fixed-order products, a portable `exp` and `ln`, and
//! the input checks every learner here makes.
//!
//! Determinism: every operation that feeds a result is IEEE add, subtract,
//! multiply, divide or square root (each correctly rounded everywhere), done
//! in a fixed order, without fused multiply-add. What was checked, and why:
//!
//! - nalgebra 0.35 (`std` only): the SVD (`SVD::try_new_unordered`) runs
//!   Householder bidiagonalisation (`linalg/householder.rs`,
//!   `geometry/reflection.rs`: `dotc`, `axpy`, `gerc` and a matrix-times-vector
//!   `mul_to`), builds `U` and `V^T` by the same reflections
//!   (`linalg/bidiagonal.rs`), then implicit-shift QR with Givens rotations
//!   (`linalg/svd.rs`, `linalg/givens.rs`). The only route to the
//!   `matrixmultiply` crate (which picks AVX/FMA kernels at run time) is
//!   `gemm` in `base/blas_uninit.rs`, taken only when the output and both
//!   factors have more than 5 rows and columns; every product above has a
//!   one-column output, so it falls back to nalgebra's own fixed loops
//!   (`gemv` via `axcpy`). We never call nalgebra's own products (`*`,
//!   `mul_to`, `ad_mul`, `solve`) ourselves: products are the loops below.
//! - nalgebra's 2x2 step calls `f64::hypot`. On glibc 2.36 x86_64 (this
//!   machine) `hypot` is plain SSE2 code, not an IFUNC (checked with
//!   `readelf -Ws libm.so.6` and `objdump`); `exp` and `log` *are* IFUNCs
//!   there (FMA variants chosen at load time), which is why [`exp`] and [`ln`]
//!   below are our own. Another C library may round `hypot` differently:
//!   results are then reproducible per platform, not across platforms.

use nalgebra::DMatrix;
use ndarray::ArrayView2;

use crate::learn::LearnError;

/// A thin SVD `A = U diag(s) V^T` of an `n x p` matrix, with its rank
/// tolerance. Components are in nalgebra's (deterministic) order, unsorted.
pub(in crate::learn) struct Svd {
    /// `n x m`, `m = min(n, p)` (0 when `A` is empty).
    pub u: DMatrix<f64>,
    /// `m` singular values, each `>= 0`.
    pub s: Vec<f64>,
    /// `m x p`.
    pub v_t: DMatrix<f64>,
    /// Singular values `<= tol` count as exact zeros:
    /// `tol = max(s) * max(n, p) * f64::EPSILON`, the default of
    /// `numpy.linalg.matrix_rank` (numpy docs, "Notes").
    pub tol: f64,
}

impl Svd {
    /// Decompose `a`. `None` when the iteration cap is reached (not seen in
    /// practice; the caller reports it).
    pub fn new(a: DMatrix<f64>) -> Option<Svd> {
        let (n, p) = a.shape();
        if n == 0 || p == 0 {
            let m = 0;
            return Some(Svd {
                u: DMatrix::zeros(n, m),
                s: Vec::new(),
                v_t: DMatrix::zeros(m, p),
                tol: 0.0,
            });
        }
        let cap = 200 * n.min(p) + 1000;
        let svd = nalgebra::SVD::try_new_unordered(a, true, true, 5.0 * f64::EPSILON, cap)?;
        let (u, v_t) = (svd.u?, svd.v_t?);
        let s: Vec<f64> = svd.singular_values.iter().copied().collect();
        let max = s.iter().fold(0.0_f64, |m, &v| m.max(v));
        let tol = max * (n.max(p) as f64) * f64::EPSILON;
        Some(Svd { u, s, v_t, tol })
    }

    /// How many singular values exceed the tolerance.
    pub fn rank(&self) -> usize {
        self.s.iter().filter(|&&v| v > self.tol).count()
    }

    /// `sum_i v_i * f(s_i) * (u_i . b)` over components above the tolerance,
    /// in component order; `b` has `n` entries, the result `p`.
    pub fn apply(&self, b: &[f64], f: impl Fn(f64) -> f64) -> Vec<f64> {
        self.apply_projected(&self.project(b), f)
    }

    /// `u_i . b` for every component (0 for those at or below the
    /// tolerance), each summed in row order: the part of [`Svd::apply`]
    /// that does not depend on `f`.
    pub fn project(&self, b: &[f64]) -> Vec<f64> {
        self.s
            .iter()
            .enumerate()
            .map(|(i, &s)| {
                let mut ub = 0.0;
                if s > self.tol {
                    for (r, &bv) in b.iter().enumerate() {
                        ub += self.u[(r, i)] * bv;
                    }
                }
                ub
            })
            .collect()
    }

    /// [`Svd::apply`] from the projections [`Svd::project`] gave.
    pub fn apply_projected(&self, projected: &[f64], f: impl Fn(f64) -> f64) -> Vec<f64> {
        let p = self.v_t.ncols();
        let mut out = vec![0.0; p];
        for (i, (&s, &ub)) in self.s.iter().zip(projected).enumerate() {
            if s <= self.tol {
                continue;
            }
            let w = f(s) * ub;
            for (j, o) in out.iter_mut().enumerate() {
                *o += self.v_t[(i, j)] * w;
            }
        }
        out
    }
}

/// Column means of `x`, each summed in row order.
pub(in crate::learn) fn column_means(x: ArrayView2<'_, f64>) -> Vec<f64> {
    let n = x.nrows();
    (0..x.ncols())
        .map(|j| {
            let mut sum = 0.0;
            for i in 0..n {
                sum += x[[i, j]];
            }
            if n == 0 { 0.0 } else { sum / n as f64 }
        })
        .collect()
}

/// Sample standard deviation (n - 1) of each column about `means`, in row
/// order; 1 for a column that is constant (or has one row), so dividing by it
/// is always defined.
pub(in crate::learn) fn column_scales(x: ArrayView2<'_, f64>, means: &[f64]) -> Vec<f64> {
    let n = x.nrows();
    means
        .iter()
        .enumerate()
        .map(|(j, &m)| {
            let col = x.column(j);
            if n < 2 || col.iter().all(|&v| v == col[0]) {
                return 1.0;
            }
            let mut ss = 0.0;
            for &v in col {
                ss += (v - m) * (v - m);
            }
            (ss / (n - 1) as f64).sqrt()
        })
        .collect()
}

/// Check what every learner here needs: at least one training row, as many
/// targets as rows, finite features, and queries with the training columns.
pub(in crate::learn) fn check_inputs(
    learner: &'static str,
    x: ArrayView2<'_, f64>,
    targets: usize,
    queries: &[ArrayView2<'_, f64>],
) -> Result<(), LearnError> {
    let fail = |message: String| Err(LearnError::Data { learner, message });
    if x.nrows() == 0 {
        return fail("the training part has no rows".into());
    }
    if targets != x.nrows() {
        return fail(format!(
            "the training part has {} rows but {targets} targets",
            x.nrows()
        ));
    }
    if let Some(j) = first_bad_column(x) {
        return fail(format!(
            "the training part has a missing or non-finite value in feature column {j}; set [prep] impute or clean the data"
        ));
    }
    for (q, m) in queries.iter().enumerate() {
        if m.ncols() != x.ncols() {
            return fail(format!(
                "query matrix {q} has {} columns but the training part has {}",
                m.ncols(),
                x.ncols()
            ));
        }
        if let Some(j) = first_bad_column(*m) {
            return fail(format!(
                "query matrix {q} has a missing or non-finite value in feature column {j}; set [prep] impute or clean the data"
            ));
        }
    }
    Ok(())
}

fn first_bad_column(x: ArrayView2<'_, f64>) -> Option<usize> {
    let mut first: Option<usize> = None;
    for row in x.rows() {
        for (j, v) in row.iter().enumerate() {
            if !v.is_finite() && first.is_none_or(|f| j < f) {
                first = Some(j);
            }
        }
    }
    first
}

/// Read a float setting that must be finite and at least 0.
pub(in crate::learn) fn read_nonnegative(
    learner: &'static str,
    settings: &crate::learn::Settings,
    name: &str,
) -> Result<f64, LearnError> {
    let fail = |message: &str| LearnError::Setting {
        learner,
        setting: name.to_string(),
        message: message.to_string(),
    };
    let value = settings
        .get(name)
        .ok_or_else(|| fail("missing; give a number at least 0"))?;
    match value.as_f64() {
        Some(v) if v.is_finite() && v >= 0.0 => Ok(v),
        _ => Err(fail("must be a finite number at least 0")),
    }
}

const LN2_HI: f64 = f64::from_bits(0x3fe6_2e42_fee0_0000); // high bits of ln 2; k * LN2_HI is exact for |k| < 2^21
const LN2_LO: f64 = f64::from_bits(0x3dea_39ef_3579_3c76); // ln 2 - LN2_HI (fdlibm's split, common practice)

/// `e^x` from IEEE basic operations only, within a few units in the last
/// place: `x = k ln 2 + r`, `|r| <= ln 2 / 2`, Taylor series of `e^r` to
/// degree 15 (truncation below 1e-19), times `2^k`.
pub(in crate::learn) fn exp(x: f64) -> f64 {
    if x.is_nan() {
        return x;
    }
    if x > 709.782712893384 {
        return f64::INFINITY;
    }
    if x < -745.1332191019412 {
        return 0.0;
    }
    let k = (x * std::f64::consts::LOG2_E).round();
    let r = (x - k * LN2_HI) - k * LN2_LO;
    let mut poly = 1.0;
    for d in (1..=15).rev() {
        poly = 1.0 + poly * r / d as f64;
    }
    scale_by_power_of_two(poly, k as i32)
}

/// `y * 2^k` for the `k` that [`exp`] produces (`-1077 ..= 1024`).
fn scale_by_power_of_two(y: f64, k: i32) -> f64 {
    let pow2 = |e: i32| f64::from_bits(((e + 1023) as u64) << 52);
    if k > 1023 {
        y * pow2(1023) * pow2(k - 1023)
    } else if k < -1022 {
        y * pow2(-1022) * pow2(k + 1022)
    } else {
        y * pow2(k)
    }
}

/// Natural logarithm from IEEE basic operations only, within a few units in
/// the last place, for `x > 0` finite (NaN for `x < 0` or NaN, `-inf` at 0):
/// `x = m 2^e` with `m` in `[sqrt(1/2), sqrt(2))`, `ln m = 2 atanh(s)`,
/// `s = (m - 1)/(m + 1)`, series to `s^23`.
pub(in crate::learn) fn ln(x: f64) -> f64 {
    if x.is_nan() || x < 0.0 {
        return f64::NAN;
    }
    if x == 0.0 {
        return f64::NEG_INFINITY;
    }
    if x.is_infinite() {
        return x;
    }
    let (mut m, mut e) = split_exponent(x);
    if m > std::f64::consts::SQRT_2 {
        m /= 2.0;
        e += 1;
    }
    let s = (m - 1.0) / (m + 1.0);
    let s2 = s * s;
    let mut series = 0.0;
    for k in (1..=11).rev() {
        series = (series + 1.0 / (2 * k + 1) as f64) * s2;
    }
    let ln_m = 2.0 * s + 2.0 * s * series;
    let e = e as f64;
    e * LN2_HI + (ln_m + e * LN2_LO)
}

/// `x = m * 2^e` with `m` in `[1, 2)`, for finite `x > 0`.
fn split_exponent(x: f64) -> (f64, i32) {
    let (x, bias) = if x < f64::MIN_POSITIVE {
        (x * f64::from_bits((1023_u64 + 54) << 52), -54)
    } else {
        (x, 0)
    };
    let bits = x.to_bits();
    let e = ((bits >> 52) & 0x7ff) as i32 - 1023 + bias;
    let m = f64::from_bits((bits & 0x000f_ffff_ffff_ffff) | (1023_u64 << 52));
    (m, e)
}

/// Test data readers shared by the learners' tests.
#[cfg(test)]
pub(in crate::learn) mod testdata {
    use std::path::Path;

    use ndarray::Array2;

    /// Rows of tests/data/penguins.csv with all of `features` and `target`
    /// present; target codes in sorted label order (as the data loader codes them).
    pub(in crate::learn) fn penguins(
        target: &str,
        features: &[&str],
    ) -> (Array2<f64>, Vec<u32>, Vec<String>) {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/penguins.csv");
        let mut reader = csv::Reader::from_path(path).expect("tests/data/penguins.csv is readable");
        let header = reader.headers().expect("a header").clone();
        let col = |name: &str| header.iter().position(|h| h == name).expect("a column");
        let (t, fs): (usize, Vec<usize>) = (col(target), features.iter().map(|f| col(f)).collect());
        let mut x = Vec::new();
        let mut labels = Vec::new();
        for record in reader.records() {
            let r = record.expect("a record");
            if r[t] == *"NA" || fs.iter().any(|&j| r[j] == *"NA") {
                continue;
            }
            labels.push(r[t].to_string());
            x.extend(fs.iter().map(|&j| r[j].parse::<f64>().expect("a number")));
        }
        let mut names = labels.clone();
        names.sort();
        names.dedup();
        let codes = labels
            .iter()
            .map(|l| names.iter().position(|n| n == l).unwrap_or(0) as u32)
            .collect();
        let n = labels.len();
        (
            Array2::from_shape_vec((n, fs.len()), x).expect("a matrix"),
            codes,
            names,
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ulps(a: f64, b: f64) -> u64 {
        (a.to_bits() as i64 - b.to_bits() as i64).unsigned_abs()
    }

    #[test]
    fn exp_and_ln_agree_with_the_platform_library_to_a_few_ulps() {
        // Reference: the platform libm (glibc 2.36 here), documented to
        // within 1 ulp; ours is allowed 3.
        for i in -2000..=2000 {
            let x = i as f64 * 0.3517;
            if x.abs() < 700.0 {
                assert!(
                    ulps(exp(x), x.exp()) <= 3,
                    "exp({x}) = {} vs {}",
                    exp(x),
                    x.exp()
                );
            }
            let y = (i as f64 * 0.0173).exp();
            assert!(
                ulps(ln(y), y.ln()) <= 3,
                "ln({y}) = {} vs {}",
                ln(y),
                y.ln()
            );
        }
    }

    #[test]
    fn exp_and_ln_edge_values() {
        // IEEE 754 and the definitions of exp and ln (common practice).
        assert_eq!(exp(0.0), 1.0);
        assert_eq!(exp(-800.0), 0.0);
        assert_eq!(exp(800.0), f64::INFINITY);
        assert_eq!(ln(1.0), 0.0);
        assert_eq!(ln(0.0), f64::NEG_INFINITY);
        assert!(ln(-1.0).is_nan());
        assert!(ulps(ln(2.0), std::f64::consts::LN_2) <= 1);
        assert!(ulps(exp(1.0), std::f64::consts::E) <= 1);
        let tiny = f64::from_bits(1); // smallest subnormal, 2^-1074
        assert!(ulps(ln(tiny), -1074.0 * std::f64::consts::LN_2) <= 2);
        assert!(exp(-740.0) > 0.0 && exp(-740.0) < 1e-320);
    }

    #[test]
    fn svd_rank_sees_a_duplicated_column() {
        let a = DMatrix::from_row_slice(4, 3, &[1., 1., 2., 2., 2., 0., 3., 3., 1., 4., 4., 5.]);
        let svd = Svd::new(a).expect("converges");
        assert_eq!(svd.rank(), 2);
    }

    #[test]
    fn svd_of_an_empty_matrix_has_no_components() {
        let svd = Svd::new(DMatrix::zeros(0, 3)).expect("trivial");
        assert_eq!((svd.rank(), svd.apply(&[], |s| 1.0 / s)), (0, vec![0.0; 3]));
    }
}
