//! Running the jobs of a job sheet in parallel, split by split.
//!
//! Invariants: results come back in job order whatever the completion order;
//! jobs already recorded (by job id) are not run again; results are handed to
//! the caller a batch at a time so that a killed run keeps what it finished.

use std::collections::BTreeMap;
use std::time::Instant;

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::compile::{INNER_CHOICE, JobSheet, SheetSplit};
use crate::learn::{Note, Settings};
use crate::plan::Resolved;

use super::evaluate::{FitInput, evaluate_candidates};

/// A job's recorded result: what is hashed. Timings are kept outside it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct JobResult {
    pub id: String,
    pub split: String,
    pub candidate: String,
    /// Metric name to value on the validation part.
    pub scores: BTreeMap<String, f64>,
    /// Metric name to value on the training part.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub training: BTreeMap<String, f64>,
    /// Metric name to why it has no value.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub undefined: BTreeMap<String, String>,
    #[serde(default)]
    pub note: NoteRecord,
    /// Why the candidate could not be fitted.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub failed: Option<String>,
}

/// A learner's note as recorded.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct NoteRecord {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub converged: Option<bool>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub active_features: Option<usize>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub remark: Option<String>,
}

impl From<Note> for NoteRecord {
    fn from(n: Note) -> NoteRecord {
        NoteRecord {
            converged: n.converged,
            active_features: n.active_features,
            remark: n.remark,
        }
    }
}

/// Where a run reports progress and hands over finished results.
pub trait RunProgress {
    /// `done` more jobs finished (fresh, not reused); called from worker threads.
    fn advance(&self) -> &(dyn Fn(usize) + Sync);
    /// A batch of fresh results with their fit seconds, in job order; store
    /// it. Called on the calling thread between batches.
    fn store(&mut self, batch: &[(JobResult, f64)]);
}

fn run_split(
    r: &Resolved,
    sheet: &JobSheet,
    split: &SheetSplit,
    todo: &[usize],
) -> Vec<(usize, JobResult, f64)> {
    let started = Instant::now();
    let cands: Vec<(&str, &Settings)> = todo
        .iter()
        .map(|&j| {
            let c = sheet.candidate(&sheet.jobs[j].candidate);
            c.map_or(("", &EMPTY), |c| (c.learner.as_str(), &c.settings))
        })
        .collect();
    let input = FitInput {
        data: &r.data,
        task: r.plan.task(),
        prep: r.plan.prep,
        train: &split.train,
        evaluate: &split.validation,
        training_scores: r.plan.select.training_scores,
    };
    let scored = evaluate_candidates(&input, &cands);
    let seconds = started.elapsed().as_secs_f64() / todo.len().max(1) as f64;
    todo.iter()
        .zip(scored)
        .map(|(&j, s)| {
            let job = &sheet.jobs[j];
            let result = JobResult {
                id: job.id.clone(),
                split: job.split.clone(),
                candidate: job.candidate.clone(),
                scores: s.scores,
                training: s.training,
                undefined: s.undefined,
                note: s.note.into(),
                failed: s.failed,
            };
            (j, result, seconds)
        })
        .collect()
}

static EMPTY: Settings = Settings::new();

/// Run every job of `sheet` not in `cached`, in parallel over splits, and
/// return all results in job order (cached ones included).
pub fn run_jobs(
    r: &Resolved,
    sheet: &JobSheet,
    cached: &BTreeMap<String, JobResult>,
    progress: &mut dyn RunProgress,
) -> Vec<JobResult> {
    let mut by_split: BTreeMap<&str, Vec<usize>> = BTreeMap::new();
    for (j, job) in sheet.jobs.iter().enumerate() {
        if !cached.contains_key(&job.id) && job.candidate != INNER_CHOICE {
            by_split.entry(job.split.as_str()).or_default().push(j);
        }
    }
    let work: Vec<(&SheetSplit, Vec<usize>)> = sheet
        .splits
        .iter()
        .filter_map(|s| by_split.remove(s.id.as_str()).map(|todo| (s, todo)))
        .collect();
    let mut fresh: BTreeMap<usize, JobResult> = BTreeMap::new();
    let batch = (rayon::current_num_threads() * 2).max(2);
    for chunk in work.chunks(batch) {
        let advance = progress.advance();
        let done: Vec<(usize, JobResult, f64)> = chunk
            .par_iter()
            .flat_map_iter(|(split, todo)| {
                let out = run_split(r, sheet, split, todo);
                advance(out.len());
                out
            })
            .collect();
        keep(done, progress, &mut fresh);
    }
    let refits = refit_jobs(r, sheet, cached, &fresh);
    progress.advance()(refits.len());
    keep(refits, progress, &mut fresh);
    sheet
        .jobs
        .iter()
        .enumerate()
        .filter_map(|(j, job)| cached.get(&job.id).cloned().or_else(|| fresh.remove(&j)))
        .collect()
}

fn keep(
    mut done: Vec<(usize, JobResult, f64)>,
    progress: &mut dyn RunProgress,
    fresh: &mut BTreeMap<usize, JobResult>,
) {
    if done.is_empty() {
        return;
    }
    done.sort_by_key(|(j, _, _)| *j);
    let stored: Vec<(JobResult, f64)> = done.iter().map(|(_, res, s)| (res.clone(), *s)).collect();
    progress.store(&stored);
    fresh.extend(done.into_iter().map(|(j, res, _)| (j, res)));
}

/// Nested resampling: for each outer split whose refit is not recorded, the
/// plan's rule over its inner splits chooses a candidate, which is fitted
/// on the outer training part and scored on the outer validation part.
fn refit_jobs(
    r: &Resolved,
    sheet: &JobSheet,
    cached: &BTreeMap<String, JobResult>,
    fresh: &BTreeMap<usize, JobResult>,
) -> Vec<(usize, JobResult, f64)> {
    let todo: Vec<usize> = (0..sheet.jobs.len())
        .filter(|&j| {
            sheet.jobs[j].candidate == INNER_CHOICE && !cached.contains_key(&sheet.jobs[j].id)
        })
        .collect();
    if todo.is_empty() {
        return Vec::new();
    }
    let known: Vec<JobResult> = sheet
        .jobs
        .iter()
        .enumerate()
        .filter_map(|(j, job)| {
            cached
                .get(&job.id)
                .cloned()
                .or_else(|| fresh.get(&j).cloned())
        })
        .collect();
    todo.par_iter()
        .map(|&j| refit(r, sheet, &known, j))
        .collect()
}

fn refit(r: &Resolved, sheet: &JobSheet, known: &[JobResult], j: usize) -> (usize, JobResult, f64) {
    let started = Instant::now();
    let job = &sheet.jobs[j];
    let mut result = JobResult {
        id: job.id.clone(),
        split: job.split.clone(),
        candidate: String::new(),
        scores: BTreeMap::new(),
        training: BTreeMap::new(),
        undefined: BTreeMap::new(),
        note: NoteRecord::default(),
        failed: None,
    };
    let Some(outer) = sheet.splits.iter().find(|s| s.id == job.split) else {
        result.failed = Some("the outer split is missing from the job sheet".into());
        return (j, result, 0.0);
    };
    let inner: Vec<&str> = sheet
        .splits
        .iter()
        .filter(|s| s.parent.as_deref() == Some(outer.id.as_str()))
        .map(|s| s.id.as_str())
        .collect();
    let choice = match super::selection::choose(r, sheet, known, &inner) {
        Ok(c) => c,
        Err(e) => {
            result.failed = Some(format!("the inner splits chose nothing: {e}"));
            return (j, result, 0.0);
        }
    };
    let c = &sheet.candidates[choice.chosen];
    result.candidate = c.id.clone();
    let input = FitInput {
        data: &r.data,
        task: r.plan.task(),
        prep: r.plan.prep,
        train: &outer.train,
        evaluate: &outer.validation,
        training_scores: r.plan.select.training_scores,
    };
    let s = evaluate_candidates(&input, &[(c.learner.as_str(), &c.settings)])
        .into_iter()
        .next()
        .unwrap_or_default();
    result.scores = s.scores;
    result.training = s.training;
    result.undefined = s.undefined;
    result.note = s.note.into();
    result.failed = s.failed;
    (j, result, started.elapsed().as_secs_f64())
}
