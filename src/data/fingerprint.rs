//! The data fingerprint: BLAKE3 of the file's bytes plus one BLAKE3 per row
//! over the row's parsed cell values, so that re-ordering rows changes the
//! file hash but not the multiset of row hashes.

use serde::Serialize;

/// File hash and per-row content hashes (row order = file order).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Fingerprint {
    /// BLAKE3 of the file's bytes, lowercase hex.
    pub file: String,
    /// BLAKE3 of each row's cells, lowercase hex, in file order.
    pub rows: Vec<String>,
}

/// Hash one row's cells, in column order. Each cell is the trimmed text as
/// parsed by the CSV reader (quotes removed), preceded by its byte length so
/// that `a,bc` and `ab,c` differ.
pub fn row_hash(cells: &[&str]) -> String {
    let mut hasher = blake3::Hasher::new();
    hasher.update(&(cells.len() as u64).to_le_bytes());
    for cell in cells {
        let cell = cell.trim();
        hasher.update(&(cell.len() as u64).to_le_bytes());
        hasher.update(cell.as_bytes());
    }
    hasher.finalize().to_hex().to_string()
}
