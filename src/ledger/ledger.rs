//! The [`Ledger`] handle: opening a ledger file, appending entries, and
//! the queries that read them.
//!
//! Invariants: entries are only ever appended, each in an IMMEDIATE
//! transaction that reads the tail and writes the new entry under one
//! lock, so concurrent writers (threads or processes, each with its own
//! handle) serialise and every entry links to the one before it. Reads of
//! more than one statement run in one read transaction, so they see one
//! state of the file. [`Ledger::open`] creates what is missing;
//! [`Ledger::open_existing`] never creates anything, and its handle never
//! writes (SQLite's `query_only`, or a read-only open when the file is
//! write-protected).

use std::collections::BTreeMap;
use std::fs::OpenOptions;
use std::io::ErrorKind;
use std::path::{Path, PathBuf};

use rusqlite::{Connection, OpenFlags, OptionalExtension, TransactionBehavior};

use super::entry::{
    Entry, EntryKind, EntryMeta, GENESIS, NewEntry, entry_hash, short_hash, truncate_timestamp,
};
use super::error::LedgerError;
use super::schema::{self, SCHEMA_VERSION, State};
use super::spec::{self, EntrySpec};
use super::stored::{self, META_COLUMNS, SELECT_ENTRIES};

/// The sequence numbers of the openings of one sealed partition.
const OPENINGS_OF_PARTITION: &str =
    "SELECT seq FROM entry WHERE partition = ?1 AND kind = 'opening' ORDER BY seq";

/// The sequence numbers of the openings of one data file.
const OPENINGS_OF_DATA: &str =
    "SELECT seq FROM entry WHERE data_file = ?1 AND kind = 'opening' ORDER BY seq";

/// How many candidates an ambiguous id lists at most.
const MAX_CANDIDATES: usize = 10;

/// An open ledger file. One handle per thread: a handle is `Send`, not `Sync`.
#[derive(Debug)]
pub struct Ledger {
    pub(super) conn: Connection,
    pub(super) path: PathBuf,
}

impl Ledger {
    /// Open the ledger at `path` for reading and writing, creating it (and
    /// its folder) when missing and migrating an older schema.
    pub fn open(path: &Path) -> Result<Ledger, LedgerError> {
        ensure_folder(path)?;
        if schema::check_header(path)? {
            check_writable(path)?;
        } else {
            create_file(path)?;
        }
        let conn = connect(path, OpenFlags::SQLITE_OPEN_READ_WRITE)?;
        let state = schema::inspect(&conn, path)?;
        if conn.is_readonly(rusqlite::MAIN_DB).unwrap_or(true) {
            return Err(LedgerError::ReadOnly {
                path: path.to_path_buf(),
                reason: "SQLite opened it for reading only".to_string(),
            });
        }
        schema::enable_wal(&conn, path)?;
        if state != State::Ledger(SCHEMA_VERSION) {
            schema::migrate(&conn, path)?;
        }
        Ok(Ledger {
            conn,
            path: path.to_path_buf(),
        })
    }

    /// Open an existing ledger for reading only (appends fail); an error
    /// when there is none. A ledger of an older schema is upgraded first,
    /// which writes.
    pub fn open_existing(path: &Path) -> Result<Ledger, LedgerError> {
        let not_found = || LedgerError::NotFound {
            path: path.to_path_buf(),
        };
        if !schema::check_header(path)? {
            return Err(not_found());
        }
        let conn = connect_reader(path)?;
        match schema::inspect(&conn, path)? {
            State::Fresh => Err(not_found()),
            State::Ledger(v) if v < SCHEMA_VERSION => {
                drop(conn);
                drop(Self::open(path)?);
                Self::open_existing(path)
            }
            State::Ledger(_) => Ok(Ledger {
                conn,
                path: path.to_path_buf(),
            }),
        }
    }

    /// The file this ledger lives in.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Append `new` as the next entry of the chain and return it as recorded.
    pub fn append(&self, new: NewEntry) -> Result<Entry, LedgerError> {
        if new.kind == EntryKind::Selection && !new.sealed_rows.is_empty() {
            return Err(self.invalid("a selection carries no sealed rows"));
        }
        let tx = rusqlite::Transaction::new_unchecked(&self.conn, TransactionBehavior::Immediate)
            .map_err(|e| self.fail(e))?;
        let (seq, prev) = match self.tail()? {
            Some((seq, hash)) => (seq + 1, hash),
            None => (1, GENESIS.to_string()),
        };
        let mut entry = recorded(new, seq, prev);
        entry.hash = entry_hash(&entry).map_err(|e| self.invalid(&e.to_string()))?;
        stored::insert(&tx, &entry).map_err(|e| self.fail(e))?;
        tx.commit().map_err(|e| self.fail(e))?;
        Ok(entry)
    }

    /// The hash of the last entry, or `None` for an empty ledger.
    pub fn head(&self) -> Result<Option<String>, LedgerError> {
        Ok(self.tail()?.map(|(_, hash)| hash))
    }

    /// The entry named by `spec`: a sequence number, a unique hash prefix of
    /// at least 4 hex characters, or `latest`.
    pub fn entry(&self, spec: &str) -> Result<Entry, LedgerError> {
        self.reading(|| {
            let seq = self.find(spec)?;
            self.entry_at(seq)?.ok_or_else(|| self.unknown(spec))
        })
    }

    /// Every entry without its body, in chain order.
    pub fn list(&self) -> Result<Vec<EntryMeta>, LedgerError> {
        let sql = format!("SELECT {META_COLUMNS} FROM entry e ORDER BY e.seq");
        let mut stmt = self.conn.prepare(&sql).map_err(|e| self.fail(e))?;
        let mut rows = stmt.query([]).map_err(|e| self.fail(e))?;
        let mut out = Vec::new();
        while let Some(row) = rows.next().map_err(|e| self.fail(e))? {
            out.push(stored::read_meta(row).map_err(|r| self.corrupt(r))?);
        }
        Ok(out)
    }

    /// Every opening of sealed partition `partition`, in chain order.
    pub fn openings(&self, partition: &str) -> Result<Vec<Entry>, LedgerError> {
        self.reading(|| self.openings_where(OPENINGS_OF_PARTITION, partition))
    }

    /// Every opening of any partition of the data file with hash `data_file`.
    pub fn openings_of_data(&self, data_file: &str) -> Result<Vec<Entry>, LedgerError> {
        self.reading(|| self.openings_where(OPENINGS_OF_DATA, data_file))
    }

    /// For each row content hash in `rows`, how many openings included it.
    pub fn exposure(&self, rows: &[String]) -> Result<Vec<u32>, LedgerError> {
        self.reading(|| {
            let mut stmt = self
                .conn
                .prepare_cached("SELECT count(*) FROM exposure WHERE row_hash = ?1")
                .map_err(|e| self.fail(e))?;
            rows.iter()
                .map(|row| {
                    let n: i64 = stmt
                        .query_row([row], |r| r.get(0))
                        .map_err(|e| self.fail(e))?;
                    Ok(u32::try_from(n).unwrap_or(u32::MAX))
                })
                .collect()
        })
    }

    /// Run `f` so that every read of this ledger inside it (through any
    /// of its methods) sees one state of the file.
    pub fn read_snapshot<T>(
        &self,
        f: impl FnOnce() -> Result<T, LedgerError>,
    ) -> Result<T, LedgerError> {
        self.reading(f)
    }

    /// Run `f` inside one read transaction, so that its statements see one
    /// state of the file. Inside a transaction already, `f` runs in it.
    pub(super) fn reading<T>(
        &self,
        f: impl FnOnce() -> Result<T, LedgerError>,
    ) -> Result<T, LedgerError> {
        if !self.conn.is_autocommit() {
            return f();
        }
        let tx = rusqlite::Transaction::new_unchecked(&self.conn, TransactionBehavior::Deferred)
            .map_err(|e| self.fail(e))?;
        let out = f()?;
        tx.commit().map_err(|e| self.fail(e))?;
        Ok(out)
    }

    fn tail(&self) -> Result<Option<(u64, String)>, LedgerError> {
        let tail: Option<(i64, String)> = self
            .conn
            .query_row(
                "SELECT seq, hash FROM entry ORDER BY seq DESC LIMIT 1",
                [],
                |r| Ok((r.get(0)?, r.get(1)?)),
            )
            .optional()
            .map_err(|e| self.fail(e))?;
        Ok(tail.map(|(seq, hash)| (seq.max(0) as u64, hash)))
    }

    /// The sequence number `spec` names.
    fn find(&self, text: &str) -> Result<u64, LedgerError> {
        let (seq, prefix) = match EntrySpec::parse(text)? {
            EntrySpec::Latest => {
                let tail = self.tail()?;
                return tail.map(|(seq, _)| seq).ok_or_else(|| LedgerError::Empty {
                    path: self.path.clone(),
                });
            }
            EntrySpec::Id { seq, prefix } => (seq, prefix),
        };
        let mut found = BTreeMap::new();
        if let Some(seq) = seq {
            found.extend(self.hash_at(seq)?.map(|hash| (seq, hash)));
        }
        if let Some(prefix) = prefix {
            found.extend(self.with_prefix(&prefix)?);
        }
        match found.len() {
            0 => Err(self.unknown(text)),
            1 => Ok(*found.keys().next().unwrap_or(&0)),
            _ => Err(self.ambiguous(text, &found)),
        }
    }

    fn hash_at(&self, seq: u64) -> Result<Option<String>, LedgerError> {
        let seq = i64::try_from(seq).unwrap_or(i64::MAX);
        self.conn
            .query_row("SELECT hash FROM entry WHERE seq = ?1", [seq], |r| r.get(0))
            .optional()
            .map_err(|e| self.fail(e))
    }

    fn with_prefix(&self, prefix: &str) -> Result<Vec<(u64, String)>, LedgerError> {
        let mut stmt = self
            .conn
            .prepare_cached(
                "SELECT seq, hash FROM entry WHERE hash >= ?1 AND hash < ?2 ORDER BY seq LIMIT ?3",
            )
            .map_err(|e| self.fail(e))?;
        let limit = MAX_CANDIDATES as i64 + 1;
        let rows = stmt
            .query_map(
                rusqlite::params![prefix, spec::prefix_end(prefix), limit],
                |r| Ok((r.get::<_, i64>(0)?.max(0) as u64, r.get(1)?)),
            )
            .map_err(|e| self.fail(e))?;
        rows.collect::<Result<_, _>>().map_err(|e| self.fail(e))
    }

    /// The entry at position `seq`, if there is one.
    pub(super) fn entry_at(&self, seq: u64) -> Result<Option<Entry>, LedgerError> {
        let sql = format!("{SELECT_ENTRIES} WHERE e.seq = ?1");
        let seq = i64::try_from(seq).unwrap_or(i64::MAX);
        let rows = stored::sealed_rows(&self.conn, seq).map_err(|e| self.fail(e))?;
        let rows = rows.map_err(|r| self.corrupt(r))?;
        let mut stmt = self.conn.prepare_cached(&sql).map_err(|e| self.fail(e))?;
        let entry = stmt
            .query_row([seq], |row| Ok(stored::read_entry(row, rows)))
            .optional()
            .map_err(|e| self.fail(e))?;
        entry.transpose().map_err(|r| self.corrupt(r))
    }

    /// The openings `sql` (one of the `OPENINGS_OF_*` queries) selects.
    fn openings_where(&self, sql: &str, value: &str) -> Result<Vec<Entry>, LedgerError> {
        let mut stmt = self.conn.prepare_cached(sql).map_err(|e| self.fail(e))?;
        let seqs = stmt
            .query_map([value], |r| r.get::<_, i64>(0))
            .map_err(|e| self.fail(e))?
            .collect::<Result<Vec<_>, _>>()
            .map_err(|e| self.fail(e))?;
        let entries = seqs.into_iter().map(|seq| self.entry_at(seq.max(0) as u64));
        entries.filter_map(Result::transpose).collect()
    }

    pub(super) fn fail(&self, e: rusqlite::Error) -> LedgerError {
        LedgerError::from_sqlite(&self.path, e)
    }

    pub(super) fn corrupt(&self, reason: String) -> LedgerError {
        LedgerError::Corrupt {
            path: self.path.clone(),
            reason,
        }
    }

    pub(super) fn invalid(&self, reason: &str) -> LedgerError {
        LedgerError::Invalid {
            path: self.path.clone(),
            reason: reason.to_string(),
        }
    }

    fn unknown(&self, spec: &str) -> LedgerError {
        LedgerError::UnknownEntry {
            path: self.path.clone(),
            spec: spec.to_string(),
        }
    }

    fn ambiguous(&self, spec: &str, found: &BTreeMap<u64, String>) -> LedgerError {
        let mut candidates: Vec<String> = found
            .iter()
            .take(MAX_CANDIDATES)
            .map(|(seq, hash)| format!("entry {seq} ({})", short_hash(hash)))
            .collect();
        if found.len() > MAX_CANDIDATES {
            candidates.push("and more".to_string());
        }
        LedgerError::AmbiguousEntry {
            path: self.path.clone(),
            spec: spec.to_string(),
            candidates,
        }
    }
}

/// `new` as it will be recorded at position `seq` after `prev`, before its
/// hash is computed: timestamp at ledger precision, sealed rows sorted.
fn recorded(new: NewEntry, seq: u64, prev: String) -> Entry {
    let mut sealed_rows = new.sealed_rows;
    sealed_rows.sort();
    Entry {
        seq,
        hash: String::new(),
        prev,
        kind: new.kind,
        timestamp: truncate_timestamp(new.timestamp),
        plan_hash: new.plan_hash,
        data_file: new.data_file,
        partition: new.partition,
        result_hash: new.result_hash,
        body: new.body,
        sealed_rows,
        provenance: new.provenance,
    }
}

fn connect(path: &Path, mode: OpenFlags) -> Result<Connection, LedgerError> {
    let flags = mode | OpenFlags::SQLITE_OPEN_NO_MUTEX;
    let conn =
        Connection::open_with_flags(path, flags).map_err(|e| LedgerError::from_sqlite(path, e))?;
    schema::configure(&conn, path)?;
    Ok(conn)
}

/// A connection that never writes. When the file can be written, it is
/// opened read-write with `query_only` set: SQLite then removes its
/// write-ahead log and shared-memory files on close, which a read-only
/// connection leaves behind beside the ledger.
fn connect_reader(path: &Path) -> Result<Connection, LedgerError> {
    if check_writable(path).is_err() {
        return connect(path, OpenFlags::SQLITE_OPEN_READ_ONLY);
    }
    let conn = connect(path, OpenFlags::SQLITE_OPEN_READ_WRITE)?;
    conn.pragma_update(None, "query_only", true)
        .map_err(|e| LedgerError::from_sqlite(path, e))?;
    Ok(conn)
}

fn ensure_folder(path: &Path) -> Result<(), LedgerError> {
    let Some(folder) = path.parent().filter(|p| !p.as_os_str().is_empty()) else {
        return Ok(());
    };
    std::fs::create_dir_all(folder).map_err(|source| LedgerError::CreateFolder {
        path: path.to_path_buf(),
        folder: folder.to_path_buf(),
        source,
    })
}

/// Create the empty file ourselves, so that a refusal carries the
/// system's reason (SQLite only says it could not open the file).
fn create_file(path: &Path) -> Result<(), LedgerError> {
    match OpenOptions::new().write(true).create_new(true).open(path) {
        Ok(_) => Ok(()),
        // Another process created it first: fine, it is a new ledger too.
        Err(e) if e.kind() == ErrorKind::AlreadyExists => Ok(()),
        Err(e) => Err(io_refusal(path, "cannot create it", e)),
    }
}

fn check_writable(path: &Path) -> Result<(), LedgerError> {
    // Opening for writing changes nothing in the file.
    OpenOptions::new()
        .write(true)
        .open(path)
        .map(drop)
        .map_err(|e| io_refusal(path, "cannot open it for writing", e))
}

fn io_refusal(path: &Path, what: &str, e: std::io::Error) -> LedgerError {
    let path = path.to_path_buf();
    let reason = format!("{what}: {e}");
    match e.kind() {
        ErrorKind::PermissionDenied | ErrorKind::ReadOnlyFilesystem => {
            LedgerError::ReadOnly { path, reason }
        }
        _ => LedgerError::CannotOpen { path, reason },
    }
}
