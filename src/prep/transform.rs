//! The fitted transform. (Being built: see the learners issue.)

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

/// A transform fitted on one training part.
#[derive(Clone, Debug, PartialEq)]
pub struct Transform {
    spec: PrepSpec,
}

impl Transform {
    /// Fit on the training rows `x` whose columns are described by `kinds`.
    pub fn fit(
        spec: PrepSpec,
        kinds: &[FeatureKind],
        x: ArrayView2<'_, f64>,
    ) -> Result<Transform, PrepError> {
        let _ = (kinds, x);
        Ok(Transform { spec })
    }

    /// Apply to any rows with the same columns.
    pub fn apply(&self, x: ArrayView2<'_, f64>) -> Array2<f64> {
        let _ = self.spec;
        x.to_owned()
    }
}
