//! Which header column plays which part: the plan's column names checked
//! against the header and turned into indices once, before any row is read.
//!
//! Invariants: every named column exists; features are listed once, never
//! include the target, and keep the plan's order; numeric and categorical
//! features are numbered separately, in that order.

use std::collections::BTreeSet;

use super::DataSpec;
use super::columns::Source;
use super::error::{ColumnRole, DataError};
use super::header::find_column;

/// The plan's columns as header indices.
#[derive(Debug)]
pub(crate) struct Layout {
    /// The file as the plan resolved it, for messages.
    pub(crate) file: String,
    /// Number of header columns; every row must have this many cells.
    pub(crate) width: usize,
    pub(crate) classification: bool,
    pub(crate) allow_missing: bool,
    /// `(header index, name)` of the target.
    pub(crate) target: (usize, String),
    pub(crate) group: Option<(usize, String)>,
    pub(crate) order: Option<(usize, String)>,
    /// Header index of each feature, in `features` order.
    pub(crate) feature_columns: Vec<usize>,
    /// Name and source of each feature, in `features` order.
    pub(crate) sources: Vec<(String, Source)>,
    pub(crate) numeric_count: usize,
    pub(crate) categorical_count: usize,
}

impl Layout {
    pub(crate) fn new(spec: &DataSpec, header: &[String], file: &str) -> Result<Self, DataError> {
        let find = |name: &str, role| {
            find_column(header, name, role, file).map(|index| (index, name.to_owned()))
        };
        let target = find(&spec.target, ColumnRole::Target)?;
        let group = spec
            .group
            .as_deref()
            .map(|name| find(name, ColumnRole::Group))
            .transpose()?;
        let order = spec
            .order
            .as_deref()
            .map(|name| find(name, ColumnRole::Order))
            .transpose()?;
        check_categorical(spec, file)?;
        let (feature_columns, sources) = features(spec, header, file)?;
        let numeric_count = sources
            .iter()
            .filter(|(_, s)| matches!(s, Source::Numeric(_)))
            .count();
        Ok(Layout {
            file: file.to_owned(),
            width: header.len(),
            classification: spec.classification,
            allow_missing: spec.allow_missing,
            target,
            group,
            order,
            categorical_count: sources.len() - numeric_count,
            feature_columns,
            sources,
            numeric_count,
        })
    }
}

fn check_categorical(spec: &DataSpec, file: &str) -> Result<(), DataError> {
    match spec.categorical.iter().find(|c| !spec.features.contains(c)) {
        Some(column) => Err(DataError::CategoricalNotFeature {
            file: file.to_owned(),
            column: column.clone(),
        }),
        None => Ok(()),
    }
}

type Features = (Vec<usize>, Vec<(String, Source)>);

fn features(spec: &DataSpec, header: &[String], file: &str) -> Result<Features, DataError> {
    let mut seen = BTreeSet::new();
    let (mut columns, mut sources) = (Vec::new(), Vec::new());
    let (mut numeric, mut categorical) = (0, 0);
    for name in &spec.features {
        let error = |column: &String| (file.to_owned(), column.clone());
        if !seen.insert(name.as_str()) {
            let (file, column) = error(name);
            return Err(DataError::DuplicateFeature { file, column });
        }
        if *name == spec.target {
            let (file, column) = error(name);
            return Err(DataError::FeatureIsTarget { file, column });
        }
        columns.push(find_column(header, name, ColumnRole::Feature, file)?);
        let source = if spec.categorical.contains(name) {
            categorical += 1;
            Source::Categorical(categorical - 1)
        } else {
            numeric += 1;
            Source::Numeric(numeric - 1)
        };
        sources.push((name.clone(), source));
    }
    Ok((columns, sources))
}
