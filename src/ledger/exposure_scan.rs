//! One pass over the exposure table in entry order, handing each entry its
//! sealed rows, for the verify walk.
//!
//! Reading the rows of each entry with a query of its own costs a
//! statement run per entry; one scan ordered by `(seq, row_hash)` (the
//! order of the `exposure_by_entry` index) reads the same rows, in the
//! same order within an entry, as `WHERE seq = ?1 ORDER BY row_hash` does
//! for each entry (see [`super::stored::sealed_rows`]), and the walk takes
//! them as it reaches each entry. Rows are decoded as strictly as there:
//! a row hash that is not text or a number of copies that is not a
//! positive integer makes the entry's rows undecodable. The rows read of
//! no entry, and those of an entry that do not decode, are shown to a
//! callback one by one, so that exposure counts can come out of the same
//! pass (see [`super::row_exposure`]).

use std::cmp::Ordering;

use rusqlite::Rows;
use rusqlite::fallible_streaming_iterator::FallibleStreamingIterator;
use rusqlite::types::ValueRef;

use crate::canon::{CanonError, HashHex, hash_bytes};

use super::canonical::plain_len;
use super::stored::Undecodable;

/// The query the scan walks.
pub const SCAN_EXPOSURE: &str = "SELECT seq, row_hash, copies FROM exposure ORDER BY seq, row_hash";

/// A cursor over [`SCAN_EXPOSURE`].
pub struct ExposureScan<'s> {
    rows: Rows<'s>,
}

impl<'s> ExposureScan<'s> {
    /// Start the scan on `stmt` (prepared from [`SCAN_EXPOSURE`]).
    pub fn start(stmt: &'s mut rusqlite::Statement<'_>) -> rusqlite::Result<Self> {
        let mut rows = stmt.query([])?;
        rows.advance()?;
        Ok(ExposureScan { rows })
    }

    /// Read the sealed rows of entry `seq` into `out`, skipping rows of
    /// numbers below it (shown to `loose`, as are rows of `seq` that do not
    /// decode). Entries must be asked for in increasing order.
    pub fn rows_of(
        &mut self,
        seq: i64,
        out: &mut SealedRows,
        loose: &mut impl FnMut(&[u8]),
    ) -> rusqlite::Result<()> {
        out.clear();
        while let Some(row) = self.rows.get() {
            let row_hash = row.get_ref(1)?;
            let kept = match position(row.get_ref(0)?, seq) {
                Ordering::Greater => break,
                Ordering::Equal => out.push(row_hash, row.get_ref(2)?),
                Ordering::Less => false,
            };
            if !kept {
                show(row_hash, loose);
            }
            self.rows.advance()?;
        }
        Ok(())
    }

    /// Show the rows after the last entry to `loose`.
    pub fn finish(&mut self, loose: &mut impl FnMut(&[u8])) -> rusqlite::Result<()> {
        while let Some(row) = self.rows.get() {
            show(row.get_ref(1)?, loose);
            self.rows.advance()?;
        }
        Ok(())
    }
}

/// Rows are counted by their text: a query binding a row hash as text
/// matches only text values.
fn show(row_hash: ValueRef<'_>, seen: &mut impl FnMut(&[u8])) {
    if let ValueRef::Text(text) = row_hash {
        seen(text);
    }
}

/// Where a stored `seq` value sorts against entry number `seq`, as SQLite
/// orders and compares them (SQLite "Datatypes In SQLite", section 4.1,
/// "Sort Order", from memory): NULL first, then integers and reals by
/// value, then text, then blobs.
fn position(value: ValueRef<'_>, seq: i64) -> Ordering {
    match value {
        ValueRef::Null => Ordering::Less,
        ValueRef::Integer(i) => i.cmp(&seq),
        ValueRef::Real(f) => compare_real(f, seq),
        ValueRef::Text(_) | ValueRef::Blob(_) => Ordering::Greater,
    }
}

/// Exact comparison of a real (never NaN: SQLite stores NaN as NULL) with
/// an integer.
fn compare_real(f: f64, i: i64) -> Ordering {
    // 2^63 as f64 is exact; every f64 in [-2^63, 2^63) truncates into i64.
    const LIMIT: f64 = 9_223_372_036_854_775_808.0;
    if f >= LIMIT {
        return Ordering::Greater;
    }
    if f < -LIMIT {
        return Ordering::Less;
    }
    let whole = f.trunc();
    (whole as i64)
        .cmp(&i)
        .then_with(|| f.partial_cmp(&whole).unwrap_or(Ordering::Equal))
}

/// The sealed rows of one entry as the scan read them: their text, kept in
/// one buffer so that reading a row allocates nothing. Rows that do not
/// decode are not kept; the list is then marked undecodable.
#[derive(Debug, Default, Clone, PartialEq, Eq)]
pub struct SealedRows {
    text: String,
    /// End of each row's text in `text`, and its copies.
    rows: Vec<(usize, u64)>,
    count: u64,
    undecodable: bool,
}

impl SealedRows {
    /// The rows of a list of (row hash, copies) values, as the scan keeps
    /// them.
    #[cfg(test)]
    pub fn from_values<'a>(
        values: impl IntoIterator<Item = (ValueRef<'a>, ValueRef<'a>)>,
    ) -> SealedRows {
        let mut out = SealedRows::default();
        for (hash, copies) in values {
            out.push(hash, copies);
        }
        out
    }

    fn clear(&mut self) {
        self.text.clear();
        self.rows.clear();
        self.count = 0;
        self.undecodable = false;
    }

    /// Keep a row; false (and the list undecodable) when it does not decode.
    fn push(&mut self, row_hash: ValueRef<'_>, copies: ValueRef<'_>) -> bool {
        match (row_hash.as_str(), copies.as_i64()) {
            (Ok(hash), Ok(copies)) if copies > 0 => {
                self.text.push_str(hash);
                self.rows.push((self.text.len(), copies as u64));
                self.count = self.count.saturating_add(copies as u64);
                true
            }
            _ => {
                self.undecodable = true;
                false
            }
        }
    }

    /// True when every row of the entry decoded.
    pub fn is_decodable(&self) -> bool {
        !self.undecodable
    }

    /// The rows of entry `seq`, or why they do not decode (the words of
    /// [`super::stored::sealed_rows`]).
    pub fn decoded(&self, seq: i64) -> Result<&SealedRows, Undecodable> {
        match self.undecodable {
            true => Err(format!("a sealed row of entry {seq} does not decode")),
            false => Ok(self),
        }
    }

    /// How many sealed rows, copies counted.
    pub fn count(&self) -> u64 {
        self.count
    }

    /// Each row kept, once, with its copies, in the order read.
    pub fn distinct(&self) -> impl Iterator<Item = (&str, u64)> + '_ {
        let starts = std::iter::once(0).chain(self.rows.iter().map(|&(end, _)| end));
        let rows = starts.zip(&self.rows);
        rows.map(|(start, &(end, copies))| (&self.text[start..end], copies))
    }

    /// Each row hash, repeated by its copies, in the order read.
    fn each(&self) -> impl Iterator<Item = &str> + '_ {
        let rows = self.distinct();
        rows.flat_map(|(row, copies)| std::iter::repeat_n(row, copies as usize))
    }

    /// The row texts, run together, and each row's end and copies.
    pub fn parts(&self) -> (&str, &[(usize, u64)]) {
        (&self.text, &self.rows)
    }

    /// The same hash as [`super::entry::sealed_rows_hash`] of the list
    /// [`super::stored::sealed_rows`] reads: the JSON text of that list of
    /// strings as serde_json writes it (serde_json 1.0.154, `ser.rs`:
    /// `[`, the strings separated by `,`, `]`; a string in quotes, with
    /// only `"`, `\` and bytes below 0x20 escaped), a row without such a
    /// byte copied as it is, any other written by serde_json itself.
    pub fn hash(&self) -> Result<HashHex, CanonError> {
        let mut text = Vec::with_capacity(self.text.len() + 3 * self.rows.len() + 2);
        text.push(b'[');
        for (i, row) in self.each().enumerate() {
            if i > 0 {
                text.push(b',');
            }
            if plain_len(row.as_bytes()) == row.len() {
                text.push(b'"');
                text.extend_from_slice(row.as_bytes());
                text.push(b'"');
            } else {
                serde_json::to_writer(&mut text, row)?;
            }
        }
        text.push(b']');
        Ok(hash_bytes(&text))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ledger::entry::sealed_rows_hash;
    use proptest::prelude::*;

    fn rows(list: &[(&str, i64)]) -> SealedRows {
        SealedRows::from_values(
            list.iter()
                .map(|&(h, c)| (ValueRef::Text(h.as_bytes()), ValueRef::Integer(c))),
        )
    }

    #[test]
    fn copies_repeat_rows_in_the_hash_and_the_count() {
        let read = rows(&[("r1", 1), ("r2", 2)]);
        let want: Vec<String> = ["r1", "r2", "r2"].map(String::from).to_vec();
        assert_eq!(read.count(), 3);
        assert_eq!(read.hash().unwrap(), sealed_rows_hash(&want).unwrap());
        assert_eq!(
            rows(&[]).hash().unwrap(),
            sealed_rows_hash(&[]).unwrap(),
            "no rows"
        );
    }

    #[test]
    fn rows_that_do_not_decode_are_refused() {
        for (hash, copies) in [
            (ValueRef::Blob(b"r1"), ValueRef::Integer(1)),
            (ValueRef::Integer(7), ValueRef::Integer(1)),
            (ValueRef::Text(b"r1"), ValueRef::Integer(0)),
            (ValueRef::Text(b"r1"), ValueRef::Integer(-2)),
            (ValueRef::Text(b"r1"), ValueRef::Real(1.0)),
            (ValueRef::Text(b"r1"), ValueRef::Text(b"1")),
            (ValueRef::Text(b"\xff"), ValueRef::Integer(1)),
        ] {
            let mut read = rows(&[("r0", 1)]);
            read.push(hash, copies);
            let err = read.decoded(4).unwrap_err();
            assert_eq!(err, "a sealed row of entry 4 does not decode");
        }
    }

    #[test]
    fn stored_numbers_sort_as_sqlite_sorts_them() {
        use Ordering::*;
        let cases = [
            (ValueRef::Null, 1, Less),
            (ValueRef::Integer(2), 2, Equal),
            (ValueRef::Integer(1), 2, Less),
            (ValueRef::Real(2.5), 2, Greater),
            (ValueRef::Real(2.5), 3, Less),
            (ValueRef::Real(-2.5), -2, Less),
            (ValueRef::Real(-2.5), -3, Greater),
            (ValueRef::Real(3.0), 3, Equal),
            (ValueRef::Real(1e19), i64::MAX, Greater),
            (ValueRef::Real(-1e19), i64::MIN, Less),
            // 2^63 - 1 is not an f64: the nearest is 2^63, above i64::MAX.
            (ValueRef::Real(i64::MAX as f64), i64::MAX, Greater),
            (ValueRef::Text(b"1"), 9, Greater),
            (ValueRef::Blob(b"1"), 9, Greater),
        ];
        for (value, seq, want) in cases {
            assert_eq!(position(value, seq), want, "{value:?} vs {seq}");
        }
    }

    proptest! {
        #[test]
        fn the_hash_equals_the_hash_of_the_list(
            list in prop::collection::vec(
                (prop::collection::vec(any::<char>(), 0..8).prop_map(String::from_iter), 1i64..4),
                0..8,
            )
        ) {
            let read = rows(&list.iter().map(|(h, c)| (h.as_str(), *c)).collect::<Vec<_>>());
            let expanded: Vec<String> = list
                .iter()
                .flat_map(|(h, c)| std::iter::repeat_n(h.clone(), *c as usize))
                .collect();
            prop_assert_eq!(read.hash().unwrap(), sealed_rows_hash(&expanded).unwrap());
            prop_assert_eq!(read.count(), expanded.len() as u64);
        }
    }
}
