//! `unseal` as a library call: refit the selected candidate on the whole
//! development partition, score it once on the sealed partition, attach an
//! interval, and append an opening entry.
//!
//! Invariants: the sealed partition is identified by the data file's hash
//! and its rows' content hashes; opening it again needs an explicit flag and
//! a reason; every opening records the content hashes of the rows it
//! scored, so a later plan that seals the same rows (re-shuffled, re-split)
//! is warned. The interval: Wilson (1927) for accuracy, a seeded bootstrap
//! percentile interval over rows for other metrics, over whole groups (a
//! cluster bootstrap) when the plan has a group column, because rows of one
//! unit are not independent. With m openings of the partition, the interval
//! at level 1 - 0.05/m (Bonferroni) is given beside the 95% one.

use std::path::Path;

use chrono::{DateTime, Utc};
use serde::Serialize;

use crate::compile::{self, JobSheet};
use crate::learn::Predictions;
use crate::ledger::{Entry, EntryKind, Ledger, NewEntry, Provenance};
use crate::plan::{self, Resolved};
use crate::resample::Stream;
use crate::score::{self, Metric};
use crate::stats::{self, Interval};

use super::evaluate::{FitInput, OwnedTargets, Scored, evaluate_candidates};
use super::record::{RunError, absolute, body_with, exposure_warning};
use super::selection::{partition_id, row_hashes};

/// Bootstrap draws for the interval of a metric that is not a proportion.
pub const BOOTSTRAP_DRAWS: usize = 2000;

/// What an opening entry records (the hashed part).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OpeningResult {
    pub format: u32,
    pub plan_hash: String,
    pub data_file: String,
    pub partition: String,
    /// The selection entry whose choice was opened.
    pub selection: String,
    pub candidate: String,
    pub candidate_label: String,
    pub metric: String,
    pub score: f64,
    /// Sealed rows scored.
    pub n: usize,
    /// The 95% interval.
    pub interval: Interval,
    /// Why this interval method: independence of rows, or groups.
    pub interval_note: String,
    /// With more than one opening: the interval at level 1 - 0.05/m.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bonferroni: Option<Interval>,
    /// Openings of this partition so far, this one included.
    pub openings: usize,
    pub reason: String,
    /// Every metric of the task on the sealed rows.
    pub scores: std::collections::BTreeMap<String, f64>,
    /// Sealed rows already in an earlier opening (by row content).
    pub already_seen_rows: usize,
}

/// Why unseal refused or failed.
#[derive(Debug, thiserror::Error)]
pub enum UnsealError {
    #[error("{0}")]
    Run(#[from] RunError),
    #[error(
        "no selection of this plan (plan hash {plan_hash}) is in the ledger {ledger}; run `holdfast run {plan}` first"
    )]
    NoSelection {
        plan_hash: String,
        ledger: String,
        plan: String,
    },
    #[error("{0}")]
    AlreadyOpened(String),
    #[error("the chosen candidate could not be refitted on the development partition: {0}")]
    Refit(String),
}

/// The latest selection entry of plan hash `hash`.
pub fn latest_selection(ledger: &Ledger, hash: &str) -> Result<Option<Entry>, RunError> {
    let metas = ledger.list().map_err(RunError::from)?;
    let Some(meta) = metas
        .iter()
        .rev()
        .find(|m| m.kind == EntryKind::Selection && m.plan_hash == hash)
    else {
        return Ok(None);
    };
    Ok(Some(
        // The full hash: a sequence number of 4 digits or more can also
        // read as another entry's hash prefix, which is ambiguous.
        ledger.entry(&meta.hash).map_err(RunError::from)?,
    ))
}

fn refuse(previous: &[Entry], partition: &str) -> UnsealError {
    let list: Vec<String> = previous
        .iter()
        .map(|e| {
            format!(
                "entry {} at {} by {}@{}",
                e.seq,
                crate::ledger::timestamp_text(&e.timestamp),
                e.provenance.user,
                e.provenance.host
            )
        })
        .collect();
    UnsealError::AlreadyOpened(format!(
        "the sealed partition {} has already been opened {} time(s): {}; every further look makes its score less \
         trustworthy. To open it anyway, run unseal again with --again and a --reason saying why",
        &partition[..12.min(partition.len())],
        previous.len(),
        list.join("; ")
    ))
}

/// The part of an opening that is recomputed from plan and data (shared by
/// unseal and replay).
pub struct Recomputed {
    pub scored: Scored,
    pub score: f64,
    pub interval: Interval,
    pub interval_note: String,
    pub bonferroni: Option<Interval>,
}

fn subset(pred: &Predictions, idx: &[usize]) -> Predictions {
    match pred {
        Predictions::Classes {
            labels,
            probabilities,
        } => Predictions::Classes {
            labels: idx.iter().map(|&i| labels[i]).collect(),
            probabilities: probabilities.select(ndarray::Axis(0), idx),
        },
        Predictions::Values(v) => Predictions::Values(idx.iter().map(|&i| v[i]).collect()),
    }
}

fn metric_on(
    metric: Metric,
    truth: &OwnedTargets,
    pred: &Predictions,
    idx: &[usize],
) -> Option<f64> {
    let sub_truth = match truth {
        OwnedTargets::Classes(c) => OwnedTargets::Classes(idx.iter().map(|&i| c[i]).collect()),
        OwnedTargets::Values(v) => OwnedTargets::Values(idx.iter().map(|&i| v[i]).collect()),
    };
    score::score(metric, sub_truth.view(), &subset(pred, idx))
        .ok()
        .filter(|v| v.is_finite())
}

fn interval_at(
    r: &Resolved,
    sealed: &[u32],
    truth: &OwnedTargets,
    pred: &Predictions,
    level: f64,
) -> Result<(Interval, String), String> {
    let metric = r.plan.select.metric;
    if let Some(groups) = &r.data.group {
        let codes: Vec<u32> = sealed.iter().map(|&i| groups[i as usize]).collect();
        let mut stream = Stream::new(r.plan.plan.seed, "unseal/cluster-bootstrap");
        let iv = stats::cluster_bootstrap_percentile(
            &codes,
            BOOTSTRAP_DRAWS,
            level,
            &mut stream,
            |idx| metric_on(metric, truth, pred, idx),
        )
        .map_err(|e| e.to_string())?;
        let note = format!(
            "rows of one {} are not independent, so the interval resamples whole groups ({} draws, seeded); a row-level interval would be too narrow",
            r.plan.data.group.clone().unwrap_or_default(),
            BOOTSTRAP_DRAWS
        );
        return Ok((iv, note));
    }
    if let (true, OwnedTargets::Classes(t), Predictions::Classes { labels, .. }) =
        (metric.is_proportion(), truth, pred)
    {
        let right = t.iter().zip(labels).filter(|(a, b)| a == b).count() as u64;
        let iv = stats::wilson(right, t.len() as u64, level).map_err(|e| e.to_string())?;
        return Ok((
            iv,
            "Wilson score interval (Wilson 1927) for a proportion of independent rows".into(),
        ));
    }
    let mut stream = Stream::new(r.plan.plan.seed, "unseal/bootstrap");
    let iv =
        stats::bootstrap_percentile(sealed.len(), BOOTSTRAP_DRAWS, level, &mut stream, |idx| {
            metric_on(metric, truth, pred, idx)
        })
        .map_err(|e| e.to_string())?;
    Ok((
        iv,
        format!("bootstrap percentile interval over sealed rows ({BOOTSTRAP_DRAWS} draws, seeded)"),
    ))
}

/// Refit `candidate` on the development rows and score it on the sealed rows.
pub fn recompute(
    r: &Resolved,
    sheet: &JobSheet,
    candidate: &str,
    openings: usize,
) -> Result<Recomputed, UnsealError> {
    let c = sheet
        .candidate(candidate)
        .ok_or_else(|| UnsealError::Refit(format!("candidate {candidate} is not in this plan")))?;
    let input = FitInput {
        data: &r.data,
        task: r.plan.task(),
        prep: r.plan.prep,
        train: &sheet.development,
        evaluate: &sheet.sealed,
        training_scores: false,
    };
    let scored = evaluate_candidates(&input, &[(c.learner.as_str(), &c.settings)])
        .into_iter()
        .next()
        .unwrap_or_default();
    if let Some(f) = &scored.failed {
        return Err(UnsealError::Refit(f.clone()));
    }
    let name = r.plan.select.metric.name();
    let score = *scored.scores.get(name).ok_or_else(|| {
        UnsealError::Refit(format!(
            "{name} is undefined on the sealed rows: {}",
            scored.undefined.get(name).cloned().unwrap_or_default()
        ))
    })?;
    let pred = scored
        .predictions
        .clone()
        .ok_or_else(|| UnsealError::Refit("no predictions".into()))?;
    let truth = OwnedTargets::of(&r.data, &sheet.sealed);
    let (interval, interval_note) =
        interval_at(r, &sheet.sealed, &truth, &pred, 0.95).map_err(UnsealError::Refit)?;
    let bonferroni = if openings > 1 {
        let level = stats::bonferroni_level(openings as u64)
            .map_err(|e| UnsealError::Refit(e.to_string()))?;
        Some(
            interval_at(r, &sheet.sealed, &truth, &pred, level)
                .map_err(UnsealError::Refit)?
                .0,
        )
    } else {
        None
    };
    Ok(Recomputed {
        scored,
        score,
        interval,
        interval_note,
        bonferroni,
    })
}

/// What an opening records besides the recomputed numbers: the facts of
/// the moment it was made (replay takes them from the recorded entry).
pub struct OpeningContext {
    pub partition: String,
    pub selection: String,
    pub candidate: String,
    pub openings: usize,
    pub reason: String,
    pub already_seen_rows: usize,
}

/// The recorded form of an opening.
pub fn opening_result(
    r: &Resolved,
    sheet: &JobSheet,
    re: Recomputed,
    cx: OpeningContext,
) -> OpeningResult {
    OpeningResult {
        format: 1,
        plan_hash: r.hash.clone(),
        data_file: r.plan.data.file_hash.clone(),
        partition: cx.partition,
        selection: cx.selection,
        candidate_label: sheet
            .candidate(&cx.candidate)
            .map(|c| c.label.clone())
            .unwrap_or_default(),
        candidate: cx.candidate,
        metric: r.plan.select.metric.name().to_string(),
        score: re.score,
        n: sheet.sealed.len(),
        interval: re.interval,
        interval_note: re.interval_note,
        bonferroni: re.bonferroni,
        openings: cx.openings,
        reason: cx.reason,
        scores: re.scored.scores,
        already_seen_rows: cx.already_seen_rows,
    }
}

/// What unseal did.
pub struct UnsealOutcome {
    pub entry: Entry,
    pub opening: OpeningResult,
    pub warnings: Vec<String>,
    pub previous: Vec<Entry>,
}

/// `holdfast unseal`.
pub fn unseal(
    plan_path: &Path,
    ledger: &Ledger,
    reason: &str,
    again: bool,
    now: DateTime<Utc>,
) -> Result<UnsealOutcome, UnsealError> {
    let plan_text = std::fs::read_to_string(plan_path).map_err(|source| {
        RunError::from(plan::ResolveError::ReadPlan {
            path: plan_path.to_path_buf(),
            source,
        })
    })?;
    let r = plan::resolve_file(plan_path).map_err(RunError::from)?;
    let sheet = compile::compile(&r).map_err(RunError::from)?;
    let selection = latest_selection(ledger, &r.hash)?.ok_or_else(|| UnsealError::NoSelection {
        plan_hash: r.hash.clone(),
        ledger: ledger.path().display().to_string(),
        plan: plan_path.display().to_string(),
    })?;
    let chosen = selection
        .body
        .get("chosen")
        .and_then(|v| v.as_str())
        .unwrap_or_default()
        .to_string();
    let hashes = row_hashes(&r, &sheet.sealed);
    let partition = partition_id(&r.plan.data.file_hash, &hashes);
    let previous = ledger.openings(&partition).map_err(RunError::from)?;
    if !previous.is_empty() && !again {
        return Err(refuse(&previous, &partition));
    }
    let mut warnings = compile::warnings(&r, &sheet);
    let seen = match exposure_warning(ledger, &r, &sheet.sealed).map_err(RunError::from)? {
        Some((n, w)) => {
            warnings.push(w);
            n
        }
        None => 0,
    };
    let openings = previous.len() + 1;
    let re = recompute(&r, &sheet, &chosen, openings)?;
    let context = OpeningContext {
        partition: partition.clone(),
        selection: selection.hash.clone(),
        candidate: chosen,
        openings,
        reason: reason.to_string(),
        already_seen_rows: seen,
    };
    let opening = opening_result(&r, &sheet, re, context);
    let result = serde_json::to_value(&opening).map_err(|e| RunError::Internal(e.to_string()))?;
    let result_hash =
        crate::canon::hash_canonical(&result).map_err(|e| RunError::Internal(e.to_string()))?;
    let entry = ledger
        .append(NewEntry {
            kind: EntryKind::Opening,
            timestamp: now,
            plan_hash: r.hash.clone(),
            data_file: r.plan.data.file_hash.clone(),
            partition,
            result_hash,
            body: body_with(&result, &plan_text, &serde_json::json!({})),
            sealed_rows: hashes,
            provenance: Provenance::gather(&absolute(plan_path), env!("CARGO_PKG_VERSION")),
        })
        .map_err(RunError::from)?;
    Ok(UnsealOutcome {
        entry,
        opening,
        warnings,
        previous,
    })
}
