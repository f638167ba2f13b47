//! The ledger's SQLite schema, its migrations, and the checks made before
//! a file is touched.
//!
//! A ledger is an SQLite file whose header carries holdfast's application
//! id and whose `user_version` is the number of migrations applied. The
//! migrations are an ordered list of SQL steps; step `i` (from 0) takes the
//! schema from version `i` to `i + 1`, and all pending steps run in one
//! IMMEDIATE transaction that re-reads the version first, so two processes
//! opening a new ledger at once migrate it exactly once.
//!
//! Invariant: a file that is refused (not SQLite, another program's
//! database, a newer schema) is only ever read, never written: the SQLite
//! magic is checked with plain file reads before SQLite opens the file, and
//! the application id and version are read before WAL mode is switched on
//! or anything is migrated.
//!
//! Entry bodies live in a table of their own so that listing entries never
//! reads through the (large) result objects.
//!
//! Entries, bodies and exposure rows are append-only: triggers refuse UPDATE and
//! DELETE, so that no ordinary SQL slip can erase a look. A deliberate
//! tamperer can drop the triggers; `verify` catches what they did next.

use std::io::Read;
use std::path::Path;
use std::time::Duration;

use rusqlite::{Connection, TransactionBehavior};

use super::error::LedgerError;

/// How long a writer waits for another process's lock before giving up:
/// long enough for another run storing a million job results (about 9 s
/// on the project machine, BENCHMARKS.md) to finish its transaction.
pub const BUSY_TIMEOUT: Duration = Duration::from_secs(60);

/// holdfast's SQLite application id: the ASCII bytes "HFLG".
pub const APPLICATION_ID: i64 = 0x4846_4C47;

/// The first 16 bytes of every SQLite 3 database (SQLite "Database File
/// Format", section 1.3, "The Database Header", offset 0).
const SQLITE_MAGIC: &[u8; 16] = b"SQLite format 3\0";

/// The migrations, in order. Never edit a released step: add a new one.
pub const MIGRATIONS: &[&str] = &[SCHEMA_1];

/// The newest schema version this holdfast reads and writes.
pub const SCHEMA_VERSION: i64 = MIGRATIONS.len() as i64;

const SCHEMA_1: &str = "
CREATE TABLE entry (
    seq              INTEGER PRIMARY KEY,
    hash             TEXT NOT NULL UNIQUE,
    prev             TEXT NOT NULL,
    format           INTEGER NOT NULL,
    kind             TEXT NOT NULL,
    timestamp        TEXT NOT NULL,
    plan_hash        TEXT NOT NULL,
    data_file        TEXT NOT NULL,
    partition        TEXT NOT NULL,
    result_hash      TEXT NOT NULL,
    sealed_row_count INTEGER NOT NULL,
    user             TEXT NOT NULL,
    host             TEXT NOT NULL,
    tool_version     TEXT NOT NULL,
    plan_path        TEXT NOT NULL,
    git_commit       TEXT,
    git_dirty        INTEGER
);
CREATE INDEX entry_by_partition ON entry (partition, kind, seq);
CREATE INDEX entry_by_data_file ON entry (data_file, kind, seq);

CREATE TABLE entry_body (
    seq  INTEGER PRIMARY KEY,
    body TEXT NOT NULL
);

CREATE TABLE exposure (
    row_hash TEXT NOT NULL,
    seq      INTEGER NOT NULL,
    copies   INTEGER NOT NULL,
    PRIMARY KEY (row_hash, seq)
) WITHOUT ROWID;
CREATE INDEX exposure_by_entry ON exposure (seq, row_hash, copies);

CREATE TABLE job (
    id          TEXT NOT NULL UNIQUE,
    result      TEXT NOT NULL,
    result_hash TEXT NOT NULL,
    seconds     REAL NOT NULL
);

CREATE TRIGGER entry_no_update BEFORE UPDATE ON entry
BEGIN SELECT RAISE(ABORT, 'ledger entries are append-only'); END;
CREATE TRIGGER entry_no_delete BEFORE DELETE ON entry
BEGIN SELECT RAISE(ABORT, 'ledger entries are append-only'); END;
CREATE TRIGGER entry_body_no_update BEFORE UPDATE ON entry_body
BEGIN SELECT RAISE(ABORT, 'ledger entries are append-only'); END;
CREATE TRIGGER entry_body_no_delete BEFORE DELETE ON entry_body
BEGIN SELECT RAISE(ABORT, 'ledger entries are append-only'); END;
CREATE TRIGGER exposure_no_update BEFORE UPDATE ON exposure
BEGIN SELECT RAISE(ABORT, 'row exposure is append-only'); END;
CREATE TRIGGER exposure_no_delete BEFORE DELETE ON exposure
BEGIN SELECT RAISE(ABORT, 'row exposure is append-only'); END;
CREATE TRIGGER job_no_update BEFORE UPDATE ON job
BEGIN SELECT RAISE(ABORT, 'cached job results never change'); END;
";

/// What an opened file turned out to hold.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum State {
    /// An empty database: nothing written yet.
    Fresh,
    /// A holdfast ledger at this schema version (never above [`SCHEMA_VERSION`]).
    Ledger(i64),
}

/// Refuse a file that exists and is not SQLite, with plain reads only.
/// `Ok(false)` when there is no file, `Ok(true)` when it exists (possibly
/// empty, which SQLite treats as an empty database).
pub fn check_header(path: &Path) -> Result<bool, LedgerError> {
    let cannot_open = |e: std::io::Error| LedgerError::CannotOpen {
        path: path.to_path_buf(),
        reason: e.to_string(),
    };
    let file = match std::fs::File::open(path) {
        Ok(file) => file,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(false),
        Err(e) => return Err(cannot_open(e)),
    };
    let mut head = Vec::with_capacity(SQLITE_MAGIC.len());
    file.take(SQLITE_MAGIC.len() as u64)
        .read_to_end(&mut head)
        .map_err(cannot_open)?;
    if head.is_empty() || head == SQLITE_MAGIC {
        return Ok(true);
    }
    Err(LedgerError::NotSqlite {
        path: path.to_path_buf(),
    })
}

/// Settings every connection gets, before anything is read.
pub fn configure(conn: &Connection, path: &Path) -> Result<(), LedgerError> {
    let fail = |e| LedgerError::from_sqlite(path, e);
    conn.busy_timeout(BUSY_TIMEOUT).map_err(fail)?;
    // Bounds the write-ahead log after a big job-cache write (common practice).
    conn.pragma_update(None, "journal_size_limit", 64 * 1024 * 1024)
        .map_err(fail)
}

/// Read what the file holds without writing anything; refuse another
/// program's database and a newer schema.
pub fn inspect(conn: &Connection, path: &Path) -> Result<State, LedgerError> {
    let fail = |e| LedgerError::from_sqlite(path, e);
    // One statement, so one snapshot: three separate reads could straddle
    // another process's first migration and see its application id unset
    // but its tables present.
    let (app_id, version, objects): (i64, i64, i64) = conn
        .query_row(
            "SELECT (SELECT application_id FROM pragma_application_id), \
                    (SELECT user_version FROM pragma_user_version), \
                    (SELECT count(*) FROM sqlite_schema)",
            [],
            |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)),
        )
        .map_err(fail)?;
    let path = path.to_path_buf();
    if app_id == APPLICATION_ID && version > SCHEMA_VERSION {
        return Err(LedgerError::NewerSchema {
            path,
            found: version,
            supported: SCHEMA_VERSION,
        });
    }
    match (app_id, version, objects) {
        (APPLICATION_ID, v, _) if v > 0 => Ok(State::Ledger(v)),
        (0, 0, 0) => Ok(State::Fresh),
        _ => Err(LedgerError::NotLedger { path, app_id }),
    }
}

/// Switch the file to write-ahead logging, so that readers never block the
/// writer; the mode is stored in the file and persists.
pub fn enable_wal(conn: &Connection, path: &Path) -> Result<(), LedgerError> {
    // Changing the journal mode needs an exclusive lock, and SQLite does not
    // wait for it through the busy handler: when another process is creating
    // the same ledger at this moment, wait for it here (up to the busy
    // timeout), and skip the change once the file is already in WAL mode.
    let deadline = std::time::Instant::now() + BUSY_TIMEOUT;
    loop {
        let current: String = conn
            .pragma_query_value(None, "journal_mode", |r| r.get(0))
            .map_err(|e| wal_failure(path, &e.to_string()))?;
        if current.eq_ignore_ascii_case("wal") {
            return Ok(());
        }
        match conn.pragma_update_and_check(None, "journal_mode", "wal", |r| r.get::<_, String>(0)) {
            Ok(mode) if mode.eq_ignore_ascii_case("wal") => return Ok(()),
            Ok(mode) => {
                return Err(wal_failure(
                    path,
                    &format!("the journal mode stayed {mode}"),
                ));
            }
            Err(e) if is_busy(&e) && std::time::Instant::now() < deadline => {
                std::thread::sleep(Duration::from_millis(20));
            }
            Err(e) => return Err(wal_failure(path, &e.to_string())),
        }
    }
}

fn is_busy(e: &rusqlite::Error) -> bool {
    matches!(
        e.sqlite_error_code(),
        Some(rusqlite::ErrorCode::DatabaseBusy | rusqlite::ErrorCode::DatabaseLocked)
    )
}

fn wal_failure(path: &Path, reason: &str) -> LedgerError {
    LedgerError::ReadOnly {
        path: path.to_path_buf(),
        reason: format!(
            "SQLite could not start its write-ahead log beside it ({reason}); the folder must be writable"
        ),
    }
}

/// Apply every pending migration in one IMMEDIATE transaction.
pub fn migrate(conn: &Connection, path: &Path) -> Result<(), LedgerError> {
    let fail = |e| LedgerError::from_sqlite(path, e);
    let tx =
        rusqlite::Transaction::new_unchecked(conn, TransactionBehavior::Immediate).map_err(fail)?;
    // Another process may have migrated between our first look and the lock.
    let from = match inspect(conn, path)? {
        State::Fresh => 0,
        State::Ledger(v) => v,
    };
    if from == SCHEMA_VERSION {
        return Ok(());
    }
    if from == 0 {
        tx.pragma_update(None, "application_id", APPLICATION_ID)
            .map_err(fail)?;
    }
    for step in &MIGRATIONS[from as usize..] {
        tx.execute_batch(step).map_err(fail)?;
    }
    tx.pragma_update(None, "user_version", SCHEMA_VERSION)
        .map_err(fail)?;
    tx.commit().map_err(fail)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_check_accepts_missing_empty_and_sqlite_files_only() {
        let dir = tempfile::tempdir().unwrap();
        let file = |name: &str, bytes: &[u8]| {
            let path = dir.path().join(name);
            std::fs::write(&path, bytes).unwrap();
            path
        };
        assert!(!check_header(&dir.path().join("none")).unwrap());
        assert!(check_header(&file("empty", b"")).unwrap());
        assert!(check_header(&file("sqlite", b"SQLite format 3\0rest")).unwrap());
        for bad in [&b"SQLite"[..], b"{\"a\":1}\n", b"SQLite format 2\0xxxx"] {
            let err = check_header(&file("bad", bad)).unwrap_err();
            assert!(matches!(err, LedgerError::NotSqlite { .. }), "{err}");
        }
    }

    #[test]
    fn migration_sets_version_and_application_id_once() {
        let conn = Connection::open_in_memory().unwrap();
        let path = Path::new("mem");
        assert_eq!(inspect(&conn, path).unwrap(), State::Fresh);
        migrate(&conn, path).unwrap();
        migrate(&conn, path).unwrap();
        assert_eq!(inspect(&conn, path).unwrap(), State::Ledger(SCHEMA_VERSION));
        let id: i64 = conn
            .pragma_query_value(None, "application_id", |r| r.get(0))
            .unwrap();
        // 0x48 0x46 0x4c 0x47 are ASCII "H", "F", "L", "G" (ASCII table).
        assert_eq!(id.to_be_bytes()[4..], *b"HFLG");
    }

    #[test]
    fn triggers_refuse_updates_and_deletes_of_entries() {
        let conn = Connection::open_in_memory().unwrap();
        migrate(&conn, Path::new("mem")).unwrap();
        conn.execute_batch(
            "INSERT INTO entry VALUES (1,'h','p',1,'selection','t','a','b','c','d',0,'u','h','v','p',NULL,NULL);
             INSERT INTO entry_body VALUES (1, '{}');
             INSERT INTO exposure VALUES ('r', 1, 1);",
        )
        .unwrap();
        for sql in [
            "UPDATE entry SET plan_hash = 'x'",
            "DELETE FROM entry",
            "UPDATE entry_body SET body = '{\"x\":1}'",
            "DELETE FROM entry_body",
            "UPDATE exposure SET copies = 2",
            "DELETE FROM exposure",
        ] {
            let err = conn.execute(sql, []).unwrap_err();
            assert!(err.to_string().contains("append-only"), "{sql}: {err}");
        }
    }
}
