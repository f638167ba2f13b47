//! The job cache: job results keyed by job id, so that a killed run
//! resumes and plans that share jobs share their results.
//!
//! A job id hashes everything the job depends on, so a stored result never
//! changes: storing an id that is already present keeps the first result
//! (a `job_no_update` trigger forbids rewriting it). Each result is stored
//! beside the BLAKE3 of its text; [`Ledger::jobs`] refuses a result that no
//! longer matches, and [`Ledger::verify`] re-hashes them all. The cache is
//! not part of the hash chain: entries record what they chose from it.
//! Writes are sorted by id so that the id index grows in order, which
//! keeps a million-row write to a few seconds.

use std::collections::BTreeMap;

use rusqlite::{OptionalExtension, TransactionBehavior, params};
use serde::Serialize;

use crate::canon;

use super::error::LedgerError;
use super::ledger::Ledger;

/// One cached job result.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StoredJob {
    /// The job's id (a content hash of its inputs).
    pub id: String,
    /// The result as canonical JSON text.
    pub result: String,
    /// Wall-clock seconds the job took (finite, not negative).
    pub seconds: f64,
}

/// The hash stored beside a cached result.
pub fn result_hash(result: &str) -> String {
    canon::hash_bytes(result.as_bytes())
}

impl Ledger {
    /// Store `jobs` in one transaction; ids already cached keep their result.
    pub fn store_jobs(&self, jobs: &[StoredJob]) -> Result<(), LedgerError> {
        if let Some(job) = jobs
            .iter()
            .find(|j| !(j.seconds.is_finite() && j.seconds >= 0.0))
        {
            let reason = format!("job {} took {} seconds", job.id, job.seconds);
            return Err(self.invalid(&reason));
        }
        let mut order: Vec<&StoredJob> = jobs.iter().collect();
        order.sort_unstable_by(|a, b| a.id.cmp(&b.id));
        let tx = rusqlite::Transaction::new_unchecked(&self.conn, TransactionBehavior::Immediate)
            .map_err(|e| self.fail(e))?;
        {
            let mut stmt = tx
                .prepare_cached(
                    "INSERT INTO job (id, result, result_hash, seconds) VALUES (?1, ?2, ?3, ?4) \
                     ON CONFLICT (id) DO NOTHING",
                )
                .map_err(|e| self.fail(e))?;
            for job in order {
                let hash = result_hash(&job.result);
                stmt.execute(params![job.id, job.result, hash, job.seconds])
                    .map_err(|e| self.fail(e))?;
            }
        }
        tx.commit().map_err(|e| self.fail(e))
    }

    /// The cached results of those `ids` that are cached. A result that no
    /// longer matches its hash is an error, never silently reused.
    pub fn jobs(&self, ids: &[String]) -> Result<BTreeMap<String, StoredJob>, LedgerError> {
        self.reading(|| {
            let mut stmt = self
                .conn
                .prepare_cached("SELECT result, result_hash, seconds FROM job WHERE id = ?1")
                .map_err(|e| self.fail(e))?;
            // In id order the index and the rows (written in id order too)
            // are read front to back, not at random.
            let mut sorted: Vec<&String> = ids.iter().collect();
            sorted.sort_unstable();
            sorted.dedup();
            let mut found = BTreeMap::new();
            for id in sorted {
                let row: Option<(String, String, f64)> = stmt
                    .query_row([id], |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)))
                    .optional()
                    .map_err(|e| self.tampered_or(id, e))?;
                let Some((result, hash, seconds)) = row else {
                    continue;
                };
                if result_hash(&result) != hash {
                    return Err(self.tampered(id));
                }
                let job = StoredJob {
                    id: id.clone(),
                    result,
                    seconds,
                };
                found.insert(id.clone(), job);
            }
            Ok(found)
        })
    }

    fn tampered(&self, id: &str) -> LedgerError {
        LedgerError::CacheTampered {
            path: self.path.clone(),
            id: id.to_string(),
        }
    }

    /// A stored value of the wrong type is tampering; anything else is SQLite's.
    fn tampered_or(&self, id: &str, e: rusqlite::Error) -> LedgerError {
        match e {
            rusqlite::Error::InvalidColumnType(..)
            | rusqlite::Error::FromSqlConversionFailure(..) => self.tampered(id),
            e => self.fail(e),
        }
    }
}
