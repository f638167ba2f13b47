//! Reading a CSV file into a [`Dataset`].

use std::path::{Path, PathBuf};

use super::Dataset;

/// What the plan says about the data file.
#[derive(Clone, Debug, PartialEq)]
pub struct DataSpec {
    /// The file, already resolved against the plan's folder.
    pub path: PathBuf,
    /// Target column name.
    pub target: String,
    /// `true` for classification, `false` for regression.
    pub classification: bool,
    /// Feature columns, after glob expansion, in header order.
    pub features: Vec<String>,
    /// Which of `features` are categorical (one-hot encoded).
    pub categorical: Vec<String>,
    /// Group column name.
    pub group: Option<String>,
    /// Order column name.
    pub order: Option<String>,
    /// Whether missing feature cells are allowed (`[prep] impute` is set).
    pub allow_missing: bool,
}

/// Problems with a data file. Each message names the file and, where it
/// applies, the line and column, and says what to do.
#[derive(Debug, thiserror::Error)]
pub enum DataError {
    /// Placeholder until the loader lands.
    #[error("data loading is not built yet: {0}")]
    NotBuilt(String),
}

/// Load a data file as the plan describes it.
pub fn load(spec: &DataSpec) -> Result<Dataset, DataError> {
    let _ = Path::new(&spec.path);
    Err(DataError::NotBuilt(spec.path.display().to_string()))
}

/// Read only the header row of a data file.
pub fn read_header(path: &Path) -> Result<Vec<String>, DataError> {
    Err(DataError::NotBuilt(path.display().to_string()))
}
