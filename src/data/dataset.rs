//! The loaded data set: features as a row-major matrix plus the columns that
//! steer resampling (target, group, order).

use ndarray::Array2;
use serde::Serialize;

use super::Fingerprint;

/// The target column, coded.
#[derive(Clone, Debug, PartialEq)]
pub enum Target {
    /// Class labels: `codes[row]` indexes `names`, which is sorted.
    Classes { codes: Vec<u32>, names: Vec<String> },
    /// A numeric response.
    Values(Vec<f64>),
}

/// Where a matrix column came from.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum FeatureKind {
    /// A numeric column of the file.
    Numeric { column: String },
    /// One level of a one-hot encoded categorical column (1.0 when the cell
    /// equals `level`, 0.0 otherwise; all zeros in the block when missing).
    Indicator { column: String, level: String },
}

/// A data file, loaded.
#[derive(Clone, Debug)]
pub struct Dataset {
    /// The file's header, in file order.
    pub header: Vec<String>,
    /// Names of the matrix columns (a categorical column `c` with level `x`
    /// becomes `c=x`).
    pub feature_names: Vec<String>,
    /// One entry per matrix column.
    pub feature_kinds: Vec<FeatureKind>,
    /// rows x features, row-major; NaN marks a missing cell.
    pub features: Array2<f64>,
    /// The coded target.
    pub target: Target,
    /// Group code per row (codes index `group_names`, sorted), when the plan
    /// names a group column.
    pub group: Option<Vec<u32>>,
    /// Group names in code order.
    pub group_names: Vec<String>,
    /// Order value per row, when the plan names an order column.
    pub order: Option<Vec<f64>>,
    /// Number of missing feature cells.
    pub missing_cells: usize,
    /// File and row hashes.
    pub fingerprint: Fingerprint,
}

impl Dataset {
    /// Number of rows (the header excluded).
    pub fn rows(&self) -> usize {
        self.features.nrows()
    }

    /// Class codes per row, when the task is classification.
    pub fn classes(&self) -> Option<&[u32]> {
        match &self.target {
            Target::Classes { codes, .. } => Some(codes),
            Target::Values(_) => None,
        }
    }

    /// Number of classes (0 for regression).
    pub fn class_count(&self) -> usize {
        match &self.target {
            Target::Classes { names, .. } => names.len(),
            Target::Values(_) => 0,
        }
    }
}
