//! Building the audit report from the ledger.
//!
//! The audit reads the ledger once: the verify walk hands every entry's
//! meta and body text to a [`Tally`] and counts each row's exposure, all
//! in one snapshot of the file. When the chain verifies, every entry
//! decodes and every hash is a full unique one, so the tally's partitions
//! are those of the full read below (each entry fetched by its hash and
//! parsed whole), which remains the reference and does the audit of a
//! ledger that does not verify, whose entries may not read back at all.

use std::collections::{BTreeMap, BTreeSet};

use serde::Serialize;
use serde_json::Value;

use crate::ledger::{
    Entry, EntryKind, EntryMeta, Ledger, LedgerError, RowExposure, Verification, timestamp_text,
};

use super::tally::Tally;

/// Whether the chain verified.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ChainStatus {
    pub verified: bool,
    pub entries: u64,
    pub head: Option<String>,
    /// The first problem, in words.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub first_problem: Option<String>,
}

/// One opening, as the audit lists it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OpeningLine {
    pub seq: u64,
    pub hash: String,
    pub timestamp: String,
    pub user: String,
    pub host: String,
    pub plan_hash: String,
    pub candidate: String,
    pub candidate_label: String,
    pub metric: String,
    pub score: Option<f64>,
    pub reason: String,
    /// Distinct candidates compared in selections of this partition before
    /// this opening.
    pub candidates_compared_before: usize,
}

/// One selection run against a partition.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SelectionLine {
    pub seq: u64,
    pub timestamp: String,
    pub user: String,
    pub plan_hash: String,
    pub candidates: usize,
    pub chosen_label: String,
}

/// One sealed partition.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PartitionAudit {
    pub partition: String,
    pub data_file: String,
    pub sealed_rows: usize,
    pub openings: Vec<OpeningLine>,
    /// Number of openings a row was in -> number of this partition's rows.
    pub rows_by_openings: BTreeMap<u32, usize>,
    pub selections: Vec<SelectionLine>,
}

/// The rows a plan seals now and how often they were already looked at.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PlanExposure {
    pub partition: String,
    pub sealed_rows: usize,
    pub rows_by_openings: BTreeMap<u32, usize>,
    pub already_seen_rows: usize,
}

/// The whole audit.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct AuditReport {
    pub ledger: String,
    pub chain: ChainStatus,
    pub partitions: Vec<PartitionAudit>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub plan: Option<PlanExposure>,
}

pub(super) fn histogram(counts: &[u32]) -> BTreeMap<u32, usize> {
    let mut h = BTreeMap::new();
    for &c in counts {
        *h.entry(c).or_insert(0) += 1;
    }
    h
}

fn text(body: &Value, key: &str) -> String {
    body.get(key)
        .and_then(Value::as_str)
        .unwrap_or_default()
        .to_string()
}

pub(super) fn chain(v: &Verification) -> ChainStatus {
    ChainStatus {
        verified: v.is_intact(),
        entries: v.entries,
        head: v.head.clone(),
        first_problem: v.first_problem().map(|p| p.to_string()),
    }
}

fn selection_line(e: &Entry) -> SelectionLine {
    let candidates = e
        .body
        .get("candidates")
        .and_then(Value::as_array)
        .map_or(0, |c| {
            c.iter()
                .filter(|c| c.get("reference") != Some(&Value::Bool(true)))
                .count()
        });
    SelectionLine {
        seq: e.seq,
        timestamp: timestamp_text(&e.timestamp),
        user: e.provenance.user.clone(),
        plan_hash: e.plan_hash.clone(),
        candidates,
        chosen_label: text(&e.body, "chosen_label"),
    }
}

/// For each opening (in seq order), the distinct candidates compared in
/// selections of the partition before it: one pass over both lists, which
/// are in seq order.
fn compared_before(selections: &[Entry], openings: &[Entry]) -> Vec<usize> {
    let mut ids: BTreeSet<&str> = BTreeSet::new();
    let mut next = 0;
    openings
        .iter()
        .map(|o| {
            while next < selections.len() && selections[next].seq < o.seq {
                let candidates = selections[next]
                    .body
                    .get("candidates")
                    .and_then(Value::as_array);
                for c in candidates.into_iter().flatten() {
                    if c.get("reference") != Some(&Value::Bool(true)) {
                        ids.insert(c.get("id").and_then(Value::as_str).unwrap_or_default());
                    }
                }
                next += 1;
            }
            ids.len()
        })
        .collect()
}

fn opening_line(e: &Entry, compared: usize) -> OpeningLine {
    OpeningLine {
        seq: e.seq,
        hash: e.hash.clone(),
        timestamp: timestamp_text(&e.timestamp),
        user: e.provenance.user.clone(),
        host: e.provenance.host.clone(),
        plan_hash: e.plan_hash.clone(),
        candidate: text(&e.body, "candidate"),
        candidate_label: text(&e.body, "candidate_label"),
        metric: text(&e.body, "metric"),
        score: e.body.get("score").and_then(Value::as_f64),
        reason: text(&e.body, "reason"),
        candidates_compared_before: compared,
    }
}

fn partition(ledger: &Ledger, metas: &[&EntryMeta]) -> Result<PartitionAudit, LedgerError> {
    let mut selections = Vec::new();
    let mut openings = Vec::new();
    for m in metas {
        // The full hash, never the sequence number: from entry 1000 on, a
        // number can also read as another entry's hash prefix (ambiguous).
        let e = ledger.entry(&m.hash)?;
        match m.kind {
            EntryKind::Selection => selections.push(e),
            EntryKind::Opening => openings.push(e),
        }
    }
    let rows: Vec<String> = openings
        .last()
        .map(|e| e.sealed_rows.clone())
        .unwrap_or_default();
    let sealed_rows = match openings.last() {
        Some(e) => e.sealed_rows.len(),
        None => selections
            .last()
            .and_then(|s| s.body.get("sealed_rows"))
            .and_then(Value::as_u64)
            .unwrap_or(0) as usize,
    };
    let mut by = histogram(&ledger.exposure(&rows)?);
    if rows.is_empty() && sealed_rows > 0 {
        by.insert(0, sealed_rows);
    }
    Ok(PartitionAudit {
        partition: metas
            .first()
            .map(|m| m.partition.clone())
            .unwrap_or_default(),
        data_file: metas
            .first()
            .map(|m| m.data_file.clone())
            .unwrap_or_default(),
        sealed_rows,
        openings: openings
            .iter()
            .zip(compared_before(&selections, &openings))
            .map(|(o, n)| opening_line(o, n))
            .collect(),
        rows_by_openings: by,
        selections: selections.iter().map(selection_line).collect(),
    })
}

/// The plan's own sealed rows, as (partition id, row hashes), when a plan is given.
pub type PlanRows = (String, String, Vec<String>);

/// Audit `ledger`; with `plan` = (partition, data file hash, sealed row
/// hashes), only partitions of that data file, plus the plan's exposure.
pub fn audit(ledger: &Ledger, plan: Option<&PlanRows>) -> Result<AuditReport, LedgerError> {
    ledger.read_snapshot(|| {
        let mut tally = Tally::new(plan.map(|(_, data, _)| data.as_str()));
        let read = ledger.verify_reading(|meta, body| tally.add(meta, body))?;
        let chain = chain(&read.verification);
        let tallied = match chain.verified {
            true => tally.finish(&read.exposure),
            false => None,
        };
        let partitions = match tallied {
            Some(partitions) => partitions,
            None => full_partitions(ledger, plan)?,
        };
        Ok(AuditReport {
            ledger: ledger.path().display().to_string(),
            chain,
            partitions,
            plan: plan.map(|p| plan_exposure(p, &read.exposure)),
        })
    })
}

/// The rows the plan seals now and how often each was looked at.
fn plan_exposure((id, _, rows): &PlanRows, exposure: &RowExposure) -> PlanExposure {
    let counts: Vec<u32> = rows.iter().map(|r| exposure.openings(r)).collect();
    PlanExposure {
        partition: id.clone(),
        sealed_rows: rows.len(),
        already_seen_rows: counts.iter().filter(|&&c| c > 0).count(),
        rows_by_openings: histogram(&counts),
    }
}

/// The partitions read the full way: every entry fetched by its hash and
/// parsed whole, each partition's rows counted with [`Ledger::exposure`].
pub(super) fn full_partitions(
    ledger: &Ledger,
    plan: Option<&PlanRows>,
) -> Result<Vec<PartitionAudit>, LedgerError> {
    let metas = ledger.list()?;
    let mut groups: BTreeMap<(u64, String), Vec<&EntryMeta>> = BTreeMap::new();
    let mut first_seen: BTreeMap<&str, u64> = BTreeMap::new();
    for m in &metas {
        if plan.is_some_and(|(_, data, _)| &m.data_file != data) {
            continue;
        }
        let first = *first_seen.entry(m.partition.as_str()).or_insert(m.seq);
        groups
            .entry((first, m.partition.clone()))
            .or_default()
            .push(m);
    }
    groups.values().map(|g| partition(ledger, g)).collect()
}
