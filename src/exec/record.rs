//! `run` as a library call: compile, reuse recorded jobs, run the rest,
//! store results as they finish, select, and append a selection entry.
//!
//! The entry body is the [`SelectionResult`] (what `result_hash` covers)
//! plus two keys outside the hash: `plan_text` (the plan file as it was, so
//! that replay can re-run it) and `run` (reuse counts and seconds, which
//! differ between a resumed and an uninterrupted run).

use std::collections::BTreeMap;
use std::path::Path;
use std::time::Instant;

use chrono::{DateTime, Utc};
use serde::Serialize;

use crate::compile::{self, JobSheet};
use crate::ledger::{Entry, EntryKind, Ledger, LedgerError, NewEntry, Provenance, StoredJob};
use crate::plan::{self, Resolved};

use super::runner::{JobResult, RunProgress, run_jobs};
use super::selection::{SelectError, SelectionResult, row_hashes, select};

/// Keys of an entry body that are not part of its result hash.
pub const UNHASHED_KEYS: &[&str] = &["plan_text", "run"];

/// Facts of one run that vary between runs; kept outside the result hash.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RunFacts {
    pub jobs: usize,
    /// Jobs whose results were already in the ledger (a resumed run, or
    /// another plan that shares them).
    pub reused: usize,
    pub fresh: usize,
    pub seconds: f64,
}

/// What `run` did.
pub struct RunOutcome {
    pub entry: Entry,
    pub selection: SelectionResult,
    pub facts: RunFacts,
    pub warnings: Vec<String>,
}

/// Why a run failed.
#[derive(Debug, thiserror::Error)]
pub enum RunError {
    #[error("{0}")]
    Resolve(#[from] plan::ResolveError),
    #[error("{0}")]
    Compile(#[from] compile::CompileError),
    #[error("{0}")]
    Ledger(#[from] LedgerError),
    #[error("{0}")]
    Select(#[from] SelectError),
    #[error("internal error: {0}")]
    Internal(String),
}

/// The exposure warning for `sealed` rows of plan `r`, if any were in an
/// earlier opening.
pub fn exposure_warning(
    ledger: &Ledger,
    r: &Resolved,
    sealed: &[u32],
) -> Result<Option<(usize, String)>, LedgerError> {
    let hashes = row_hashes(r, sealed);
    let counts = ledger.exposure(&hashes)?;
    let seen = counts.iter().filter(|&&c| c > 0).count();
    if seen == 0 {
        return Ok(None);
    }
    let share = 100.0 * seen as f64 / sealed.len().max(1) as f64;
    let text = format!(
        "{seen} of the {} sealed rows ({share:.1}%) were already in an opened sealed partition (matched by row content): \
         an estimate on them is no longer a first look",
        sealed.len()
    );
    Ok(Some((seen, text)))
}

struct Store<'a> {
    ledger: &'a Ledger,
    tick: Box<dyn Fn(usize) + Sync + 'a>,
    error: Option<LedgerError>,
}

impl RunProgress for Store<'_> {
    fn advance(&self) -> &(dyn Fn(usize) + Sync) {
        &*self.tick
    }
    fn store(&mut self, batch: &[(JobResult, f64)]) {
        let jobs: Vec<StoredJob> = batch
            .iter()
            .filter_map(|(r, s)| {
                crate::canon::canonical_json(r)
                    .ok()
                    .map(|result| StoredJob {
                        id: r.id.clone(),
                        result,
                        seconds: *s,
                    })
            })
            .collect();
        if let Err(e) = self.ledger.store_jobs(&jobs) {
            self.error.get_or_insert(e);
        }
    }
}

fn cached(ledger: &Ledger, sheet: &JobSheet) -> Result<BTreeMap<String, JobResult>, LedgerError> {
    let ids: Vec<String> = sheet.jobs.iter().map(|j| j.id.clone()).collect();
    let stored = ledger.jobs(&ids)?;
    Ok(stored
        .into_iter()
        .filter_map(|(id, s)| {
            serde_json::from_str::<JobResult>(&s.result)
                .ok()
                .map(|r| (id, r))
        })
        .collect())
}

/// A progress bar on stderr when it is a terminal, hidden otherwise.
pub fn progress_bar(len: usize) -> indicatif::ProgressBar {
    use std::io::IsTerminal;
    if std::io::stderr().is_terminal() {
        let bar = indicatif::ProgressBar::new(len as u64);
        if let Ok(style) =
            indicatif::ProgressStyle::with_template("{bar:40} {pos}/{len} jobs {elapsed}")
        {
            bar.set_style(style);
        }
        bar
    } else {
        indicatif::ProgressBar::hidden()
    }
}

/// Run every job of `sheet` (reusing recorded ones), store fresh results in
/// the ledger as they finish, and select.
pub fn execute(
    r: &Resolved,
    sheet: &JobSheet,
    ledger: &Ledger,
) -> Result<(SelectionResult, RunFacts), RunError> {
    let started = Instant::now();
    let reuse = cached(ledger, sheet)?;
    let reused = sheet
        .jobs
        .iter()
        .filter(|j| reuse.contains_key(&j.id))
        .count();
    let bar = progress_bar(sheet.jobs.len() - reused);
    let mut store = Store {
        ledger,
        tick: Box::new(|n| bar.inc(n as u64)),
        error: None,
    };
    let results = run_jobs(r, sheet, &reuse, &mut store);
    bar.finish_and_clear();
    if let Some(e) = store.error.take() {
        return Err(e.into());
    }
    let selection = select(r, sheet, results)?;
    let facts = RunFacts {
        jobs: sheet.jobs.len(),
        reused,
        fresh: sheet.jobs.len() - reused,
        seconds: started.elapsed().as_secs_f64(),
    };
    Ok((selection, facts))
}

/// The plan path made absolute (recorded, so that replay finds the data
/// from any folder); the path as given when that fails.
pub fn absolute(path: &Path) -> std::path::PathBuf {
    std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf())
}

/// The body of an entry: `result`'s JSON plus the unhashed keys.
pub fn body_with(
    result: &serde_json::Value,
    plan_text: &str,
    run: &impl Serialize,
) -> serde_json::Value {
    let mut body = result.clone();
    if let Some(map) = body.as_object_mut() {
        map.insert(
            "plan_text".into(),
            serde_json::Value::String(plan_text.to_string()),
        );
        map.insert("run".into(), serde_json::to_value(run).unwrap_or_default());
    }
    body
}

/// The hashed part of an entry body (the body without its unhashed keys).
pub fn hashed_part(body: &serde_json::Value) -> serde_json::Value {
    let mut v = body.clone();
    if let Some(map) = v.as_object_mut() {
        for k in UNHASHED_KEYS {
            map.remove(*k);
        }
    }
    v
}

/// `holdfast run`: the whole thing, appending one selection entry.
pub fn run_plan(
    plan_path: &Path,
    ledger: &Ledger,
    now: DateTime<Utc>,
) -> Result<RunOutcome, RunError> {
    let plan_text =
        std::fs::read_to_string(plan_path).map_err(|source| plan::ResolveError::ReadPlan {
            path: plan_path.to_path_buf(),
            source,
        })?;
    let r = plan::resolve_file(plan_path)?;
    let sheet = compile::compile(&r)?;
    let mut warnings = compile::warnings(&r, &sheet);
    if let Some((_, w)) = exposure_warning(ledger, &r, &sheet.sealed)? {
        warnings.push(w);
    }
    let (selection, facts) = execute(&r, &sheet, ledger)?;
    let result = serde_json::to_value(&selection).map_err(|e| RunError::Internal(e.to_string()))?;
    let result_hash =
        crate::canon::hash_canonical(&result).map_err(|e| RunError::Internal(e.to_string()))?;
    let entry = ledger.append(NewEntry {
        kind: EntryKind::Selection,
        timestamp: now,
        plan_hash: r.hash.clone(),
        data_file: r.plan.data.file_hash.clone(),
        partition: selection.partition.clone(),
        result_hash,
        body: body_with(&result, &plan_text, &facts),
        sealed_rows: Vec::new(),
        provenance: Provenance::gather(&absolute(plan_path), env!("CARGO_PKG_VERSION")),
    })?;
    Ok(RunOutcome {
        entry,
        selection,
        facts,
        warnings,
    })
}
