//! Reading a CSV file into a [`Dataset`]: the file is read into memory once,
//! hashed, then parsed from those bytes, so the fingerprint describes exactly
//! the bytes that were parsed.
//!
//! Invariants: a header row is required; the matrix holds `spec.features` in
//! order with categorical columns expanded in place; row hashes cover every
//! cell of a row, used by the plan or not.

use std::fs;
use std::path::PathBuf;

use csv::ByteRecord;

use super::Dataset;
use super::error::DataError;
use super::header::{BOM, csv_reader, io_error, line_at, next_record, offset_of, parse_header};
use super::layout::Layout;
use super::reading::Reading;

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

/// Load a data file as the plan describes it.
pub fn load(spec: &DataSpec) -> Result<Dataset, DataError> {
    let file = spec.path.display().to_string();
    let bytes = fs::read(&spec.path).map_err(|e| io_error(&file, e))?;
    let file_hash = blake3::hash(&bytes).to_hex().to_string();
    let (header, layout, reading) = read_rows(spec, &file, &bytes)?;
    // The raw bytes are no longer needed: free them before the matrix is built.
    drop(bytes);
    reading.finish(&layout, header, file_hash)
}

fn read_rows(
    spec: &DataSpec,
    file: &str,
    bytes: &[u8],
) -> Result<(Vec<String>, Layout, Reading), DataError> {
    let body = bytes.strip_prefix(BOM).unwrap_or(bytes);
    let mut reader = csv_reader(body);
    let mut record = ByteRecord::new();
    if !next_record(&mut reader, &mut record, file)? {
        return Err(DataError::NoHeader {
            file: file.to_owned(),
        });
    }
    let header = parse_header(&record, file, line_at(body, offset_of(&record)))?;
    let layout = Layout::new(spec, &header, file)?;
    let mut reading = Reading::new(&layout, line_count(body));
    while next_record(&mut reader, &mut record, file)? {
        reading.push(&layout, &record, body)?;
    }
    reading.check_complete(&layout, body)?;
    Ok((header, layout, reading))
}

/// An upper bound on the number of data rows, to size the stores once.
fn line_count(body: &[u8]) -> usize {
    body.iter().filter(|&&b| b == b'\n').count() + 1
}
