//! Selection: summarising job results per candidate and applying the
//! plan's `[select]` rule. The [`SelectionResult`] is what a selection entry
//! records and what its result hash covers.
//!
//! Invariants: built only from the job sheet and job results in job order,
//! so a resumed run and an uninterrupted one give the same bytes; timings
//! and reuse counts are not part of it. A candidate is eligible only when it
//! has a score on every split (so that every mean covers the same splits);
//! the reference baseline is summarised but never chosen.

use std::collections::BTreeMap;

use serde::Serialize;

use crate::compile::JobSheet;
use crate::learn::{self, Settings};
use crate::plan::Resolved;
use crate::resample::Role;
use crate::stats::{self, CandidateFacts, Direction, Rule, ScoreTable};

use super::runner::JobResult;

/// Version of the selection result's layout.
pub const FORMAT: u32 = 1;

/// One candidate's scores over the splits.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CandidateSummary {
    pub id: String,
    pub label: String,
    pub learner: String,
    pub settings: Settings,
    pub reference: bool,
    /// Splits with a score for the selection metric.
    pub scored_splits: usize,
    pub mean: Option<f64>,
    pub sd: Option<f64>,
    pub se: Option<f64>,
    /// Mean over splits of the training-part score.
    pub training_mean: Option<f64>,
    /// Whether the rule could choose it.
    pub eligible: bool,
    /// Why it is not eligible, in words.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub why_not: Option<String>,
    /// Splits on which the fit did not converge.
    pub not_converged: usize,
    /// Active features per split (shrunken centroids), in split order.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub active_features: Vec<usize>,
}

/// Sizes of one split, for the comparison tests (which need training and
/// validation row counts) and the report.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SplitFacts {
    pub id: String,
    pub role: Role,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub parent: Option<String>,
    pub repeat: u32,
    pub fold: u32,
    pub train_rows: usize,
    pub validation_rows: usize,
}

/// What a selection entry records.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SelectionResult {
    pub format: u32,
    pub plan_hash: String,
    pub data_file: String,
    /// The sealed partition's id.
    pub partition: String,
    pub sealed_rows: usize,
    pub development_rows: usize,
    pub metric: String,
    pub larger_is_better: bool,
    pub rule: String,
    /// The resampling scheme, resolved.
    pub scheme: crate::resample::Scheme,
    /// Outer splits the summaries are over.
    pub splits: usize,
    /// Every split of the job sheet, in sheet order.
    pub split_facts: Vec<SplitFacts>,
    /// The chosen candidate's id.
    pub chosen: String,
    pub chosen_label: String,
    /// The candidate with the best mean.
    pub best: String,
    pub standard_error: Option<f64>,
    pub threshold: Option<f64>,
    /// For nested resampling: the outer loop's estimate of the whole
    /// choosing procedure.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub nested: Option<NestedEstimate>,
    /// In candidate order.
    pub candidates: Vec<CandidateSummary>,
    /// Every job, in job order.
    pub jobs: Vec<JobResult>,
}

/// Why no candidate could be chosen.
#[derive(Debug, thiserror::Error)]
pub enum SelectError {
    #[error("no candidate has a {metric} score on every split, so none can be chosen: {why}")]
    NoneEligible { metric: String, why: String },
    #[error("selection failed: {0}")]
    Stats(#[from] stats::StatsError),
}

/// The id of a sealed partition: BLAKE3 of the data file's hash and the
/// sealed rows' content hashes, sorted (so the same rows, found again in a
/// re-ordered file, are the same partition).
pub fn partition_id(data_file: &str, sealed_row_hashes: &[String]) -> String {
    let mut rows = sealed_row_hashes.to_vec();
    rows.sort();
    crate::canon::hash_canonical(&(data_file, rows)).unwrap_or_default()
}

/// Content hashes of `rows` of the plan's data.
pub fn row_hashes(r: &Resolved, rows: &[u32]) -> Vec<String> {
    rows.iter()
        .map(|&i| r.data.fingerprint.rows[i as usize].clone())
        .collect()
}

fn summarise(
    sheet: &JobSheet,
    results: &[JobResult],
    metric: &str,
    splits: &[&str],
) -> Vec<CandidateSummary> {
    let mut by_candidate: BTreeMap<&str, Vec<&JobResult>> = BTreeMap::new();
    for res in results {
        if splits.contains(&res.split.as_str()) {
            by_candidate
                .entry(res.candidate.as_str())
                .or_default()
                .push(res);
        }
    }
    sheet
        .candidates
        .iter()
        .map(|c| {
            let jobs = by_candidate.get(c.id.as_str()).cloned().unwrap_or_default();
            let values: Vec<f64> = jobs
                .iter()
                .filter_map(|j| j.scores.get(metric).copied())
                .collect();
            let training: Vec<f64> = jobs
                .iter()
                .filter_map(|j| j.training.get(metric).copied())
                .collect();
            let summary = stats::summarize(&values).ok();
            let failed = jobs.iter().filter(|j| j.failed.is_some()).count();
            let why_not = if c.reference {
                Some("reference baseline, shown for comparison".to_string())
            } else if failed > 0 {
                let first = jobs
                    .iter()
                    .find_map(|j| j.failed.clone())
                    .unwrap_or_default();
                Some(format!("failed on {failed} split(s): {first}"))
            } else if values.len() < splits.len() {
                let reason = jobs
                    .iter()
                    .find_map(|j| j.undefined.get(metric).cloned())
                    .unwrap_or_default();
                Some(format!(
                    "no score on {} split(s): {reason}",
                    splits.len() - values.len()
                ))
            } else {
                None
            };
            CandidateSummary {
                id: c.id.clone(),
                label: c.label.clone(),
                learner: c.learner.clone(),
                settings: c.settings.clone(),
                reference: c.reference,
                scored_splits: values.len(),
                mean: summary.as_ref().map(|s| s.mean),
                sd: summary.as_ref().and_then(|s| s.sd),
                se: summary.as_ref().and_then(|s| s.se),
                training_mean: stats::mean(&training).ok(),
                eligible: why_not.is_none(),
                why_not,
                not_converged: jobs
                    .iter()
                    .filter(|j| j.note.converged == Some(false))
                    .count(),
                active_features: jobs.iter().filter_map(|j| j.note.active_features).collect(),
            }
        })
        .collect()
}

/// The score table (splits x eligible candidates) and the eligible indices.
fn table(
    sheet: &JobSheet,
    results: &[JobResult],
    metric: &str,
    splits: &[&str],
    eligible: &[usize],
) -> Vec<Vec<f64>> {
    let mut cell: BTreeMap<(&str, &str), f64> = BTreeMap::new();
    for res in results {
        if let Some(v) = res.scores.get(metric) {
            cell.insert((res.split.as_str(), res.candidate.as_str()), *v);
        }
    }
    splits
        .iter()
        .map(|s| {
            eligible
                .iter()
                .map(|&c| {
                    cell.get(&(*s, sheet.candidates[c].id.as_str()))
                        .copied()
                        .unwrap_or(0.0)
                })
                .collect()
        })
        .collect()
}

/// What the rule chose over a set of splits.
pub struct Choice {
    pub candidates: Vec<CandidateSummary>,
    pub chosen: usize,
    pub best: usize,
    pub standard_error: Option<f64>,
    pub threshold: Option<f64>,
}

fn none_eligible(name: &str, candidates: &[CandidateSummary]) -> SelectError {
    let why: Vec<String> = candidates
        .iter()
        .filter(|c| !c.reference)
        .filter_map(|c| c.why_not.clone().map(|w| format!("{}: {w}", c.label)))
        .collect();
    let more = if why.len() > 3 {
        format!("; and {} more", why.len() - 3)
    } else {
        String::new()
    };
    SelectError::NoneEligible {
        metric: name.to_string(),
        why: format!("{}{more}", why[..why.len().min(3)].join("; ")),
    }
}

/// Summarise `results` over the splits `splits` and apply the plan's rule.
pub fn choose(
    r: &Resolved,
    sheet: &JobSheet,
    results: &[JobResult],
    splits: &[&str],
) -> Result<Choice, SelectError> {
    let metric = r.plan.select.metric;
    let name = metric.name();
    let candidates = summarise(sheet, results, name, splits);
    let eligible: Vec<usize> = (0..candidates.len())
        .filter(|&i| candidates[i].eligible)
        .collect();
    if eligible.is_empty() {
        return Err(none_eligible(name, &candidates));
    }
    let rows = table(sheet, results, name, splits, &eligible);
    let direction = Direction::from_larger_is_better(metric.larger_is_better());
    let learners: Vec<u32> = eligible
        .iter()
        .map(|&i| {
            learn::all()
                .iter()
                .position(|l| l.name() == candidates[i].learner)
                .unwrap_or(0) as u32
        })
        .collect();
    let simplicity: Vec<Vec<f64>> = eligible
        .iter()
        .map(|&i| {
            learn::by_name(&candidates[i].learner)
                .map(|l| l.simplicity(&candidates[i].settings))
                .unwrap_or_default()
        })
        .collect();
    let rule = if r.plan.select.rule == "one-standard-error" {
        Rule::OneStandardError
    } else {
        Rule::Best
    };
    let facts = CandidateFacts {
        learners: &learners,
        simplicity: &simplicity,
    };
    let choice = stats::select(&ScoreTable::from_rows(&rows)?, direction, rule, facts)?;
    Ok(Choice {
        chosen: eligible[choice.chosen],
        best: eligible[choice.best],
        standard_error: choice.standard_error,
        threshold: choice.threshold,
        candidates,
    })
}

/// The splits a selection summarises: the outer splits of a plain scheme;
/// for nested, the inner scheme run on the whole development partition.
pub fn selection_splits(sheet: &JobSheet, nested: bool) -> Vec<&str> {
    sheet
        .splits
        .iter()
        .filter(|s| {
            if nested {
                s.role == Role::Inner && s.parent.is_none()
            } else {
                s.role == Role::Outer
            }
        })
        .map(|s| s.id.as_str())
        .collect()
}

/// The nested estimate: each outer split's refit of its inner choice.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NestedEstimate {
    pub mean: Option<f64>,
    pub sd: Option<f64>,
    pub se: Option<f64>,
    pub outer: Vec<OuterResult>,
}

/// One outer split of nested resampling.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OuterResult {
    pub split: String,
    /// The candidate its inner splits chose (empty when none could be).
    pub candidate: String,
    pub score: Option<f64>,
}

fn nested_estimate(sheet: &JobSheet, results: &[JobResult], metric: &str) -> NestedEstimate {
    let outer: Vec<OuterResult> = sheet
        .jobs
        .iter()
        .zip(results)
        .filter(|(j, _)| j.candidate == crate::compile::INNER_CHOICE)
        .map(|(_, res)| OuterResult {
            split: res.split.clone(),
            candidate: res.candidate.clone(),
            score: res.scores.get(metric).copied(),
        })
        .collect();
    let values: Vec<f64> = outer.iter().filter_map(|o| o.score).collect();
    let summary = if values.len() == outer.len() {
        stats::summarize(&values).ok()
    } else {
        None
    };
    NestedEstimate {
        mean: summary.as_ref().map(|s| s.mean),
        sd: summary.as_ref().and_then(|s| s.sd),
        se: summary.as_ref().and_then(|s| s.se),
        outer,
    }
}

/// Summarise `results` (all jobs of `sheet`, in job order) and apply the rule.
pub fn select(
    r: &Resolved,
    sheet: &JobSheet,
    results: Vec<JobResult>,
) -> Result<SelectionResult, SelectError> {
    let metric = r.plan.select.metric;
    let name = metric.name();
    let nested = crate::compile::is_nested(r);
    let splits = selection_splits(sheet, nested);
    let choice = choose(r, sheet, &results, &splits)?;
    let (chosen, best, candidates) = (choice.chosen, choice.best, choice.candidates);
    let sealed_hashes = row_hashes(r, &sheet.sealed);
    Ok(SelectionResult {
        format: FORMAT,
        plan_hash: r.hash.clone(),
        data_file: r.plan.data.file_hash.clone(),
        partition: partition_id(&r.plan.data.file_hash, &sealed_hashes),
        sealed_rows: sheet.sealed.len(),
        development_rows: sheet.development.len(),
        metric: name.to_string(),
        larger_is_better: metric.larger_is_better(),
        rule: r.plan.select.rule.clone(),
        scheme: r.plan.resample.clone(),
        splits: splits.len(),
        split_facts: sheet
            .splits
            .iter()
            .map(|s| SplitFacts {
                id: s.id.clone(),
                role: s.role,
                parent: s.parent.clone(),
                repeat: s.repeat,
                fold: s.fold,
                train_rows: s.train.len(),
                validation_rows: s.validation.len(),
            })
            .collect(),
        chosen: candidates[chosen].id.clone(),
        chosen_label: candidates[chosen].label.clone(),
        best: candidates[best].id.clone(),
        standard_error: choice.standard_error,
        threshold: choice.threshold,
        nested: nested.then(|| nested_estimate(sheet, &results, name)),
        candidates,
        jobs: results,
    })
}
