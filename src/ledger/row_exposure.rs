//! How often each row was looked at, counted while the verify walk reads
//! the exposure table anyway (see [`super::Ledger::verify_reading`]).
//!
//! Invariant: [`RowExposure::openings`] says for a row what
//! [`super::Ledger::exposure`] says for it in the same state of the file:
//! the number of exposure rows with that row hash as text, whatever entry
//! number they carry. Each opening holds a row hash once (its copies are
//! a column), so that is the number of openings that included the row.
//!
//! Openings of one partition mostly look at the same rows, so an entry's
//! rows are counted as a whole list: each distinct list is kept once with
//! the number of entries that have it, and the counts per row are summed
//! from the lists when the walk ends. Rows of no entry, and the rows of an
//! entry whose rows do not all decode, are counted one by one.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

use super::exposure_scan::SealedRows;

type QuickMap<K, V> = HashMap<K, V, BuildHasherDefault<Quick>>;

/// Exposure counts of every row hash in the ledger, and the rows of each
/// entry as the walk read them.
#[derive(Debug, Clone, Default)]
pub struct RowExposure {
    /// Rows counted one by one; after [`RowExposure::seal`], every row.
    counts: QuickMap<Box<[u8]>, u32>,
    /// Each distinct list of an entry's rows, and how many entries have it.
    lists: Vec<(SealedRows, u32)>,
    /// Indexes into `lists` by a quick hash of the list.
    by_hash: QuickMap<u64, Vec<usize>>,
    /// The list of each entry whose rows decode, in increasing `seq`.
    entries: Vec<(i64, usize)>,
}

impl RowExposure {
    /// Count one exposure row by its row hash.
    pub(super) fn add_row(&mut self, row_hash: &[u8]) {
        add(&mut self.counts, row_hash, 1);
    }

    /// Count the rows of entry `seq` (entries in increasing order).
    pub(super) fn add_entry(&mut self, seq: i64, rows: &SealedRows) {
        if !rows.is_decodable() {
            // Its rows that decoded; the others were counted as read.
            for (row, _) in rows.distinct() {
                self.add_row(row.as_bytes());
            }
            return;
        }
        let key = fingerprint(rows);
        let same = self.by_hash.entry(key).or_default();
        let list = match same.iter().find(|&&i| self.lists[i].0 == *rows) {
            Some(&i) => i,
            None => {
                same.push(self.lists.len());
                self.lists.push((rows.clone(), 0));
                self.lists.len() - 1
            }
        };
        self.lists[list].1 += 1;
        self.entries.push((seq, list));
    }

    /// Sum the counts per row from the lists; the walk calls it once, at
    /// the end.
    pub(super) fn seal(&mut self) {
        let distinct: usize = self
            .lists
            .iter()
            .map(|(rows, _)| rows.parts().1.len())
            .sum();
        self.counts.reserve(distinct);
        for (rows, entries) in &self.lists {
            for (row, _) in rows.distinct() {
                add(&mut self.counts, row.as_bytes(), *entries);
            }
        }
    }

    /// How many openings included the row with content hash `row_hash`.
    pub fn openings(&self, row_hash: &str) -> u32 {
        self.counts.get(row_hash.as_bytes()).copied().unwrap_or(0)
    }

    /// The sealed rows of entry `seq` as [`super::Ledger::entry`] reads
    /// them in the same state of the file, each once with its copies;
    /// `None` for an entry whose rows do not decode, or no entry.
    pub fn entry_rows(&self, seq: u64) -> Option<impl Iterator<Item = (&str, u64)> + '_> {
        let seq = i64::try_from(seq).ok()?;
        let at = self.entries.binary_search_by_key(&seq, |&(s, _)| s).ok()?;
        Some(self.lists[self.entries[at].1].0.distinct())
    }
}

fn add(counts: &mut QuickMap<Box<[u8]>, u32>, row_hash: &[u8], n: u32) {
    match counts.get_mut(row_hash) {
        Some(count) => *count = count.saturating_add(n),
        None => {
            counts.insert(row_hash.into(), n);
        }
    }
}

/// What tells most lists apart at a glance: their lengths and their ends.
/// Lists that agree on it are told apart by comparing them whole.
fn fingerprint(rows: &SealedRows) -> u64 {
    let (text, ends) = rows.parts();
    let mut h = Quick::default();
    h.mix(text.len() as u64);
    h.mix(ends.len() as u64);
    let edge = 64.min(text.len());
    h.write(&text.as_bytes()[..edge]);
    h.write(&text.as_bytes()[text.len() - edge..]);
    h.finish()
}

/// A quick hash for row hash text, most of it 64 random hex digits:
/// each 8-byte word is mixed in by a rotation, an xor and the multiplier
/// of rustc's FxHasher (rustc-hash crate, from memory). It need not
/// withstand chosen keys: someone choosing row hashes can only slow the
/// count down, never change it.
#[derive(Debug, Clone, Copy, Default)]
struct Quick(u64);

impl Quick {
    fn mix(&mut self, word: u64) {
        self.0 = (self.0.rotate_left(5) ^ word).wrapping_mul(0x517c_c1b7_2722_0a95);
    }
}

impl Hasher for Quick {
    fn write(&mut self, bytes: &[u8]) {
        let mut words = bytes.chunks_exact(8);
        for word in words.by_ref() {
            self.mix(u64::from_le_bytes(word.try_into().unwrap_or_default()));
        }
        for &byte in words.remainder() {
            self.mix(u64::from(byte));
        }
    }

    fn finish(&self) -> u64 {
        self.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rusqlite::types::ValueRef;

    fn list(rows: &[(&str, i64)]) -> SealedRows {
        SealedRows::from_values(
            rows.iter()
                .map(|&(r, c)| (ValueRef::Text(r.as_bytes()), ValueRef::Integer(c))),
        )
    }

    #[test]
    fn rows_are_counted_by_their_exact_text() {
        let mut e = RowExposure::default();
        for row in ["r1", "r2", "r1", "R1", "r1 "] {
            e.add_row(row.as_bytes());
        }
        e.add_entry(3, &list(&[("r1", 2), ("r3", 1)]));
        e.add_entry(4, &list(&[("r2", 1)]));
        e.add_entry(5, &list(&[("r1", 2), ("r3", 1)]));
        e.add_entry(6, &list(&[("r1", 1), ("r3", 1)]));
        // Undecodable: its good row counts, its entry has no rows.
        e.add_entry(7, &list(&[("r3", 1), ("r4", 0)]));
        e.add_entry(8, &list(&[]));
        e.seal();
        let got: Vec<u32> = ["r1", "r2", "r3", "R1", "r1 ", "r4", "r5", ""]
            .iter()
            .map(|r| e.openings(r))
            .collect();
        // r1: 2 loose + entries 3, 5, 6; r2: 1 + entry 4; r3: 3, 5, 6, 7.
        assert_eq!(got, [5, 2, 4, 1, 1, 0, 0, 0]);
        let rows = |seq| e.entry_rows(seq).map(|r| r.collect::<Vec<_>>());
        assert_eq!(rows(5), Some(vec![("r1", 2), ("r3", 1)]));
        assert_eq!(rows(6), Some(vec![("r1", 1), ("r3", 1)]));
        assert_eq!(rows(8), Some(vec![]));
        assert_eq!((rows(7), rows(2), rows(9)), (None, None, None));
    }
}
