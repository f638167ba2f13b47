//! Compiling a resolved plan into a [`JobSheet`].
//!
//! Invariants: splits depend only on the data, the scheme and the seed, so
//! adding a candidate never moves a fold; jobs are listed split by split, and
//! within a split in candidate order; a job's id hashes the data fingerprint,
//! the data view (target, task, encoded features), the split's row sets, the
//! preprocessing and the candidate, so a job means the same work wherever it
//! appears (in any plan).

use serde::Serialize;

use crate::canon::{hash_canonical, hash_rows};
use crate::learn::{self, Settings};
use crate::plan::{PlanError, Resolved};
use crate::resample::{self, Partition, Role, RowFacts, Scheme, Split};

/// Version of the job sheet's canonical form.
pub const FORMAT: u32 = 1;

/// The data the sheet was compiled against.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SheetData {
    /// BLAKE3 of the data file's bytes.
    pub fingerprint: String,
    /// Rows in the file.
    pub rows: usize,
    /// The data file as written in the plan.
    pub path: String,
}

/// One split, with its id (BLAKE3 of its row sets).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SheetSplit {
    pub id: String,
    pub role: Role,
    /// For an inner split of nested resampling: its outer split's id.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub parent: Option<String>,
    pub repeat: u32,
    pub fold: u32,
    pub train: Vec<u32>,
    pub validation: Vec<u32>,
}

/// One candidate, with its id (BLAKE3 of learner and settings).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SheetCandidate {
    pub id: String,
    pub learner: String,
    pub settings: Settings,
    /// A readable one-line name.
    pub label: String,
    /// `true` for the baseline holdfast adds for comparison; a reference
    /// candidate is scored and shown but never chosen.
    pub reference: bool,
}

/// One candidate on one split.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Job {
    pub id: String,
    pub split: String,
    pub candidate: String,
}

/// The compiled plan.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct JobSheet {
    pub format: u32,
    pub plan_hash: String,
    pub data: SheetData,
    pub sealed: Vec<u32>,
    pub development: Vec<u32>,
    pub splits: Vec<SheetSplit>,
    pub candidates: Vec<SheetCandidate>,
    pub jobs: Vec<Job>,
}

impl JobSheet {
    /// The canonical JSON of the sheet.
    pub fn canonical_json(&self) -> String {
        crate::canon::canonical_json(self).unwrap_or_else(|_| "{}".into())
    }

    /// The candidate with id `id`.
    pub fn candidate(&self, id: &str) -> Option<&SheetCandidate> {
        self.candidates.iter().find(|c| c.id == id)
    }

    /// Splits of the outer loop (all splits, for a plain scheme).
    pub fn outer_splits(&self) -> impl Iterator<Item = &SheetSplit> {
        self.splits.iter().filter(|s| s.role == Role::Outer)
    }
}

/// Why a plan could not be compiled.
#[derive(Debug, thiserror::Error)]
pub enum CompileError {
    #[error("{0}")]
    Plan(#[from] PlanError),
    #[error("internal error while compiling: {0}")]
    Internal(String),
}

/// What a job's id hashes.
#[derive(Serialize)]
struct JobKey<'a> {
    format: u32,
    data_file: &'a str,
    target: &'a str,
    task: &'a str,
    features: &'a [String],
    train: String,
    validation: String,
    prep: &'a crate::prep::PrepSpec,
    learner: &'a str,
    settings: &'a Settings,
}

/// The id of candidate `learner` with `settings` on the split with row sets
/// `train` and `validation` of the plan `r`.
pub fn job_key(
    r: &Resolved,
    train: &[u32],
    validation: &[u32],
    learner: &str,
    settings: &Settings,
) -> String {
    let key = JobKey {
        format: FORMAT,
        data_file: &r.plan.data.file_hash,
        target: &r.plan.data.target,
        task: &r.plan.data.task,
        features: &r.plan.data.encoded,
        train: hash_rows(train),
        validation: hash_rows(validation),
        prep: &r.plan.prep,
        learner,
        settings,
    };
    hash_canonical(&key).unwrap_or_default()
}

/// The steering columns of the data.
pub fn facts(r: &Resolved) -> RowFacts<'_> {
    RowFacts {
        class: r.data.classes(),
        group: r.data.group.as_deref(),
        order: r.data.order.as_deref(),
    }
}

fn resample_error(
    r: &Resolved,
    key: &str,
    table: &str,
    e: resample::ResampleError,
) -> CompileError {
    let message = match &e {
        // Name the class, not its code.
        resample::ResampleError::ClassTooSmall { class, rows, folds } => {
            let name = r
                .plan
                .data
                .classes
                .get(*class as usize)
                .cloned()
                .unwrap_or_else(|| class.to_string());
            format!(
                "class `{name}` of {} has only {rows} rows in the development partition, fewer than the {folds} folds; \
                 use at most {rows} folds or set stratify = false",
                r.plan.data.target
            )
        }
        other => other.to_string(),
    };
    let key = if r.places.contains_key(key) {
        key.to_string()
    } else {
        // Point at the table's first written key when the named one was not written.
        let prefix = format!("{table}.");
        r.places
            .keys()
            .find(|k| k.starts_with(&prefix))
            .cloned()
            .unwrap_or_default()
    };
    CompileError::Plan(r.problem_at(&key, format!("[{table}] {message}")))
}

/// The sealed and development partitions of the plan.
pub fn partition(r: &Resolved) -> Result<Partition, CompileError> {
    let key = if r.places.contains_key("seal.last") {
        "seal.last"
    } else {
        "seal.fraction"
    };
    resample::seal(&r.plan.seal, r.data.rows(), facts(r), r.plan.plan.seed)
        .map_err(|e| resample_error(r, key, "seal", e))
}

fn sheet_splits(r: &Resolved, development: &[u32]) -> Result<Vec<SheetSplit>, CompileError> {
    let seed = r.plan.plan.seed;
    let fail = |e| resample_error(r, "resample.scheme", "resample", e);
    let mut raw: Vec<Split> =
        resample::splits(&r.plan.resample, development, facts(r), seed).map_err(fail)?;
    if let Scheme::Nested { inner, .. } = &r.plan.resample {
        // The inner scheme on the whole development partition chooses the
        // final candidate; the outer loop only estimates how well that
        // choosing procedure does. These splits are inner with no parent.
        let fail = |e| resample_error(r, "resample.inner.scheme", "resample.inner", e);
        let finals = resample::splits(inner, development, facts(r), seed).map_err(fail)?;
        raw.extend(finals.into_iter().map(|s| Split {
            role: Role::Inner,
            parent: None,
            ..s
        }));
    }
    let ids: Vec<String> = raw.iter().map(split_id).collect();
    Ok(raw
        .into_iter()
        .zip(ids.iter())
        .map(|(s, id)| SheetSplit {
            id: id.clone(),
            role: s.role,
            parent: s.parent.and_then(|p| ids.get(p).cloned()),
            repeat: s.repeat,
            fold: s.fold,
            train: s.train,
            validation: s.validation,
        })
        .collect())
}

/// A split's id: BLAKE3 of its row sets, its role, and (nested) its parent's
/// position, so that an outer split and an inner one with the same rows are
/// still two splits.
fn split_id(s: &Split) -> String {
    hash_canonical(&(
        hash_rows(&s.train),
        hash_rows(&s.validation),
        s.role,
        s.parent,
    ))
    .unwrap_or_default()
}

fn sheet_candidates(r: &Resolved) -> Vec<SheetCandidate> {
    let mut list: Vec<(String, Settings, bool)> = r
        .plan
        .candidates
        .iter()
        .map(|c| (c.learner.clone(), c.settings.clone(), false))
        .collect();
    if !list.iter().any(|(l, _, _)| l == "baseline") {
        list.push(("baseline".into(), Settings::new(), true));
    }
    list.into_iter()
        .map(|(learner, settings, reference)| {
            let spec = learn::by_name(&learner)
                .map(|l| l.settings())
                .unwrap_or(&[]);
            SheetCandidate {
                id: hash_canonical(&(&learner, &settings)).unwrap_or_default(),
                label: crate::plan::label(&learner, &settings, spec),
                learner,
                settings,
                reference,
            }
        })
        .collect()
}

/// Compile a resolved plan into its job sheet.
/// The candidate id of a nested refit job: the candidate that the inner
/// splits of its outer split choose, known only when they have run.
pub const INNER_CHOICE: &str = "inner-choice";

/// Whether the plan's scheme is nested.
pub fn is_nested(r: &Resolved) -> bool {
    matches!(r.plan.resample, Scheme::Nested { .. })
}

/// The id of the refit job of outer split `outer`: it hashes what decides
/// the inner choice (the inner splits' row sets, every candidate, the rule
/// and metric) and the outer split's rows.
fn refit_key(
    r: &Resolved,
    outer: &SheetSplit,
    inner: &[&SheetSplit],
    candidates: &[SheetCandidate],
) -> String {
    let inner_rows: Vec<(String, String)> = inner
        .iter()
        .map(|s| (hash_rows(&s.train), hash_rows(&s.validation)))
        .collect();
    let ids: Vec<&str> = candidates.iter().map(|c| c.id.as_str()).collect();
    let mut settings = Settings::new();
    let choice = hash_canonical(&(inner_rows, ids, &r.plan.select.rule, r.plan.select.metric))
        .unwrap_or_default();
    settings.insert("choice".into(), crate::learn::SettingValue::Text(choice));
    job_key(r, &outer.train, &outer.validation, INNER_CHOICE, &settings)
}

fn jobs_of(r: &Resolved, splits: &[SheetSplit], candidates: &[SheetCandidate]) -> Vec<Job> {
    let nested = is_nested(r);
    let mut jobs = Vec::with_capacity(splits.len() * candidates.len());
    for s in splits {
        if nested && s.role == Role::Outer {
            let inner: Vec<&SheetSplit> = splits
                .iter()
                .filter(|i| i.parent.as_deref() == Some(s.id.as_str()))
                .collect();
            jobs.push(Job {
                id: refit_key(r, s, &inner, candidates),
                split: s.id.clone(),
                candidate: INNER_CHOICE.into(),
            });
            continue;
        }
        for c in candidates {
            jobs.push(Job {
                id: job_key(r, &s.train, &s.validation, &c.learner, &c.settings),
                split: s.id.clone(),
                candidate: c.id.clone(),
            });
        }
    }
    jobs
}

/// Compile a resolved plan into its job sheet.
pub fn compile(r: &Resolved) -> Result<JobSheet, CompileError> {
    let part = partition(r)?;
    let splits = sheet_splits(r, &part.development)?;
    let candidates = sheet_candidates(r);
    let jobs = jobs_of(r, &splits, &candidates);
    Ok(JobSheet {
        format: FORMAT,
        plan_hash: r.hash.clone(),
        data: SheetData {
            fingerprint: r.plan.data.file_hash.clone(),
            rows: r.data.rows(),
            path: r.plan.data.path.clone(),
        },
        sealed: part.sealed,
        development: part.development,
        splits,
        candidates,
        jobs,
    })
}
