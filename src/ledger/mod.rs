//! The ledger: one SQLite file holding a hash chain of entries (selections
//! and openings), the per-job result cache that makes runs resumable, and
//! the row exposure of every opening. (Being built: see the ledger issue.)
