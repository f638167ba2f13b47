//! Verifying a ledger: the hash chain, the numbering, the exposure table,
//! the job cache, and optionally a head recorded earlier.
//!
//! The walk recomputes every entry's hash from its stored content (its
//! sealed rows read back from the exposure table), checks that each `prev`
//! is the hash of the entry before it and that sequence numbers run 1..n
//! without gaps. An entry that links to some other entry of the ledger is
//! reported as out of order (its content is then not reported separately:
//! a moved entry no longer hashes at its new position anyway). A body or
//! exposure rows left behind by a deleted last entry are reported as a
//! missing entry.
//! The job cache is not part of the chain, but every cached result is
//! re-hashed and a mismatch is a problem of its own kind.
//!
//! The walk reads each table once, in order: the entries with their bodies,
//! and the exposure table beside them (see [`super::exposure_scan`]), and
//! checks what it read on a second thread (see [`super::read_ahead`]). A
//! stored body that is canonical JSON (see [`super::canonical`]) is
//! hashed as it is stored: canonical JSON parsed and written again is the
//! same text, so this is the hash that parsing and re-writing it would
//! give. Any other body is parsed and re-written, as the hash is defined;
//! so a body re-formatted by hand with its content unchanged still
//! verifies, and one whose content changed does not.
//!
//! A head is a hash someone wrote down earlier (in a report, a commit, an
//! email). If it is the hash of an entry and the chain verifies up to that
//! entry, nothing up to it was rewritten. If no entry has it, the history
//! was rewritten (or the head is from another ledger).

use std::collections::HashMap;
use std::fmt;

use serde::Serialize;

use super::canonical::is_canonical;
use super::entry::{self, EntryMeta, GENESIS, Head, short_hash as short};
use super::error::LedgerError;
use super::exposure_scan::{ExposureScan, SCAN_EXPOSURE, SealedRows};
use super::ledger::Ledger;
use super::read_ahead::{self, Read, Reads};
use super::row_exposure::RowExposure;
use super::spec::HASH_LEN;
use super::stored::{self, SELECT_ENTRIES, StoredEntry};

/// The entry numbers of exposure rows and bodies outside `1..=?1`. Each
/// condition on its own, so that SQLite searches the indexes on `seq`
/// instead of reading both tables through (an `OR` made it scan them).
pub(super) const ORPHANS: &str = "SELECT seq FROM exposure WHERE seq < 1 \
     UNION SELECT seq FROM exposure WHERE seq > ?1 \
     UNION SELECT seq FROM entry_body WHERE seq < 1 \
     UNION SELECT seq FROM entry_body WHERE seq > ?1 ORDER BY 1";

/// How many cache mismatches are listed one by one.
const MAX_JOB_PROBLEMS: usize = 100;

/// What is wrong at one place of a ledger.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ProblemKind {
    /// The stored content no longer hashes to the entry's recorded hash.
    ContentChanged,
    /// The entry's `prev` is not the hash of the entry before it.
    LinkBroken,
    /// A sequence number is missing, or exposure rows outlive their entry.
    MissingEntry,
    /// The entry links to another entry of the ledger, or is numbered below 1.
    OutOfOrder,
    /// A cached job result does not match the hash stored beside it.
    CacheMismatch,
    /// The head given to verify is the hash of no entry.
    HeadNotFound,
}

impl ProblemKind {
    /// The words printed for this kind.
    pub fn describe(self) -> &'static str {
        match self {
            Self::ContentChanged => "content changed",
            Self::LinkBroken => "link broken",
            Self::MissingEntry => "missing entry",
            Self::OutOfOrder => "out of order",
            Self::CacheMismatch => "cache mismatch",
            Self::HeadNotFound => "head not found",
        }
    }
}

/// One problem found by [`Ledger::verify`].
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Problem {
    pub kind: ProblemKind,
    /// The entry concerned (chain problems).
    pub seq: Option<u64>,
    /// The cached job concerned (cache problems).
    pub job: Option<String>,
    pub detail: String,
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (&self.seq, &self.job) {
            (Some(seq), _) => write!(f, "entry {seq}: ")?,
            (None, Some(job)) => write!(f, "job {job}: ")?,
            (None, None) => {}
        }
        write!(f, "{}: {}", self.kind.describe(), self.detail)
    }
}

/// What became of the head given to [`Ledger::verify`].
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "status")]
pub enum HeadCheck {
    /// The head is entry `seq`'s hash and the chain verifies up to it.
    Proven { seq: u64 },
    /// The head is entry `seq`'s hash but the chain fails at or before it.
    Unproven { seq: u64 },
    /// No entry has this hash: history was rewritten.
    NotFound,
}

/// The outcome of [`Ledger::verify`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Verification {
    /// Entries walked.
    pub entries: u64,
    /// Hash of the last entry, as stored.
    pub head: Option<String>,
    /// Cached job results re-hashed.
    pub jobs_checked: u64,
    /// Chain and exposure problems in chain order, then cache problems and
    /// a head that was not found.
    pub problems: Vec<Problem>,
    /// Set when a head was given.
    pub head_check: Option<HeadCheck>,
}

impl Verification {
    /// No problem of any kind.
    pub fn is_intact(&self) -> bool {
        self.problems.is_empty()
    }

    /// The first problem found, the one to name first.
    pub fn first_problem(&self) -> Option<&Problem> {
        self.problems.first()
    }
}

/// What [`Ledger::verify_reading`] found besides the verification.
#[derive(Debug, Clone)]
pub struct VerifiedRead {
    pub verification: Verification,
    /// How many openings included each row, in the state verified.
    pub exposure: RowExposure,
}

/// What a walk shows besides its problems.
trait Observer {
    /// An entry whose columns decode, with its stored body text.
    fn entry(&mut self, meta: &EntryMeta, body: &str);
    /// The sealed rows of entry `seq` as read.
    fn entry_rows(&mut self, seq: i64, rows: &SealedRows);
    /// An exposure row (its row hash, text only) read on its own: of no
    /// entry, or one of an entry's rows that does not decode.
    fn row(&mut self, row_hash: &[u8]);
}

/// A plain verify shows nothing.
struct Unobserved;

impl Observer for Unobserved {
    fn entry(&mut self, _: &EntryMeta, _: &str) {}
    fn entry_rows(&mut self, _: i64, _: &SealedRows) {}
    fn row(&mut self, _: &[u8]) {}
}

/// [`Ledger::verify_reading`]: hands entries on and counts rows.
struct Reading<F> {
    visit: F,
    exposure: RowExposure,
}

impl<F: FnMut(&EntryMeta, &str)> Observer for Reading<F> {
    fn entry(&mut self, meta: &EntryMeta, body: &str) {
        (self.visit)(meta, body);
    }
    fn entry_rows(&mut self, seq: i64, rows: &SealedRows) {
        self.exposure.add_entry(seq, rows);
    }
    fn row(&mut self, row_hash: &[u8]) {
        self.exposure.add_row(row_hash);
    }
}

impl Ledger {
    /// Verify the whole ledger, and that `head` (a full entry hash recorded
    /// earlier) is still part of its history. Problems are reported in the
    /// result; an error means the ledger could not be read at all.
    pub fn verify(&self, head: Option<&str>) -> Result<Verification, LedgerError> {
        let head = head.map(parse_head).transpose()?;
        self.reading(|| self.verify_observed(head.as_deref(), &mut Unobserved))
    }

    /// [`Ledger::verify`] without a head that, in the same one read of
    /// the file, hands every entry that decodes (its columns and its
    /// sealed rows) to `visit` in chain order, as its meta and its stored
    /// body text, and counts how many openings included each row (what
    /// [`Ledger::exposure`] says).
    pub fn verify_reading(
        &self,
        visit: impl FnMut(&EntryMeta, &str) + Send,
    ) -> Result<VerifiedRead, LedgerError> {
        let mut reading = Reading {
            visit,
            exposure: RowExposure::default(),
        };
        let verification = self.reading(|| self.verify_observed(None, &mut reading))?;
        reading.exposure.seal();
        Ok(VerifiedRead {
            verification,
            exposure: reading.exposure,
        })
    }

    fn verify_observed(
        &self,
        head: Option<&str>,
        observer: &mut (impl Observer + Send),
    ) -> Result<Verification, LedgerError> {
        let hashes = self.stored_hashes()?;
        let mut walk = Walk::new(&hashes);
        self.walk_entries(&mut walk, observer)?;
        let orphans = self.orphans(walk.expected - 1)?;
        let mut problems = merge_orphans(walk.problems, orphans, &walk.missing);
        let (jobs_checked, job_problems) = self.check_jobs()?;
        problems.extend(job_problems);
        let head_check = head.map(|h| check_head(h, &hashes, &mut problems));
        Ok(Verification {
            entries: walk.entries,
            head: walk.last_hash,
            jobs_checked,
            problems,
            head_check,
        })
    }

    fn stored_hashes(&self) -> Result<HashMap<String, u64>, LedgerError> {
        let mut stmt = self
            .conn
            .prepare("SELECT seq, hash FROM entry")
            .map_err(|e| self.fail(e))?;
        let rows = stmt
            .query_map([], |r| {
                Ok((r.get::<_, String>(1)?, r.get::<_, i64>(0)?.max(0) as u64))
            })
            .map_err(|e| self.fail(e))?;
        // A hash column that no longer reads as text is reported by the walk.
        Ok(rows.filter_map(Result::ok).collect())
    }

    /// Walk every entry in `seq` order, the exposure table beside it:
    /// read here, checked on a second thread (see [`read_ahead`]).
    fn walk_entries(
        &self,
        walk: &mut Walk<'_>,
        observer: &mut (impl Observer + Send),
    ) -> Result<(), LedgerError> {
        read_ahead::in_two_threads(
            |reads| self.read_entries(reads),
            |read| take(read, walk, observer),
        )
    }

    /// Read every entry in `seq` order with its sealed rows, and the
    /// exposure rows of no entry, emitting them as read.
    fn read_entries(&self, reads: &mut Reads<'_>) -> Result<(), LedgerError> {
        let fail = |e| self.fail(e);
        let sql = format!("{SELECT_ENTRIES} ORDER BY e.seq");
        let mut stmt = self.conn.prepare(&sql).map_err(fail)?;
        let mut scan_stmt = self.conn.prepare(SCAN_EXPOSURE).map_err(fail)?;
        let mut scan = ExposureScan::start(&mut scan_stmt).map_err(fail)?;
        let mut rows = stmt.query([]).map_err(fail)?;
        let mut loose: Vec<Box<[u8]>> = Vec::new();
        while let Some(row) = rows.next().map_err(fail)? {
            let mut entry = reads.entry();
            entry.seq = row.get(0).map_err(fail)?;
            scan.rows_of(entry.seq, &mut entry.sealed, &mut |h| loose.push(h.into()))
                .map_err(fail)?;
            if !loose.is_empty() && !reads.emit(Read::Loose(std::mem::take(&mut loose))) {
                return Ok(());
            }
            let content = entry.sealed.decoded(entry.seq).and_then(|s| {
                let StoredEntry { meta, body } = stored::read_stored(row, s.count())?;
                entry.body.push_str(body);
                Ok(meta)
            });
            if content.is_err() {
                entry.hash = row.get(1).ok();
                entry.prev = row.get(2).ok();
            }
            entry.content = content;
            if !reads.emit(Read::Entry(entry)) {
                return Ok(());
            }
        }
        scan.finish(&mut |h| loose.push(h.into())).map_err(fail)?;
        if !loose.is_empty() {
            reads.emit(Read::Loose(loose));
        }
        Ok(())
    }

    /// Exposure rows and bodies numbered outside the chain: the trace of a
    /// deleted last entry. (Inside the chain a deleted entry leaves a gap,
    /// which the walk reports.)
    fn orphans(&self, last: u64) -> Result<Vec<Problem>, LedgerError> {
        let mut stmt = self.conn.prepare(ORPHANS).map_err(|e| self.fail(e))?;
        let last = i64::try_from(last).unwrap_or(i64::MAX);
        let seqs = stmt
            .query_map([last], |r| r.get::<_, i64>(0))
            .map_err(|e| self.fail(e))?;
        let seqs: Vec<i64> = seqs.collect::<Result<_, _>>().map_err(|e| self.fail(e))?;
        Ok(seqs
            .into_iter()
            .map(|seq| Problem {
                kind: ProblemKind::MissingEntry,
                seq: u64::try_from(seq).ok(),
                job: None,
                detail: format!("the ledger still holds the body or sealed rows of entry {seq}, but the entry is gone"),
            })
            .collect())
    }

    /// Re-hash every cached job result.
    fn check_jobs(&self) -> Result<(u64, Vec<Problem>), LedgerError> {
        let mut stmt = self
            .conn
            .prepare("SELECT id, result, result_hash FROM job")
            .map_err(|e| self.fail(e))?;
        let mut rows = stmt.query([]).map_err(|e| self.fail(e))?;
        let (mut checked, mut bad) = (0u64, Vec::new());
        while let Some(row) = rows.next().map_err(|e| self.fail(e))? {
            checked += 1;
            let id: String = row.get(0).unwrap_or_default();
            let fields: Option<(String, String)> = row.get(1).ok().zip(row.get(2).ok());
            if fields.is_none_or(|(result, hash)| super::jobs::result_hash(&result) != hash) {
                bad.push(id);
            }
        }
        bad.sort();
        Ok((checked, job_problems(bad)))
    }
}

/// A deleted opening shows both as a gap and as orphaned exposure rows:
/// name it once, and keep chain problems in chain order (a problem without
/// a number is an entry numbered below 1, which comes first).
fn merge_orphans(
    mut problems: Vec<Problem>,
    orphans: Vec<Problem>,
    missing: &[std::ops::RangeInclusive<u64>],
) -> Vec<Problem> {
    let known = |p: &Problem| {
        p.seq
            .is_some_and(|s| missing.iter().any(|r| r.contains(&s)))
    };
    problems.extend(orphans.into_iter().filter(|p| !known(p)));
    problems.sort_by_key(|p| p.seq.unwrap_or(0));
    problems
}

fn job_problems(bad: Vec<String>) -> Vec<Problem> {
    let extra = bad.len().saturating_sub(MAX_JOB_PROBLEMS);
    let mut problems: Vec<Problem> = bad
        .into_iter()
        .take(MAX_JOB_PROBLEMS)
        .map(|id| Problem {
            kind: ProblemKind::CacheMismatch,
            seq: None,
            job: Some(id),
            detail: "the cached result no longer matches its recorded hash".to_string(),
        })
        .collect();
    if extra > 0 {
        problems.push(Problem {
            kind: ProblemKind::CacheMismatch,
            seq: None,
            job: None,
            detail: format!("and {extra} more cached results do not match their hashes"),
        });
    }
    problems
}

fn parse_head(text: &str) -> Result<String, LedgerError> {
    let head = text.trim().to_ascii_lowercase();
    if head.len() == HASH_LEN && head.bytes().all(|b| b.is_ascii_hexdigit()) {
        return Ok(head);
    }
    Err(LedgerError::BadHead {
        head: text.to_string(),
    })
}

fn check_head(head: &str, hashes: &HashMap<String, u64>, problems: &mut Vec<Problem>) -> HeadCheck {
    let Some(&seq) = hashes.get(head) else {
        problems.push(Problem {
            kind: ProblemKind::HeadNotFound,
            seq: None,
            job: None,
            detail: format!(
                "no entry has hash {head}: the history up to that head was rewritten or cut, or the head is from another ledger"
            ),
        });
        return HeadCheck::NotFound;
    };
    let broken = problems.iter().any(|p| p.seq.is_some_and(|s| s <= seq));
    if broken {
        HeadCheck::Unproven { seq }
    } else {
        HeadCheck::Proven { seq }
    }
}

/// What entry `before` is called in messages: position 0 is the chain start.
fn predecessor(before: u64) -> String {
    match before {
        0 => "the chain start".to_string(),
        n => format!("entry {n}"),
    }
}

/// Take one thing read: show it to the observer and walk on, in the
/// order of the single-threaded walk (an entry's loose rows, its sealed
/// rows, its content, then its checks).
fn take(read: &mut Read, walk: &mut Walk<'_>, observer: &mut impl Observer) {
    let entry = match read {
        Read::Loose(rows) => return rows.iter().for_each(|r| observer.row(r)),
        Read::Entry(entry) => entry,
    };
    observer.entry_rows(entry.seq, &entry.sealed);
    let (content, hash, prev) = match &entry.content {
        Ok(meta) => {
            let content = Content {
                meta,
                body: &entry.body,
                sealed: &entry.sealed,
            };
            // Copies: what was read is freed by the reading thread.
            (
                Ok(content),
                Some(meta.hash.clone()),
                Some(meta.prev.clone()),
            )
        }
        Err(reason) => (Err(reason.clone()), entry.hash.clone(), entry.prev.clone()),
    };
    if let Ok(c) = &content {
        observer.entry(c.meta, c.body);
    }
    walk.step(Stored {
        seq: entry.seq,
        hash,
        prev,
        content,
    });
}

/// One stored row as the walk sees it.
struct Stored<'r> {
    seq: i64,
    hash: Option<String>,
    prev: Option<String>,
    content: Result<Content<'r>, stored::Undecodable>,
}

/// What an entry's hash is computed from, as stored.
struct Content<'r> {
    meta: &'r EntryMeta,
    body: &'r str,
    sealed: &'r SealedRows,
}

impl Content<'_> {
    /// The entry's hash from its stored content: straight from the body
    /// text when it is canonical, else by parsing and re-writing it.
    fn hash(&self) -> Result<String, String> {
        let head = Head::of_meta(self.meta);
        let text = self.body;
        let rows = || self.sealed.hash().map_err(|e| e.to_string());
        if is_canonical(text) {
            return entry::hash_with_canonical_body(&head, text, &rows()?)
                .map_err(|e| e.to_string());
        }
        let body = stored::parse_body(head.seq, text)?;
        entry::hash_parts(&head, &body, rows()?).map_err(|e| e.to_string())
    }
}

/// The state of the walk along the chain.
struct Walk<'a> {
    hashes: &'a HashMap<String, u64>,
    expected: u64,
    last_hash: Option<String>,
    entries: u64,
    problems: Vec<Problem>,
    /// Ranges of sequence numbers found missing.
    missing: Vec<std::ops::RangeInclusive<u64>>,
}

impl<'a> Walk<'a> {
    fn new(hashes: &'a HashMap<String, u64>) -> Self {
        Walk {
            hashes,
            expected: 1,
            last_hash: None,
            entries: 0,
            problems: Vec::new(),
            missing: Vec::new(),
        }
    }

    fn step(&mut self, row: Stored<'_>) {
        self.entries += 1;
        let seq = u64::try_from(row.seq).unwrap_or(0);
        let gap = self.check_number(row.seq);
        let moved = !gap && self.check_link(seq, row.prev.as_deref());
        if !moved {
            self.check_content(seq, &row);
        }
        self.last_hash = row.hash;
        self.expected = seq + 1;
    }

    /// Report a number below 1 or a gap; true when entries are missing.
    fn check_number(&mut self, seq: i64) -> bool {
        if seq < 1 {
            let detail = format!("an entry is numbered {seq}; numbers start at 1");
            self.push(ProblemKind::OutOfOrder, None, detail);
            return true;
        }
        let seq = seq as u64;
        if seq == self.expected {
            return false;
        }
        let detail = match seq - self.expected {
            1 => format!("entry {} is gone", self.expected),
            _ => format!("entries {} to {} are gone", self.expected, seq - 1),
        };
        self.push(ProblemKind::MissingEntry, Some(self.expected), detail);
        self.missing.push(self.expected..=seq - 1);
        true
    }

    /// Report a `prev` that is not the previous hash; true when it is the
    /// hash of another entry of this ledger (the entries were re-ordered).
    fn check_link(&mut self, seq: u64, prev: Option<&str>) -> bool {
        let want = self.last_hash.as_deref().unwrap_or(GENESIS);
        if prev == Some(want) {
            return false;
        }
        let before = seq - 1;
        let elsewhere = prev.and_then(|p| self.hashes.get(p)).copied();
        let (kind, detail) = match elsewhere {
            Some(other) => (
                ProblemKind::OutOfOrder,
                format!(
                    "it links to entry {other}, not to {}: the entries were re-ordered",
                    predecessor(before)
                ),
            ),
            None => (
                ProblemKind::LinkBroken,
                format!(
                    "it links to {}, but {} has hash {}",
                    short(prev.unwrap_or("an unreadable hash")),
                    predecessor(before),
                    short(want)
                ),
            ),
        };
        self.push(kind, Some(seq), detail);
        kind == ProblemKind::OutOfOrder
    }

    fn check_content(&mut self, seq: u64, row: &Stored<'_>) {
        let hash = match &row.content {
            Err(reason) => Err(reason.clone()),
            Ok(content) => content.hash(),
        };
        let detail = match hash {
            Ok(hash) if Some(&hash) == row.hash.as_ref() => return,
            Ok(_) => "its stored content no longer hashes to its recorded hash".to_string(),
            Err(reason) => reason,
        };
        self.push(ProblemKind::ContentChanged, Some(seq), detail);
    }

    fn push(&mut self, kind: ProblemKind, seq: Option<u64>, detail: String) {
        self.problems.push(Problem {
            kind,
            seq,
            job: None,
            detail,
        });
    }
}
