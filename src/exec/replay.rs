//! `replay` as a library call: re-run a recorded selection or opening from
//! the plan text and data it recorded, and compare the recomputed result
//! with the recorded one. Replaying an opening recomputes a recorded number:
//! it is not an opening and appends nothing.

use std::collections::BTreeMap;
use std::path::PathBuf;

use serde_json::Value;

use crate::compile;
use crate::ledger::{Entry, EntryKind, Ledger, LedgerError};
use crate::plan::{self, raw};

use super::opening::{OpeningContext, UnsealError, opening_result, recompute};
use super::record::{RunError, hashed_part};
use super::runner::{JobResult, RunProgress, run_jobs};
use super::selection::select;

/// How a replay came out.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct ReplayReport {
    pub entry: u64,
    pub kind: EntryKind,
    pub identical: bool,
    pub recorded_hash: String,
    pub recomputed_hash: String,
    /// The holdfast version that recorded the entry.
    pub recorded_by: String,
    /// The holdfast version that replayed it.
    pub replayed_by: String,
    /// The first difference: a JSON path and the two values.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub first_difference: Option<Difference>,
}

#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct Difference {
    pub path: String,
    pub recorded: String,
    pub recomputed: String,
}

/// Why a replay could not be carried out.
#[derive(Debug, thiserror::Error)]
pub enum ReplayError {
    #[error("{0}")]
    Ledger(#[from] LedgerError),
    #[error("{0}")]
    Run(#[from] RunError),
    #[error("{0}")]
    Unseal(#[from] UnsealError),
    #[error(
        "data file {path} now has fingerprint {now}, but entry {seq} recorded {recorded}: it is not the data the entry used; restore that file to replay or report it"
    )]
    DataChanged {
        path: String,
        seq: u64,
        now: String,
        recorded: String,
    },
    #[error("failed to read data file {path}: {message}; entry {seq} needs the data file it used")]
    DataMissing {
        path: String,
        seq: u64,
        message: String,
    },
    #[error("entry {seq} cannot be replayed: {why}")]
    Unreplayable { seq: u64, why: String },
    #[error(
        "entry {seq}: the recorded plan now resolves to plan hash {now}, not the recorded {recorded}"
    )]
    PlanChanged {
        seq: u64,
        now: String,
        recorded: String,
    },
}

struct Silent;

impl RunProgress for Silent {
    fn advance(&self) -> &(dyn Fn(usize) + Sync) {
        &|_| {}
    }
    fn store(&mut self, _: &[(JobResult, f64)]) {}
}

/// The first place where `a` and `b` differ, as a JSON path.
pub fn first_difference(a: &Value, b: &Value, path: &str) -> Option<Difference> {
    match (a, b) {
        (Value::Object(x), Value::Object(y)) => {
            let keys: std::collections::BTreeSet<&String> = x.keys().chain(y.keys()).collect();
            keys.into_iter().find_map(|k| {
                let (va, vb) = (
                    x.get(k).unwrap_or(&Value::Null),
                    y.get(k).unwrap_or(&Value::Null),
                );
                first_difference(va, vb, &format!("{path}.{k}"))
            })
        }
        (Value::Array(x), Value::Array(y)) if x.len() == y.len() => x
            .iter()
            .zip(y)
            .enumerate()
            .find_map(|(i, (va, vb))| first_difference(va, vb, &format!("{path}[{i}]"))),
        _ if a == b => None,
        _ => Some(Difference {
            path: path.to_string(),
            recorded: a.to_string(),
            recomputed: b.to_string(),
        }),
    }
}

/// The plan an entry recorded (its `plan_text`, at its recorded plan path),
/// resolved against its data file, which must still have the recorded
/// fingerprint; the plan must still resolve to the recorded plan hash.
pub fn recorded_plan(entry: &Entry) -> Result<plan::Resolved, ReplayError> {
    let seq = entry.seq;
    let text = entry
        .body
        .get("plan_text")
        .and_then(Value::as_str)
        .ok_or_else(|| ReplayError::Unreplayable {
            seq,
            why: "it does not record its plan text".into(),
        })?;
    let plan_path = PathBuf::from(&entry.provenance.plan_path);
    let parsed = raw::parse(&plan_path, text).map_err(|e| RunError::Resolve(e.into()))?;
    let folder = plan_path.parent().map(PathBuf::from).unwrap_or_default();
    let data_path = folder.join(parsed.raw.data_path.clone().unwrap_or_default());
    let bytes = std::fs::read(&data_path).map_err(|e| ReplayError::DataMissing {
        path: data_path.display().to_string(),
        seq,
        message: e.to_string(),
    })?;
    let now = crate::canon::hash_bytes(&bytes);
    if now != entry.data_file {
        return Err(ReplayError::DataChanged {
            path: data_path.display().to_string(),
            seq,
            now,
            recorded: entry.data_file.clone(),
        });
    }
    let resolved = plan::resolve(&plan_path, parsed).map_err(RunError::from)?;
    if resolved.hash != entry.plan_hash {
        return Err(ReplayError::PlanChanged {
            seq,
            now: resolved.hash,
            recorded: entry.plan_hash.clone(),
        });
    }
    Ok(resolved)
}

fn recompute_selection(r: &plan::Resolved) -> Result<Value, ReplayError> {
    let sheet = compile::compile(r).map_err(RunError::from)?;
    let results = run_jobs(r, &sheet, &BTreeMap::new(), &mut Silent);
    let selection = select(r, &sheet, results).map_err(RunError::from)?;
    serde_json::to_value(&selection).map_err(|e| RunError::Internal(e.to_string()).into())
}

fn recompute_opening(r: &plan::Resolved, recorded: &Value, seq: u64) -> Result<Value, ReplayError> {
    let sheet = compile::compile(r).map_err(RunError::from)?;
    let get = |k: &str| recorded.get(k).cloned().unwrap_or(Value::Null);
    let text = |k: &str| get(k).as_str().unwrap_or_default().to_string();
    let openings = get("openings").as_u64().unwrap_or(1) as usize;
    let candidate = text("candidate");
    if candidate.is_empty() {
        return Err(ReplayError::Unreplayable {
            seq,
            why: "it records no candidate".into(),
        });
    }
    let re = recompute(r, &sheet, &candidate, openings)?;
    let context = OpeningContext {
        partition: text("partition"),
        selection: text("selection"),
        candidate,
        openings,
        reason: text("reason"),
        already_seen_rows: get("already_seen_rows").as_u64().unwrap_or(0) as usize,
    };
    let opening = opening_result(r, &sheet, re, context);
    serde_json::to_value(&opening).map_err(|e| RunError::Internal(e.to_string()).into())
}

/// Replay entry `spec` of `ledger`.
pub fn replay(ledger: &Ledger, spec: &str) -> Result<ReplayReport, ReplayError> {
    let entry = ledger.entry(spec)?;
    let r = recorded_plan(&entry)?;
    let recorded = hashed_part(&entry.body);
    let recomputed = match entry.kind {
        EntryKind::Selection => recompute_selection(&r)?,
        EntryKind::Opening => recompute_opening(&r, &recorded, entry.seq)?,
    };
    let recomputed_hash =
        crate::canon::hash_canonical(&recomputed).map_err(|e| RunError::Internal(e.to_string()))?;
    let identical = recomputed_hash == entry.result_hash;
    Ok(ReplayReport {
        entry: entry.seq,
        kind: entry.kind,
        identical,
        recorded_hash: entry.result_hash.clone(),
        recorded_by: entry.provenance.tool_version.clone(),
        replayed_by: env!("CARGO_PKG_VERSION").to_string(),
        first_difference: if identical {
            None
        } else {
            first_difference(&recorded, &recomputed, "$")
        },
        recomputed_hash,
    })
}
