//! Row-by-row reading: each data record is checked, hashed over all of its
//! cells, and its target, group, order and feature cells are stored; at the
//! end the stores become a [`Dataset`].
//!
//! Invariants: a cell is its text trimmed of surrounding whitespace; empty
//! and `NA` are missing; `nan` and `inf` written in a numeric cell are errors,
//! not missing; a missing target, group or order cell is always an error;
//! rows are stored in file order; no per-cell allocation except for a
//! level's first appearance.

use csv::ByteRecord;

use super::columns::{Coded, Levels, Source, assemble};
use super::error::{ColumnRole, DataError, shown};
use super::header::{line_at, offset_of};
use super::layout::Layout;
use super::{Dataset, Fingerprint, Target};
use crate::data::fingerprint::RowHasher;

/// One data record with its text checked as UTF-8.
struct Row<'a> {
    record: &'a ByteRecord,
    text: &'a str,
    /// The whole file, to count the line of an error only when there is one.
    body: &'a [u8],
}

impl<'a> Row<'a> {
    /// The record's cells as one UTF-8 string, or `None`. Each field must
    /// also start on a character boundary: a multi-byte character split by
    /// a delimiter is invalid in the file even if the joined fields are not.
    fn new(record: &'a ByteRecord, body: &'a [u8]) -> Option<Self> {
        let text = std::str::from_utf8(record.as_slice()).ok()?;
        let aligned = (0..record.len()).all(|i| {
            record
                .range(i)
                .is_some_and(|r| text.is_char_boundary(r.start))
        });
        aligned.then_some(Row { record, text, body })
    }

    fn line(&self) -> u64 {
        line_at(self.body, offset_of(self.record))
    }

    fn cell(&self, index: usize) -> &'a str {
        self.record
            .range(index)
            .and_then(|r| self.text.get(r))
            .unwrap_or("")
            .trim()
    }
}

fn is_missing(cell: &str) -> bool {
    cell.is_empty() || cell == "NA"
}

/// Why a cell is not a usable number.
enum BadNumber {
    NotNumber,
    NotFinite,
}

fn number(cell: &str) -> Result<f64, BadNumber> {
    match cell.parse::<f64>() {
        Ok(value) if value.is_finite() => Ok(value),
        Ok(_) => Err(BadNumber::NotFinite),
        Err(_) => Err(BadNumber::NotNumber),
    }
}

/// The coded target while it is read.
enum TargetStore {
    Classes(Levels),
    Values(Vec<f64>),
}

/// Everything stored so far.
pub(crate) struct Reading {
    rows: usize,
    numeric: Vec<f64>,
    categorical: Vec<Levels>,
    target: TargetStore,
    group: Option<Levels>,
    order: Option<Vec<f64>>,
    hashes: Vec<String>,
    hasher: RowHasher,
    missing: usize,
    /// Byte offset of the row and feature index (in `features` order) of
    /// the first missing cell.
    first_missing: Option<(u64, usize)>,
}

impl Reading {
    /// Empty stores sized for about `rows` rows.
    pub(crate) fn new(layout: &Layout, rows: usize) -> Self {
        let target = match layout.classification {
            true => TargetStore::Classes(Levels::with_capacity(rows)),
            false => TargetStore::Values(Vec::with_capacity(rows)),
        };
        Reading {
            rows: 0,
            numeric: Vec::with_capacity(rows.saturating_mul(layout.numeric_count)),
            categorical: (0..layout.categorical_count)
                .map(|_| Levels::with_capacity(rows))
                .collect(),
            target,
            group: layout.group.as_ref().map(|_| Levels::with_capacity(rows)),
            order: layout.order.as_ref().map(|_| Vec::with_capacity(rows)),
            hashes: Vec::with_capacity(rows),
            hasher: RowHasher::default(),
            missing: 0,
            first_missing: None,
        }
    }

    /// Check, hash and store one data record.
    pub(crate) fn push(
        &mut self,
        layout: &Layout,
        record: &ByteRecord,
        body: &[u8],
    ) -> Result<(), DataError> {
        if record.len() != layout.width {
            return Err(DataError::Ragged {
                file: layout.file.clone(),
                line: line_at(body, offset_of(record)),
                cells: record.len(),
                expected: layout.width,
            });
        }
        let row = Row::new(record, body).ok_or_else(|| DataError::NotUtf8 {
            file: layout.file.clone(),
            line: line_at(body, offset_of(record)),
        })?;
        let hash = self.hasher.hash((0..layout.width).map(|i| row.cell(i)));
        self.hashes.push(hash);
        self.push_target(layout, &row)?;
        self.push_group_and_order(layout, &row)?;
        self.push_features(layout, &row)?;
        self.rows += 1;
        Ok(())
    }

    fn push_target(&mut self, layout: &Layout, row: &Row) -> Result<(), DataError> {
        let (index, name) = &layout.target;
        let cell = required(layout, row, *index, name, ColumnRole::Target)?;
        match &mut self.target {
            TargetStore::Classes(levels) => levels.push(cell),
            TargetStore::Values(values) => {
                values.push(number(cell).map_err(|_| DataError::TargetNotNumeric {
                    file: layout.file.clone(),
                    line: row.line(),
                    column: name.clone(),
                    value: shown(cell),
                })?)
            }
        }
        Ok(())
    }

    fn push_group_and_order(&mut self, layout: &Layout, row: &Row) -> Result<(), DataError> {
        if let (Some(levels), Some((index, name))) = (&mut self.group, &layout.group) {
            levels.push(required(layout, row, *index, name, ColumnRole::Group)?);
        }
        if let (Some(values), Some((index, name))) = (&mut self.order, &layout.order) {
            let cell = required(layout, row, *index, name, ColumnRole::Order)?;
            values.push(number(cell).map_err(|_| DataError::OrderNotNumeric {
                file: layout.file.clone(),
                line: row.line(),
                column: name.clone(),
                value: shown(cell),
            })?);
        }
        Ok(())
    }

    fn push_features(&mut self, layout: &Layout, row: &Row) -> Result<(), DataError> {
        for (slot, (&index, (name, source))) in layout
            .feature_columns
            .iter()
            .zip(&layout.sources)
            .enumerate()
        {
            let cell = row.cell(index);
            let missing = is_missing(cell);
            if missing {
                self.missing += 1;
                self.first_missing
                    .get_or_insert((offset_of(row.record), slot));
            }
            match (*source, missing) {
                (Source::Numeric(_), true) => self.numeric.push(f64::NAN),
                (Source::Numeric(_), false) => {
                    self.numeric.push(feature_number(layout, row, name, cell)?)
                }
                (Source::Categorical(c), true) => self.categorical[c].push_missing(),
                (Source::Categorical(c), false) => self.categorical[c].push(cell),
            }
        }
        Ok(())
    }

    /// Turn the stores into a data set, or say why the whole file is unusable.
    pub(crate) fn finish(
        self,
        layout: &Layout,
        header: Vec<String>,
        file_hash: String,
    ) -> Result<Dataset, DataError> {
        let target = finish_target(self.target, layout)?;
        let (group, group_names) = match self.group.map(Levels::finish) {
            Some((codes, names)) => (Some(codes), names),
            None => (None, Vec::new()),
        };
        let coded: Vec<Coded> = self
            .categorical
            .into_iter()
            .map(|levels| {
                let (codes, levels) = levels.finish();
                Coded { codes, levels }
            })
            .collect();
        let matrix = assemble(&layout.sources, self.numeric, &coded, self.rows);
        Ok(Dataset {
            header,
            feature_names: matrix.names,
            feature_kinds: matrix.kinds,
            features: matrix.values,
            target,
            group,
            group_names,
            order: self.order,
            missing_cells: self.missing,
            fingerprint: Fingerprint {
                file: file_hash,
                rows: self.hashes,
            },
        })
    }

    /// Fail when there are no rows, or missing feature cells the plan does
    /// not allow (`body` is the file, to find the first one's line).
    pub(crate) fn check_complete(&self, layout: &Layout, body: &[u8]) -> Result<(), DataError> {
        let file = layout.file.clone();
        if self.rows == 0 {
            return Err(DataError::NoRows { file });
        }
        match self.first_missing {
            Some((offset, slot)) if !layout.allow_missing => Err(DataError::MissingCells {
                file,
                count: self.missing,
                line: line_at(body, offset),
                column: layout.sources[slot].0.clone(),
            }),
            _ => Ok(()),
        }
    }
}

/// A target, group or order cell, which must not be missing.
fn required<'a>(
    layout: &Layout,
    row: &Row<'a>,
    index: usize,
    name: &str,
    role: ColumnRole,
) -> Result<&'a str, DataError> {
    let cell = row.cell(index);
    match is_missing(cell) {
        true => Err(DataError::MissingValue {
            file: layout.file.clone(),
            line: row.line(),
            role,
            column: name.to_owned(),
        }),
        false => Ok(cell),
    }
}

fn feature_number(layout: &Layout, row: &Row, name: &str, cell: &str) -> Result<f64, DataError> {
    number(cell).map_err(|bad| {
        let (file, line, column, value) = (
            layout.file.clone(),
            row.line(),
            name.to_owned(),
            shown(cell),
        );
        match bad {
            BadNumber::NotNumber => DataError::NotNumeric {
                file,
                line,
                column,
                value,
            },
            BadNumber::NotFinite => DataError::NonFinite {
                file,
                line,
                column,
                value,
            },
        }
    })
}

fn finish_target(store: TargetStore, layout: &Layout) -> Result<Target, DataError> {
    match store {
        TargetStore::Values(values) => Ok(Target::Values(values)),
        TargetStore::Classes(levels) => {
            let (codes, names) = levels.finish();
            match names.as_slice() {
                [only] => Err(DataError::SingleClass {
                    file: layout.file.clone(),
                    column: layout.target.1.clone(),
                    class: shown(only),
                }),
                _ => Ok(Target::Classes { codes, names }),
            }
        }
    }
}
