//! The ledger: one SQLite file holding a hash chain of entries (selections
//! and openings), the per-job result cache that makes runs resumable, and
//! the row exposure of every opening.
//!
//! Entries are append-only and chained: each entry's hash covers its
//! content, its sequence number and the previous entry's hash, so an edit,
//! a deletion or a re-ordering anywhere shows up in [`Ledger::verify`], and
//! a head hash written down earlier proves that nothing up to it was
//! rewritten. The exposure table records, per opening, the content hashes
//! of the sealed rows it evaluated, so an auditor can ask how often each
//! row has been looked at, however the data file was shuffled since.
//! Every hash goes through [`crate::canon`].

mod canonical;
mod entry;
mod error;
mod exposure_scan;
mod jobs;
// The file is named after the type it holds, as everywhere else.
#[allow(clippy::module_inception)]
mod ledger;
mod location;
mod provenance;
mod read_ahead;
mod row_exposure;
mod schema;
mod spec;
mod stored;
mod verify;

#[cfg(test)]
mod tests;

pub use canonical::plain_len;
pub use entry::{
    Entry, EntryKind, EntryMeta, GENESIS, HASH_FORMAT, NewEntry, entry_hash, short_hash,
    timestamp_text,
};
pub use error::LedgerError;
pub use jobs::{StoredJob, result_hash};
pub use ledger::Ledger;
pub use location::{
    LEDGER_FILE, LEDGER_VAR, default_path, git_root, ledger_var, resolve_path, resolve_path_in,
};
pub use provenance::Provenance;
pub use row_exposure::RowExposure;
pub use schema::{APPLICATION_ID, BUSY_TIMEOUT, SCHEMA_VERSION};
pub use spec::{EntrySpec, MIN_PREFIX};
pub use verify::{HeadCheck, Problem, ProblemKind, Verification, VerifiedRead};
