//! Everything that can be wrong with a data file, as typed errors.
//!
//! Invariant: every message names the file as the plan resolved it; messages
//! about a cell also name the line (1-based, the header is line 1) and the
//! column; every message ends with what to do about it.

use std::fmt;

/// What a column is for, in the plan's words (used in messages).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ColumnRole {
    /// `[data] target`.
    Target,
    /// `[data] group`.
    Group,
    /// `[data] order`.
    Order,
    /// One of `[data] features`.
    Feature,
}

impl ColumnRole {
    /// The plan key that names a column of this role.
    pub fn key(self) -> &'static str {
        match self {
            ColumnRole::Target => "[data] target",
            ColumnRole::Group => "[data] group",
            ColumnRole::Order => "[data] order",
            ColumnRole::Feature => "[data] features",
        }
    }
}

impl fmt::Display for ColumnRole {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            ColumnRole::Target => "target",
            ColumnRole::Group => "group",
            ColumnRole::Order => "order",
            ColumnRole::Feature => "feature",
        })
    }
}

/// Problems with a data file. Each message names the file and, where it
/// applies, the line and column, and says what to do.
#[derive(Debug, thiserror::Error)]
pub enum DataError {
    #[error(
        "data file {file} does not exist: check `[data] path` (it is read relative to the plan's folder)"
    )]
    NotFound { file: String },

    #[error("failed to read data file {file}: {source}: check that it is a readable file")]
    Unreadable {
        file: String,
        source: std::io::Error,
    },

    #[error(
        "data file {file} is empty: it needs a header row naming the columns, then one row per case"
    )]
    NoHeader { file: String },

    #[error(
        "data file {file} has a header but no data rows: add rows, or point `[data] path` at the right file"
    )]
    NoRows { file: String },

    #[error(
        "data file {file} line {line}: the text is not valid UTF-8: save the file as UTF-8 text"
    )]
    NotUtf8 { file: String, line: u64 },

    #[error("failed to parse data file {file}: {message}")]
    Csv { file: String, message: String },

    #[error(
        "data file {file} line {line}: column name `{column}` appears twice in the header (columns {first} and {second}): rename one of them"
    )]
    DuplicateHeader {
        file: String,
        line: u64,
        column: String,
        first: usize,
        second: usize,
    },

    #[error(
        "data file {file} line {line}: {cells} cells, but the header has {expected}: fix that row (a stray or missing comma, or an unclosed quote, is the usual cause)"
    )]
    Ragged {
        file: String,
        line: u64,
        cells: usize,
        expected: usize,
    },

    #[error("data file {file} has no column `{column}` (the {role} named in `{}`): {hint}", .role.key())]
    MissingColumn {
        file: String,
        role: ColumnRole,
        column: String,
        hint: String,
    },

    #[error(
        "`[data] features` lists `{column}` more than once (data file {file}): list each column once"
    )]
    DuplicateFeature { file: String, column: String },

    #[error(
        "`[data] features` includes the target column `{column}` (data file {file}): remove it from `features`; a model must not see its own answer"
    )]
    FeatureIsTarget { file: String, column: String },

    #[error(
        "`categorical` names `{column}`, which is not among `[data] features` (data file {file}): add it to `features` or remove it from `categorical`"
    )]
    CategoricalNotFeature { file: String, column: String },

    #[error(
        "data file {file} line {line}, column `{column}`: `{value}` is not a number: declare it in `categorical = [...]` or drop it from `features`"
    )]
    NotNumeric {
        file: String,
        line: u64,
        column: String,
        value: String,
    },

    #[error(
        "data file {file} line {line}, column `{column}`: `{value}` is not a finite number: write a missing value as an empty cell or `NA`, or correct the value"
    )]
    NonFinite {
        file: String,
        line: u64,
        column: String,
        value: String,
    },

    #[error(
        "data file {file}: {count} missing feature cells (empty or `NA`), the first at line {line}, column `{column}`: set `[prep] impute = \"mean\"` or \"median\", or remove the rows"
    )]
    MissingCells {
        file: String,
        count: usize,
        line: u64,
        column: String,
    },

    #[error(
        "data file {file} line {line}: the {role} column `{column}` is empty there: every row needs a {role} value; fill it in or remove the row"
    )]
    MissingValue {
        file: String,
        line: u64,
        role: ColumnRole,
        column: String,
    },

    #[error(
        "data file {file} line {line}, column `{column}`: `{value}` is not a finite number, and the order column must be numeric (a time or sequence index): correct the value or choose another `[data] order` column"
    )]
    OrderNotNumeric {
        file: String,
        line: u64,
        column: String,
        value: String,
    },

    #[error(
        "data file {file} line {line}, column `{column}`: `{value}` is not a finite number, and a regression target must be numeric: correct the value, or set `task = \"classification\"` if the column holds classes"
    )]
    TargetNotNumeric {
        file: String,
        line: u64,
        column: String,
        value: String,
    },

    #[error(
        "data file {file}: the target column `{column}` has a single class (`{class}`) in every row: classification needs at least two classes; check `[data] target`"
    )]
    SingleClass {
        file: String,
        column: String,
        class: String,
    },
}

/// A cell's text as shown in a message: at most 40 characters, so that a
/// runaway cell (an unclosed quote swallowing the file) keeps messages short.
pub(crate) fn shown(value: &str) -> String {
    const LIMIT: usize = 40;
    match value.char_indices().nth(LIMIT) {
        Some((cut, _)) => format!("{}...", &value[..cut]),
        None => value.to_owned(),
    }
}
