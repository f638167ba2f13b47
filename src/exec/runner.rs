//! Running the jobs of a job sheet in parallel, split by split.
//!
//! Invariants: results come back in job order whatever the completion order;
//! jobs already recorded (by job id) are not run again; results are handed to
//! the caller a batch at a time (each batch in job order) so that a killed
//! run keeps what it finished. All splits are queued on the pool at once, so
//! both cores stay busy to the end (not batch by batch); each result is
//! computed by one fixed sequence of operations, so neither the thread count
//! nor completion order changes a bit.

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

/// Finished splits: (job index, result, fit seconds) in any order.
type Done = Vec<(usize, JobResult, f64)>;

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
    // Inside a pool the calling thread is a worker that must not block on
    // a channel (a one-thread pool would never run the work): batch there.
    let mut fresh = if rayon::current_thread_index().is_some() {
        run_in_batches(r, sheet, &work, progress)
    } else {
        run_streaming(r, sheet, &work, progress)
    };
    let mut refits = refit_jobs(r, sheet, cached, &fresh);
    if !refits.is_empty() {
        (progress.advance())(refits.len());
        store(progress, &mut refits, &mut fresh);
    }
    sheet
        .jobs
        .iter()
        .enumerate()
        .filter_map(|(j, job)| cached.get(&job.id).cloned().or_else(|| fresh.remove(&j)))
        .collect()
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

/// Splits stored together: a killed run loses at most about this many.
fn batch_splits() -> usize {
    (rayon::current_num_threads() * 2).max(2)
}

/// Sorts `done` into job order, hands it to `progress` and keeps it.
fn store(progress: &mut dyn RunProgress, done: &mut Done, fresh: &mut BTreeMap<usize, JobResult>) {
    done.sort_by_key(|(j, _, _)| *j);
    let stored: Vec<(JobResult, f64)> = done.iter().map(|(_, res, s)| (res.clone(), *s)).collect();
    progress.store(&stored);
    fresh.extend(done.drain(..).map(|(j, res, _)| (j, res)));
}

/// Every split on the pool at once, so that no thread idles while another
/// finishes a batch; the calling thread stores splits as they finish,
/// [`batch_splits`] at a time. Completion order only decides which batch a
/// result is stored in, never a result.
fn run_streaming(
    r: &Resolved,
    sheet: &JobSheet,
    work: &[(&SheetSplit, Vec<usize>)],
    progress: &mut dyn RunProgress,
) -> BTreeMap<usize, JobResult> {
    let (tx, rx) = std::sync::mpsc::channel::<Done>();
    let mut fresh = BTreeMap::new();
    rayon::in_place_scope(|scope| {
        scope.spawn(move |_| {
            work.par_iter().for_each_with(tx, |tx, (split, todo)| {
                // The receiver outlives the scope, so sending cannot fail.
                let _ = tx.send(run_split(r, sheet, split, todo));
            });
        });
        let (mut pending, mut splits) = (Done::new(), 0);
        // Ends when the last sender is dropped: every split has finished.
        for out in rx.iter() {
            (progress.advance())(out.len());
            pending.extend(out);
            splits += 1;
            if splits == batch_splits() {
                store(progress, &mut pending, &mut fresh);
                splits = 0;
            }
        }
        store(progress, &mut pending, &mut fresh);
    });
    fresh
}

/// Splits in batches of [`batch_splits`], each batch run in parallel and
/// stored before the next starts.
fn run_in_batches(
    r: &Resolved,
    sheet: &JobSheet,
    work: &[(&SheetSplit, Vec<usize>)],
    progress: &mut dyn RunProgress,
) -> BTreeMap<usize, JobResult> {
    let mut fresh = BTreeMap::new();
    for chunk in work.chunks(batch_splits()) {
        let advance = progress.advance();
        let mut done: Done = chunk
            .par_iter()
            .flat_map_iter(|(split, todo)| {
                let out = run_split(r, sheet, split, todo);
                advance(out.len());
                out
            })
            .collect();
        store(progress, &mut done, &mut fresh);
    }
    fresh
}
