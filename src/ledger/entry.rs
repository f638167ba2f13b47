//! Ledger entries and the hash that chains them.
//!
//! An entry's hash is BLAKE3 of the canonical JSON (see [`crate::canon`]) of
//! every field but the hash itself: a hash-format number, `seq`, `prev`,
//! `kind`, the timestamp as RFC 3339 text in UTC with exactly six fraction
//! digits and a `Z`, the provenance, the plan hash, the data file hash, the
//! partition id, the result hash, the body, and the hash of the sorted list
//! of sealed row hashes. Because `seq` and `prev` are hashed, an entry cannot
//! be moved, dropped or rewritten without every later hash changing.
//! Timestamps are truncated to whole microseconds on append so that the
//! stored text is the hashed text and reads back to the same instant.

use chrono::{DateTime, SecondsFormat, SubsecRound, Utc};
use serde::{Deserialize, Serialize};

use crate::canon::{self, CanonError, HashHex};

use super::provenance::Provenance;

/// The `prev` of the first entry: 64 zeros.
pub const GENESIS: &str = "0000000000000000000000000000000000000000000000000000000000000000";

/// The version of the hashed form written by this holdfast. It is stored
/// with every entry so that a later format can still verify old entries.
pub const HASH_FORMAT: i64 = 1;

/// The two kinds of ledger entries.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum EntryKind {
    /// A run of a job sheet and the candidate it chose.
    Selection,
    /// One evaluation on a sealed test partition.
    Opening,
}

impl EntryKind {
    /// The word stored in the ledger and printed by the CLI.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Selection => "selection",
            Self::Opening => "opening",
        }
    }

    /// The inverse of [`EntryKind::as_str`].
    pub fn parse(text: &str) -> Option<Self> {
        match text {
            "selection" => Some(Self::Selection),
            "opening" => Some(Self::Opening),
            _ => None,
        }
    }
}

/// What the caller hands to [`super::Ledger::append`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NewEntry {
    pub kind: EntryKind,
    pub timestamp: DateTime<Utc>,
    /// BLAKE3 of the resolved plan's canonical JSON.
    pub plan_hash: HashHex,
    /// BLAKE3 of the data file's bytes.
    pub data_file: HashHex,
    /// Id of the sealed partition.
    pub partition: String,
    /// Hash of the entry's result object.
    pub result_hash: HashHex,
    /// The entry's full result object.
    pub body: serde_json::Value,
    /// Content hashes of the sealed rows evaluated (openings only; empty for
    /// selections). Any order; duplicates (identical rows) are kept.
    pub sealed_rows: Vec<HashHex>,
    pub provenance: Provenance,
}

/// One entry as recorded in the ledger.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Entry {
    /// Position in the chain, from 1.
    pub seq: u64,
    pub hash: HashHex,
    /// Hash of the previous entry; [`GENESIS`] for the first.
    pub prev: HashHex,
    pub kind: EntryKind,
    /// Truncated to whole microseconds.
    pub timestamp: DateTime<Utc>,
    pub plan_hash: HashHex,
    pub data_file: HashHex,
    pub partition: String,
    pub result_hash: HashHex,
    pub body: serde_json::Value,
    /// Sorted by hash text.
    pub sealed_rows: Vec<HashHex>,
    pub provenance: Provenance,
}

/// An entry without its body and sealed rows, for listings and audits.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EntryMeta {
    pub seq: u64,
    pub hash: HashHex,
    pub prev: HashHex,
    pub kind: EntryKind,
    pub timestamp: DateTime<Utc>,
    pub plan_hash: HashHex,
    pub data_file: HashHex,
    pub partition: String,
    pub result_hash: HashHex,
    /// How many sealed rows the entry covers (0 for selections).
    pub sealed_row_count: u64,
    pub provenance: Provenance,
}

/// The hashed form of an entry: every field but the hash itself.
#[derive(Serialize)]
struct Hashed<'a> {
    format: i64,
    seq: u64,
    prev: &'a str,
    kind: EntryKind,
    timestamp: String,
    provenance: &'a Provenance,
    plan_hash: &'a str,
    data_file: &'a str,
    partition: &'a str,
    result_hash: &'a str,
    body: &'a serde_json::Value,
    sealed_rows: HashHex,
}

/// The fixed text form of a timestamp inside the ledger and its hashes.
pub fn timestamp_text(at: &DateTime<Utc>) -> String {
    at.to_rfc3339_opts(SecondsFormat::Micros, true)
}

/// `at` with the precision the ledger keeps.
pub fn truncate_timestamp(at: DateTime<Utc>) -> DateTime<Utc> {
    at.trunc_subsecs(6)
}

/// Parse the stored timestamp text back.
pub fn parse_timestamp(text: &str) -> Option<DateTime<Utc>> {
    DateTime::parse_from_rfc3339(text)
        .ok()
        .map(|at| at.with_timezone(&Utc))
}

/// Hash of a sorted list of sealed row hashes.
pub fn sealed_rows_hash(sorted_rows: &[String]) -> Result<HashHex, CanonError> {
    canon::hash_canonical(sorted_rows)
}

/// Recompute the hash of `entry` from its content (its `hash` is ignored;
/// `sealed_rows` must be sorted).
pub fn entry_hash(entry: &Entry) -> Result<HashHex, CanonError> {
    entry_hash_as(entry, entry.seq)
}

/// The hash `entry` would have at position `seq`: lets verify tell an entry
/// that was moved from one that was rewritten.
pub fn entry_hash_as(entry: &Entry, seq: u64) -> Result<HashHex, CanonError> {
    let head = Head {
        seq,
        ..Head::of_entry(entry)
    };
    hash_parts(&head, &entry.body, sealed_rows_hash(&entry.sealed_rows)?)
}

/// The hashed fields of an entry other than its body and sealed rows.
#[derive(Clone, Copy)]
pub(super) struct Head<'a> {
    pub seq: u64,
    pub prev: &'a str,
    pub kind: EntryKind,
    pub timestamp: &'a DateTime<Utc>,
    pub provenance: &'a Provenance,
    pub plan_hash: &'a str,
    pub data_file: &'a str,
    pub partition: &'a str,
    pub result_hash: &'a str,
}

impl<'a> Head<'a> {
    fn of_entry(e: &'a Entry) -> Self {
        Head {
            seq: e.seq,
            prev: &e.prev,
            kind: e.kind,
            timestamp: &e.timestamp,
            provenance: &e.provenance,
            plan_hash: &e.plan_hash,
            data_file: &e.data_file,
            partition: &e.partition,
            result_hash: &e.result_hash,
        }
    }

    pub(super) fn of_meta(m: &'a EntryMeta) -> Self {
        Head {
            seq: m.seq,
            prev: &m.prev,
            kind: m.kind,
            timestamp: &m.timestamp,
            provenance: &m.provenance,
            plan_hash: &m.plan_hash,
            data_file: &m.data_file,
            partition: &m.partition,
            result_hash: &m.result_hash,
        }
    }
}

/// The entry hash from its parts: the reference form, through
/// [`canon::hash_canonical`].
pub(super) fn hash_parts(
    head: &Head<'_>,
    body: &serde_json::Value,
    sealed_rows: HashHex,
) -> Result<HashHex, CanonError> {
    canon::hash_canonical(&Hashed {
        format: HASH_FORMAT,
        seq: head.seq,
        prev: head.prev,
        kind: head.kind,
        timestamp: timestamp_text(head.timestamp),
        provenance: head.provenance,
        plan_hash: head.plan_hash,
        data_file: head.data_file,
        partition: head.partition,
        result_hash: head.result_hash,
        body,
        sealed_rows,
    })
}

/// The hashed form without its body, its fields declared in the order
/// canonical JSON sorts them, so that writing it directly gives the same
/// text as [`Hashed`] through a `serde_json::Value` (whose maps sort).
#[derive(Serialize)]
struct SortedTail<'a> {
    data_file: &'a str,
    format: i64,
    kind: EntryKind,
    partition: &'a str,
    plan_hash: &'a str,
    prev: &'a str,
    provenance: SortedProvenance<'a>,
    result_hash: &'a str,
    sealed_rows: &'a str,
    seq: u64,
    timestamp: String,
}

/// [`Provenance`] with its fields in sorted order.
#[derive(Serialize)]
struct SortedProvenance<'a> {
    git_commit: &'a Option<String>,
    git_dirty: &'a Option<bool>,
    host: &'a str,
    plan_path: &'a str,
    tool_version: &'a str,
    user: &'a str,
}

impl<'a> SortedProvenance<'a> {
    fn of(p: &'a Provenance) -> Self {
        // Destructured so that a new field cannot be left out unnoticed.
        let Provenance {
            user,
            host,
            tool_version,
            plan_path,
            git_commit,
            git_dirty,
        } = p;
        SortedProvenance {
            git_commit,
            git_dirty,
            host,
            plan_path,
            tool_version,
            user,
        }
    }
}

/// The same hash as [`hash_parts`], from a body that is already canonical
/// JSON text (see [`super::canonical::is_canonical`]) and the hash of the
/// sealed rows. `body` is the first key of the hashed form, so the hashed
/// text is `{"body":` + the body text + `,` + the other fields.
pub(super) fn hash_with_canonical_body(
    head: &Head<'_>,
    body: &str,
    sealed_rows: &str,
) -> Result<HashHex, CanonError> {
    let tail = serde_json::to_vec(&SortedTail {
        data_file: head.data_file,
        format: HASH_FORMAT,
        kind: head.kind,
        partition: head.partition,
        plan_hash: head.plan_hash,
        prev: head.prev,
        provenance: SortedProvenance::of(head.provenance),
        result_hash: head.result_hash,
        sealed_rows,
        seq: head.seq,
        timestamp: timestamp_text(head.timestamp),
    })?;
    let mut hasher = blake3::Hasher::new();
    hasher.update(br#"{"body":"#);
    hasher.update(body.as_bytes());
    hasher.update(b",");
    // The tail is an object: drop its opening brace.
    hasher.update(tail.get(1..).unwrap_or_default());
    Ok(hasher.finalize().to_hex().to_string())
}

/// The first 12 characters of a hash, for messages; never splits a character.
pub fn short_hash(hash: &str) -> String {
    hash.chars().take(12).collect()
}

impl Entry {
    /// The entry without its body and sealed rows.
    pub fn meta(&self) -> EntryMeta {
        EntryMeta {
            seq: self.seq,
            hash: self.hash.clone(),
            prev: self.prev.clone(),
            kind: self.kind,
            timestamp: self.timestamp,
            plan_hash: self.plan_hash.clone(),
            data_file: self.data_file.clone(),
            partition: self.partition.clone(),
            result_hash: self.result_hash.clone(),
            sealed_row_count: self.sealed_rows.len() as u64,
            provenance: self.provenance.clone(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::TimeZone;

    fn sample() -> Entry {
        Entry {
            seq: 1,
            hash: String::new(),
            prev: GENESIS.to_string(),
            kind: EntryKind::Opening,
            timestamp: Utc.with_ymd_and_hms(2024, 5, 6, 7, 8, 9).unwrap(),
            plan_hash: "p".into(),
            data_file: "d".into(),
            partition: "s".into(),
            result_hash: "r".into(),
            body: serde_json::json!({"score": 0.5}),
            sealed_rows: vec!["a".into(), "b".into()],
            provenance: Provenance {
                user: "u".into(),
                host: "h".into(),
                tool_version: "0.1.0".into(),
                plan_path: "plan.toml".into(),
                git_commit: None,
                git_dirty: Some(false),
            },
        }
    }

    #[test]
    fn hash_is_blake3_of_the_documented_canonical_form() {
        // Written out by hand from the module doc: sorted keys, no spaces,
        // the sealed rows replaced by the BLAKE3 of their JSON list.
        let rows = canon::hash_bytes(br#"["a","b"]"#);
        let text = format!(
            concat!(
                r#"{{"body":{{"score":0.5}},"data_file":"d","format":1,"kind":"opening","#,
                r#""partition":"s","plan_hash":"p","prev":"{}","#,
                r#""provenance":{{"git_commit":null,"git_dirty":false,"host":"h","#,
                r#""plan_path":"plan.toml","tool_version":"0.1.0","user":"u"}},"#,
                r#""result_hash":"r","sealed_rows":"{}","seq":1,"#,
                r#""timestamp":"2024-05-06T07:08:09.000000Z"}}"#
            ),
            GENESIS, rows
        );
        assert_eq!(
            entry_hash(&sample()).unwrap(),
            canon::hash_bytes(text.as_bytes())
        );
    }

    #[test]
    fn every_field_changes_the_hash() {
        let base = entry_hash(&sample()).unwrap();
        let edits: Vec<fn(&mut Entry)> = vec![
            |e| e.seq = 2,
            |e| e.prev = "x".into(),
            |e| e.kind = EntryKind::Selection,
            |e| e.timestamp += chrono::Duration::microseconds(1),
            |e| e.plan_hash = "q".into(),
            |e| e.data_file = "e".into(),
            |e| e.partition = "t".into(),
            |e| e.result_hash = "s".into(),
            |e| e.body = serde_json::json!({"score": 0.25}),
            |e| e.sealed_rows.pop().map(drop).unwrap_or(()),
            |e| e.provenance.user = "v".into(),
            |e| e.provenance.git_dirty = None,
        ];
        for (i, edit) in edits.iter().enumerate() {
            let mut entry = sample();
            edit(&mut entry);
            assert_ne!(entry_hash(&entry).unwrap(), base, "edit {i}");
        }
        let mut unhashed = sample();
        unhashed.hash = "anything".into();
        assert_eq!(entry_hash(&unhashed).unwrap(), base);
    }

    #[test]
    fn timestamps_keep_microseconds_and_read_back() {
        // 1_700_000_000 s after the Unix epoch is 2023-11-14T22:13:20Z
        // (from memory; `date -u -d @1700000000` agrees).
        let at = Utc.timestamp_opt(1_700_000_000, 123_456_789).unwrap();
        let kept = truncate_timestamp(at);
        assert_eq!(timestamp_text(&kept), "2023-11-14T22:13:20.123456Z");
        assert_eq!(parse_timestamp(&timestamp_text(&kept)), Some(kept));
    }

    fn any_text() -> impl proptest::strategy::Strategy<Value = String> {
        use proptest::prelude::*;
        prop::collection::vec(any::<char>(), 0..6).prop_map(String::from_iter)
    }

    proptest::proptest! {
        /// The hash from a canonical body's text equals the reference hash
        /// through `serde_json::Value`, whatever the fields hold.
        #[test]
        fn the_hash_from_body_text_equals_the_reference(
            seq in 0u64..u64::MAX,
            texts in proptest::collection::vec(any_text(), 10),
            git in proptest::option::of(any_text()),
            dirty in proptest::option::of(proptest::bool::ANY),
            opening in proptest::bool::ANY,
            micros in 0i64..4_000_000_000_000_000,
            body in proptest::collection::btree_map(any_text(), any_text(), 0..4),
            score in proptest::num::f64::NORMAL,
        ) {
            let mut e = sample();
            e.seq = seq;
            e.prev = texts[0].clone();
            e.kind = if opening { EntryKind::Opening } else { EntryKind::Selection };
            e.timestamp = DateTime::from_timestamp_micros(micros).unwrap();
            e.plan_hash = texts[1].clone();
            e.data_file = texts[2].clone();
            e.partition = texts[3].clone();
            e.result_hash = texts[4].clone();
            e.body = serde_json::json!({"fields": body, "score": score, "n": seq});
            e.sealed_rows = texts[5..7].to_vec();
            e.provenance = Provenance {
                user: texts[7].clone(),
                host: texts[8].clone(),
                tool_version: texts[9].clone(),
                plan_path: texts[0].clone(),
                git_commit: git,
                git_dirty: dirty,
            };
            let body_text = canon::canonical_json(&e.body).unwrap();
            let rows = sealed_rows_hash(&e.sealed_rows).unwrap();
            let fast = hash_with_canonical_body(&Head::of_entry(&e), &body_text, &rows).unwrap();
            proptest::prop_assert_eq!(fast, entry_hash(&e).unwrap());
        }
    }

    #[test]
    fn the_hash_from_body_text_equals_the_documented_form() {
        let e = sample();
        let rows = sealed_rows_hash(&e.sealed_rows).unwrap();
        let fast = hash_with_canonical_body(&Head::of_entry(&e), r#"{"score":0.5}"#, &rows);
        assert_eq!(fast.unwrap(), entry_hash(&e).unwrap());
    }

    #[test]
    fn kinds_round_trip_through_text() {
        for kind in [EntryKind::Selection, EntryKind::Opening] {
            assert_eq!(EntryKind::parse(kind.as_str()), Some(kind));
        }
        assert_eq!(EntryKind::parse("Opening"), None);
    }
}
