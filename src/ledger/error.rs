//! Errors of the ledger, and the exit code each one leads to.
//!
//! Every message names the ledger file it concerns and says what to do.
//! SQLite failures are sorted by their result code into the user's
//! problems (a read-only place, a busy or full disk, a file that is not a
//! ledger: exit 2), integrity failures (a damaged file or an entry that no
//! longer reads back: exit 3) and the rest (exit 1, a bug).

use std::path::{Path, PathBuf};

use rusqlite::ErrorCode;

use crate::exit;

/// What the location flags say to do when the chosen place does not work.
const ELSEWHERE: &str = "pass --ledger or set HOLDFAST_LEDGER to choose another ledger file";

/// Everything that can go wrong while opening, writing or reading a ledger.
#[derive(Debug, thiserror::Error)]
pub enum LedgerError {
    /// The folder that should hold the ledger could not be created.
    #[error("cannot create folder {} for ledger {}: {source}; {ELSEWHERE}", folder.display(), path.display())]
    CreateFolder {
        path: PathBuf,
        folder: PathBuf,
        source: std::io::Error,
    },
    /// The ledger, or the folder beside it, cannot be written.
    #[error("ledger {} cannot be written: {reason}; make it writable, or {ELSEWHERE}", path.display())]
    ReadOnly { path: PathBuf, reason: String },
    /// The file could not be opened or read at all.
    #[error("cannot open ledger {}: {reason}; {ELSEWHERE}", path.display())]
    CannotOpen { path: PathBuf, reason: String },
    /// A read-only command was pointed at a ledger that does not exist yet.
    #[error("no ledger at {}: no run has recorded anything there yet; run a plan first, or {ELSEWHERE}", path.display())]
    NotFound { path: PathBuf },
    /// The file exists but is not an SQLite database.
    #[error("{} is not an SQLite file, so it is not a holdfast ledger; it was left unchanged; {ELSEWHERE}", path.display())]
    NotSqlite { path: PathBuf },
    /// The file is an SQLite database written by some other program.
    #[error("{} is an SQLite database but not a holdfast ledger (application id {app_id:#010x}); it was left unchanged; {ELSEWHERE}", path.display())]
    NotLedger { path: PathBuf, app_id: i64 },
    /// The ledger was written by a newer holdfast with a newer schema.
    #[error("ledger {} was written by a newer holdfast (schema {found}, this one reads up to {supported}); it was left unchanged; upgrade holdfast", path.display())]
    NewerSchema {
        path: PathBuf,
        found: i64,
        supported: i64,
    },
    /// Another process held the ledger locked for longer than the busy timeout.
    #[error("ledger {} is busy: another process kept it locked for more than {seconds} s; try again when it has finished", path.display())]
    Busy { path: PathBuf, seconds: u64 },
    /// The disk holding the ledger is full.
    #[error("ledger {} cannot grow: the disk is full; free some space and run again", path.display())]
    DiskFull { path: PathBuf },
    /// The ledger has no entries, so `latest` or a head means nothing yet.
    #[error("ledger {} has no entries yet; run a plan first", path.display())]
    Empty { path: PathBuf },
    /// No entry matches the given id.
    #[error("no entry {spec} in ledger {}; `holdfast log` lists the entries", path.display())]
    UnknownEntry { path: PathBuf, spec: String },
    /// A hash prefix (or number) matches more than one entry.
    #[error("entry id {spec} is ambiguous in ledger {}: it matches {}; give more characters of the hash", path.display(), candidates.join(", "))]
    AmbiguousEntry {
        path: PathBuf,
        spec: String,
        candidates: Vec<String>,
    },
    /// The text given as an entry id has the wrong shape.
    #[error(
        "{spec:?} is not an entry id: give a sequence number (1, 2, ...), at least 4 hex characters of an entry hash, or `latest`"
    )]
    BadEntrySpec { spec: String },
    /// The text given as a head to prove is not a full entry hash.
    #[error("{head:?} is not an entry hash: give all 64 hex characters of the hash you recorded")]
    BadHead { head: String },
    /// A cached job result no longer matches the hash stored beside it.
    #[error("cached result of job {id} in ledger {} does not match its recorded hash: the cache was altered; run `holdfast verify` and do not trust results drawn from it", path.display())]
    CacheTampered { path: PathBuf, id: String },
    /// The file or a stored entry is damaged.
    #[error("ledger {} is damaged: {reason}; run `holdfast verify` to see what changed", path.display())]
    Corrupt { path: PathBuf, reason: String },
    /// A caller handed the ledger something it must never hold (a bug).
    #[error("refused to write to ledger {}: {reason}", path.display())]
    Invalid { path: PathBuf, reason: String },
    /// Any other SQLite failure (a bug, or an environment holdfast does not expect).
    #[error("ledger {}: {source}", path.display())]
    Sqlite {
        path: PathBuf,
        source: rusqlite::Error,
    },
}

impl LedgerError {
    /// The process exit code this error leads to: [`exit::USER`] for the
    /// user's mistakes and their environment, [`exit::INTEGRITY`] for a
    /// damaged or altered ledger, [`exit::INTERNAL`] for bugs.
    pub fn exit_code(&self) -> u8 {
        match self {
            Self::CacheTampered { .. } | Self::Corrupt { .. } => exit::INTEGRITY,
            Self::Invalid { .. } | Self::Sqlite { .. } => exit::INTERNAL,
            _ => exit::USER,
        }
    }

    /// Sort an SQLite failure on the ledger at `path` into its kind.
    pub(crate) fn from_sqlite(path: &Path, source: rusqlite::Error) -> Self {
        let path = path.to_path_buf();
        let reason = source.to_string();
        match source.sqlite_error_code() {
            Some(ErrorCode::ReadOnly) => Self::ReadOnly { path, reason },
            Some(ErrorCode::DatabaseBusy | ErrorCode::DatabaseLocked) => Self::Busy {
                path,
                seconds: super::schema::BUSY_TIMEOUT.as_secs(),
            },
            Some(ErrorCode::DiskFull) => Self::DiskFull { path },
            Some(ErrorCode::NotADatabase) => Self::NotSqlite { path },
            Some(ErrorCode::DatabaseCorrupt) => Self::Corrupt { path, reason },
            Some(
                ErrorCode::CannotOpen | ErrorCode::SystemIoFailure | ErrorCode::PermissionDenied,
            ) => Self::CannotOpen { path, reason },
            _ => Self::Sqlite { path, source },
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sqlite_failure(code: i32) -> rusqlite::Error {
        rusqlite::Error::SqliteFailure(rusqlite::ffi::Error::new(code), None)
    }

    #[test]
    fn sqlite_codes_map_to_exit_codes() {
        // Result codes from the SQLite C interface documentation ("Result and
        // Error Codes"), as exported by libsqlite3-sys.
        let table = [
            (rusqlite::ffi::SQLITE_READONLY, exit::USER),
            (rusqlite::ffi::SQLITE_BUSY, exit::USER),
            (rusqlite::ffi::SQLITE_FULL, exit::USER),
            (rusqlite::ffi::SQLITE_NOTADB, exit::USER),
            (rusqlite::ffi::SQLITE_CANTOPEN, exit::USER),
            (rusqlite::ffi::SQLITE_CORRUPT, exit::INTEGRITY),
            (rusqlite::ffi::SQLITE_MISUSE, exit::INTERNAL),
        ];
        for (code, want) in table {
            let err = LedgerError::from_sqlite(Path::new("l.sqlite"), sqlite_failure(code));
            assert_eq!(err.exit_code(), want, "code {code}: {err}");
            assert!(err.to_string().contains("l.sqlite"), "{err}");
        }
    }

    #[test]
    fn newer_schema_message_says_what_to_do() {
        let err = LedgerError::NewerSchema {
            path: PathBuf::from("ledger/holdfast.sqlite"),
            found: 3,
            supported: 1,
        };
        let text = err.to_string();
        assert!(text.starts_with("ledger ledger/holdfast.sqlite was written by a newer holdfast (schema 3, this one reads up to 1)"));
        assert!(text.ends_with("upgrade holdfast"));
        assert_eq!(err.exit_code(), exit::USER);
    }
}
