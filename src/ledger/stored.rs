//! Entries as rows: writing an entry and its exposure rows, and reading
//! them back.
//!
//! Reading is strict: a stored value that does not decode (an unknown
//! kind, a timestamp or body that does not parse, a negative number) is
//! reported as the text of what is wrong, which the readers turn into a
//! `Corrupt` error and verify into a problem. The sealed rows of an entry
//! live only in the exposure table, one row per distinct row hash with its
//! number of copies, so the entry hash covers exactly what audits count.

use std::collections::BTreeMap;

use rusqlite::{Connection, Row, params};

use super::entry::{Entry, EntryKind, EntryMeta, HASH_FORMAT, parse_timestamp, timestamp_text};
use super::provenance::Provenance;

/// The columns read for an [`EntryMeta`] from table `entry` as `e`, in the
/// order [`read_meta`] expects.
pub const META_COLUMNS: &str = "e.seq, e.hash, e.prev, e.format, e.kind, e.timestamp, \
     e.plan_hash, e.data_file, e.partition, e.result_hash, e.sealed_row_count, e.user, e.host, \
     e.tool_version, e.plan_path, e.git_commit, e.git_dirty";

/// A query reading whole entries ([`read_entry`]), to be followed by a
/// `WHERE` or `ORDER BY` on `e.seq`. A missing body reads as NULL.
pub const SELECT_ENTRIES: &str = "SELECT e.seq, e.hash, e.prev, e.format, e.kind, e.timestamp, \
     e.plan_hash, e.data_file, e.partition, e.result_hash, e.sealed_row_count, e.user, e.host, \
     e.tool_version, e.plan_path, e.git_commit, e.git_dirty, b.body \
     FROM entry e LEFT JOIN entry_body b ON b.seq = e.seq";

/// Why a stored row does not decode.
pub type Undecodable = String;

/// Insert `entry` (sealed rows sorted) and its exposure rows.
pub fn insert(conn: &Connection, entry: &Entry) -> rusqlite::Result<()> {
    let p = &entry.provenance;
    let body = crate::canon::canonical_json(&entry.body)
        .map_err(|e| rusqlite::Error::ToSqlConversionFailure(Box::new(e)))?;
    conn.prepare_cached(
        "INSERT INTO entry (seq, hash, prev, format, kind, timestamp, plan_hash, data_file, \
         partition, result_hash, sealed_row_count, user, host, tool_version, plan_path, \
         git_commit, git_dirty) \
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16, ?17)",
    )?
    .execute(params![
        entry.seq as i64,
        entry.hash,
        entry.prev,
        HASH_FORMAT,
        entry.kind.as_str(),
        timestamp_text(&entry.timestamp),
        entry.plan_hash,
        entry.data_file,
        entry.partition,
        entry.result_hash,
        entry.sealed_rows.len() as i64,
        p.user,
        p.host,
        p.tool_version,
        p.plan_path,
        p.git_commit,
        p.git_dirty,
    ])?;
    conn.prepare_cached("INSERT INTO entry_body (seq, body) VALUES (?1, ?2)")?
        .execute(params![entry.seq as i64, body])?;
    let mut stmt =
        conn.prepare_cached("INSERT INTO exposure (row_hash, seq, copies) VALUES (?1, ?2, ?3)")?;
    for (row, copies) in count_copies(&entry.sealed_rows) {
        stmt.execute(params![row, entry.seq as i64, copies])?;
    }
    Ok(())
}

fn count_copies(rows: &[String]) -> BTreeMap<&str, i64> {
    let mut counts = BTreeMap::new();
    for row in rows {
        *counts.entry(row.as_str()).or_insert(0) += 1;
    }
    counts
}

/// The sealed rows of entry `seq`, sorted, with copies repeated.
pub fn sealed_rows(
    conn: &Connection,
    seq: i64,
) -> rusqlite::Result<Result<Vec<String>, Undecodable>> {
    let mut stmt = conn
        .prepare_cached("SELECT row_hash, copies FROM exposure WHERE seq = ?1 ORDER BY row_hash")?;
    let mut rows = stmt.query([seq])?;
    let mut out = Vec::new();
    while let Some(row) = rows.next()? {
        let (hash, copies): (String, i64) = match (row.get(0), row.get(1)) {
            (Ok(h), Ok(c)) if c > 0 => (h, c),
            _ => return Ok(Err(format!("a sealed row of entry {seq} does not decode"))),
        };
        out.extend(std::iter::repeat_n(hash, copies as usize));
    }
    Ok(Ok(out))
}

/// Decode the meta columns of `row` (see [`META_COLUMNS`]).
pub fn read_meta(row: &Row<'_>) -> Result<EntryMeta, Undecodable> {
    let text = |i: usize| -> Result<String, Undecodable> {
        row.get::<_, String>(i)
            .map_err(|e| format!("column {i}: {e}"))
    };
    let seq: i64 = row.get(0).map_err(|e| format!("sequence number: {e}"))?;
    let seq = u64::try_from(seq).map_err(|_| format!("sequence number {seq} is negative"))?;
    let format: i64 = row
        .get(3)
        .map_err(|e| format!("entry {seq}: format: {e}"))?;
    if format != HASH_FORMAT {
        return Err(format!(
            "entry {seq} has hash format {format}, this holdfast knows {HASH_FORMAT}"
        ));
    }
    let kind_text = text(4)?;
    let kind = EntryKind::parse(&kind_text)
        .ok_or(format!("entry {seq} has unknown kind {kind_text:?}"))?;
    let stamp = text(5)?;
    let timestamp =
        parse_timestamp(&stamp).ok_or(format!("entry {seq} has timestamp {stamp:?}"))?;
    let count: i64 = row
        .get(10)
        .map_err(|e| format!("entry {seq}: sealed row count: {e}"))?;
    Ok(EntryMeta {
        seq,
        hash: text(1)?,
        prev: text(2)?,
        kind,
        timestamp,
        plan_hash: text(6)?,
        data_file: text(7)?,
        partition: text(8)?,
        result_hash: text(9)?,
        sealed_row_count: u64::try_from(count)
            .map_err(|_| format!("entry {seq}: sealed row count {count}"))?,
        provenance: read_provenance(row, seq)?,
    })
}

fn read_provenance(row: &Row<'_>, seq: u64) -> Result<Provenance, Undecodable> {
    let bad = |e: rusqlite::Error| format!("entry {seq}: provenance: {e}");
    Ok(Provenance {
        user: row.get(11).map_err(bad)?,
        host: row.get(12).map_err(bad)?,
        tool_version: row.get(13).map_err(bad)?,
        plan_path: row.get(14).map_err(bad)?,
        git_commit: row.get(15).map_err(bad)?,
        git_dirty: row.get(16).map_err(bad)?,
    })
}

/// An entry row decoded but for its body, which stays the stored text.
#[derive(Debug)]
pub struct StoredEntry<'r> {
    pub meta: EntryMeta,
    pub body: &'r str,
}

/// Decode an entry row (see [`SELECT_ENTRIES`]) but its body, given how
/// many sealed rows the exposure table holds for it (copies counted).
pub fn read_stored<'r>(row: &'r Row<'_>, sealed_rows: u64) -> Result<StoredEntry<'r>, Undecodable> {
    let meta = read_meta(row)?;
    if meta.sealed_row_count != sealed_rows {
        return Err(format!(
            "entry {} says it has {} sealed rows but the exposure table holds {}",
            meta.seq, meta.sealed_row_count, sealed_rows
        ));
    }
    let body = body_text(row, meta.seq)?;
    Ok(StoredEntry { meta, body })
}

/// The body column as text, read in place.
fn body_text<'r>(row: &'r Row<'_>, seq: u64) -> Result<&'r str, Undecodable> {
    if let Ok(Ok(text)) = row.get_ref(17).map(|v| v.as_str()) {
        return Ok(text);
    }
    // Decoding as `String` accepts exactly what `as_str` accepts; it is
    // asked again only for its words.
    Err(match row.get::<_, String>(17) {
        Err(e) => format!("entry {seq}: body: {e}"),
        Ok(_) => format!("entry {seq}: body: not readable as text"),
    })
}

/// Parse the stored body text of entry `seq`.
pub fn parse_body(seq: u64, text: &str) -> Result<serde_json::Value, Undecodable> {
    serde_json::from_str(text).map_err(|e| format!("entry {seq} has a body that is not JSON: {e}"))
}

/// Decode an entry row (see [`SELECT_ENTRIES`]); `sealed_rows` come separately.
pub fn read_entry(row: &Row<'_>, sealed_rows: Vec<String>) -> Result<Entry, Undecodable> {
    let StoredEntry { meta, body } = read_stored(row, sealed_rows.len() as u64)?;
    let body = parse_body(meta.seq, body)?;
    Ok(Entry {
        seq: meta.seq,
        hash: meta.hash,
        prev: meta.prev,
        kind: meta.kind,
        timestamp: meta.timestamp,
        plan_hash: meta.plan_hash,
        data_file: meta.data_file,
        partition: meta.partition,
        result_hash: meta.result_hash,
        body,
        sealed_rows,
        provenance: meta.provenance,
    })
}
