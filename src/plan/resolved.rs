//! The resolved plan: every default written out, feature globs expanded
//! against the data header, the data file loaded and its fingerprint
//! attached. Its canonical JSON, hashed with BLAKE3, is the plan hash.
//!
//! Invariants: comments, whitespace and key order in the plan never change
//! the resolved plan; every semantic change does, and so does one changed
//! byte of the data file (through its file hash). Paths are kept as written
//! (relative to the plan), so moving a checkout does not change the hash.

use std::path::{Path, PathBuf};

use serde::Serialize;

use crate::data::{self, DataError, DataSpec, Dataset};
use crate::learn::{self, Settings, Task};
use crate::prep::{Impute, PrepSpec, Scale};
use crate::resample::{Scheme, SealSpec};
use crate::score::Metric;

use super::grid;
use super::problem::{Place, PlanError, Problem};
use super::raw::{self, ParsedPlan, RawPlan};
use super::scheme::resolve_scheme;

/// Version of the resolved plan's canonical form. Bump it whenever the
/// meaning or layout of any field changes.
pub const FORMAT: u32 = 1;

/// `[plan]`, resolved.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PlanSection {
    pub name: String,
    pub seed: u64,
}

/// `[data]`, resolved.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct DataSection {
    /// As written in the plan (relative to the plan's folder).
    pub path: String,
    /// BLAKE3 of the data file's bytes.
    pub file_hash: String,
    pub rows: usize,
    pub target: String,
    pub task: String,
    /// Class names in code order (empty for regression).
    pub classes: Vec<String>,
    /// Feature columns after glob expansion, in header order.
    pub features: Vec<String>,
    pub categorical: Vec<String>,
    /// Matrix columns after one-hot encoding.
    pub encoded: Vec<String>,
    pub group: Option<String>,
    pub order: Option<String>,
}

/// One candidate, complete.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CandidateSpec {
    pub learner: String,
    pub settings: Settings,
}

/// `[select]`, resolved.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SelectSection {
    pub metric: Metric,
    pub rule: String,
    /// Whether training-part scores are computed too (for the validation curve).
    pub training_scores: bool,
}

/// The plan with every default written out.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ResolvedPlan {
    pub format: u32,
    pub plan: PlanSection,
    pub data: DataSection,
    pub seal: SealSpec,
    pub resample: Scheme,
    pub prep: PrepSpec,
    pub candidates: Vec<CandidateSpec>,
    pub select: SelectSection,
}

impl ResolvedPlan {
    /// The task, for learners.
    pub fn task(&self) -> Task {
        if self.data.task == "regression" {
            Task::Regression
        } else {
            Task::Classification {
                classes: self.data.classes.len(),
            }
        }
    }

    /// The canonical JSON (sorted keys, no whitespace, shortest floats).
    pub fn canonical_json(&self) -> String {
        // The plan holds no NaN (ranges and numbers are checked finite), so
        // this cannot fail; fall back to an empty object rather than panic.
        crate::canon::canonical_json(self).unwrap_or_else(|_| "{}".into())
    }

    /// BLAKE3 of the canonical JSON.
    pub fn hash(&self) -> String {
        crate::canon::hash_bytes(self.canonical_json().as_bytes())
    }
}

/// Why a plan could not be resolved.
#[derive(Debug, thiserror::Error)]
pub enum ResolveError {
    #[error("failed to read plan file {path}: {source}; check the path")]
    ReadPlan {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error("{0}")]
    Plan(#[from] PlanError),
    #[error("{0}")]
    Data(#[from] DataError),
}

/// A plan, resolved, with its data and where they came from.
#[derive(Clone, Debug)]
pub struct Resolved {
    pub plan: ResolvedPlan,
    pub hash: String,
    pub data: Dataset,
    /// The plan file as given.
    pub plan_path: PathBuf,
    /// The data file, resolved against the plan's folder.
    pub data_path: PathBuf,
    /// Places of the plan's keys, for messages of later passes.
    pub places: std::collections::BTreeMap<String, Place>,
}

impl Resolved {
    /// A plan error at the place of dotted key `key`.
    pub fn problem_at(&self, key: &str, message: impl Into<String>) -> PlanError {
        PlanError {
            path: self.plan_path.clone(),
            problems: vec![Problem::at(self.places.get(key).copied(), message)],
        }
    }
}

/// Read, parse and resolve the plan at `path`, loading its data.
pub fn resolve_file(path: &Path) -> Result<Resolved, ResolveError> {
    let text = std::fs::read_to_string(path).map_err(|source| ResolveError::ReadPlan {
        path: path.to_path_buf(),
        source,
    })?;
    let parsed = raw::parse(path, &text)?;
    resolve(path, parsed)
}

struct Ctx<'a> {
    path: &'a Path,
    parsed: &'a ParsedPlan,
    problems: Vec<Problem>,
}

impl Ctx<'_> {
    fn at(&self, key: &str) -> Option<Place> {
        self.parsed.places.get(key).copied()
    }
    fn problem(&mut self, key: &str, message: impl Into<String>) {
        let place = self.at(key);
        self.problems.push(Problem::at(place, message));
    }
    fn fail(&mut self) -> PlanError {
        self.problems.sort();
        PlanError {
            path: self.path.to_path_buf(),
            problems: std::mem::take(&mut self.problems),
        }
    }
}

/// Resolve a parsed plan that was read from `path`.
pub fn resolve(path: &Path, parsed: ParsedPlan) -> Result<Resolved, ResolveError> {
    let mut cx = Ctx {
        path,
        parsed: &parsed,
        problems: Vec::new(),
    };
    let raw = &parsed.raw;
    let classification = raw.task.as_deref() != Some("regression");
    let written_path = raw.data_path.clone().unwrap_or_default();
    let folder = path.parent().unwrap_or_else(|| Path::new(""));
    let data_path = folder.join(&written_path);
    let header = data::read_header(&data_path)?;
    let columns = columns(&mut cx, raw, &header);
    let seal = seal_spec(&mut cx, raw, classification);
    let place = |k: &str| parsed.places.get(k).copied();
    let scheme = resolve_scheme(&raw.resample, classification, &place, &mut cx.problems);
    let task_hint = if classification {
        Task::Classification { classes: 2 }
    } else {
        Task::Regression
    };
    let candidates = candidates(&mut cx, raw, task_hint);
    let select = select(&mut cx, raw, classification);
    let prep = prep_spec(raw);
    if !cx.problems.is_empty() {
        return Err(cx.fail().into());
    }
    let (features, categorical) = columns.unwrap_or_default();
    let spec = DataSpec {
        path: data_path.clone(),
        target: raw.target.clone().unwrap_or_default(),
        classification,
        features: features.clone(),
        categorical: categorical.clone(),
        group: raw.group.clone(),
        order: raw.order.clone(),
        allow_missing: prep.impute != Impute::None,
    };
    let data = data::load(&spec)?;
    let (Some(seal), Some(resample), Some(select)) = (seal, scheme, select) else {
        return Err(cx.fail().into());
    };
    let plan = ResolvedPlan {
        format: FORMAT,
        plan: PlanSection {
            name: raw.name.clone().unwrap_or_else(|| default_name(path)),
            seed: raw.seed.unwrap_or(0),
        },
        data: DataSection {
            path: written_path,
            file_hash: data.fingerprint.file.clone(),
            rows: data.rows(),
            target: spec.target.clone(),
            task: if classification {
                "classification"
            } else {
                "regression"
            }
            .into(),
            classes: class_names(&data),
            features,
            categorical,
            encoded: data.feature_names.clone(),
            group: raw.group.clone(),
            order: raw.order.clone(),
        },
        seal,
        resample,
        prep,
        candidates,
        select,
    };
    let hash = plan.hash();
    Ok(Resolved {
        plan,
        hash,
        data,
        plan_path: path.to_path_buf(),
        data_path,
        places: parsed.places.clone(),
    })
}

fn default_name(path: &Path) -> String {
    path.file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "plan".into())
}

fn class_names(data: &Dataset) -> Vec<String> {
    match &data.target {
        data::Target::Classes { names, .. } => names.clone(),
        data::Target::Values(_) => Vec::new(),
    }
}

fn check_column(cx: &mut Ctx<'_>, key: &str, name: &Option<String>, header: &[String], what: &str) {
    let Some(name) = name else { return };
    if header.iter().any(|h| h == name) {
        return;
    }
    let words: Vec<&str> = header.iter().map(String::as_str).collect();
    let hint = super::reader::suggest(name, &words)
        .map(|w| format!("; did you mean `{w}`?"))
        .unwrap_or_default();
    cx.problem(
        key,
        format!("[data] {what} column `{name}` is not in the data file's header{hint}"),
    );
}

/// Expand feature globs; returns (features, categorical) in header order.
fn columns(
    cx: &mut Ctx<'_>,
    raw: &RawPlan,
    header: &[String],
) -> Option<(Vec<String>, Vec<String>)> {
    check_column(cx, "data.target", &raw.target, header, "target");
    check_column(cx, "data.group", &raw.group, header, "group");
    check_column(cx, "data.order", &raw.order, header, "order");
    let steering: Vec<&String> = [&raw.target, &raw.group, &raw.order]
        .into_iter()
        .flatten()
        .collect();
    let pool: Vec<&String> = header.iter().filter(|h| !steering.contains(h)).collect();
    let include = match &raw.features {
        Some(globs) => matching(cx, "data.features", globs, &pool, header)?,
        None => pool.iter().map(|h| h.to_string()).collect(),
    };
    let exclude = match &raw.exclude {
        Some(globs) => matching(cx, "data.exclude", globs, &pool, header)?,
        None => Vec::new(),
    };
    let features: Vec<String> = include
        .into_iter()
        .filter(|f| !exclude.contains(f))
        .collect();
    if features.is_empty() {
        cx.problem(
            "data.features",
            "[data] no feature columns are left; list some in `features`",
        );
    }
    let mut categorical = Vec::new();
    for name in raw.categorical.iter().flatten() {
        if features.contains(name) {
            categorical.push(name.clone());
        } else {
            cx.problem(
                "data.categorical",
                format!("[data] categorical column `{name}` is not among the features"),
            );
        }
    }
    categorical.sort_by_key(|c| header.iter().position(|h| h == c));
    Some((features, categorical))
}

fn matching(
    cx: &mut Ctx<'_>,
    key: &str,
    globs: &[String],
    pool: &[&String],
    header: &[String],
) -> Option<Vec<String>> {
    let mut chosen = vec![false; pool.len()];
    for g in globs {
        let pattern = match glob::Pattern::new(g) {
            Ok(p) => p,
            Err(e) => {
                cx.problem(key, format!("[data] `{g}` is not a valid pattern: {e}"));
                continue;
            }
        };
        let mut any = false;
        for (i, col) in pool.iter().enumerate() {
            if pattern.matches(col) {
                chosen[i] = true;
                any = true;
            }
        }
        if !any {
            let why = if header.iter().any(|h| pattern.matches(h)) {
                "matches only the target, group or order column"
            } else {
                "matches no column of the data file"
            };
            cx.problem(key, format!("[data] `{g}` {why}; check the header"));
        }
    }
    Some(
        pool.iter()
            .zip(chosen)
            .filter(|(_, c)| *c)
            .map(|(h, _)| h.to_string())
            .collect(),
    )
}

fn seal_spec(cx: &mut Ctx<'_>, raw: &RawPlan, classification: bool) -> Option<SealSpec> {
    if let Some(fraction) = raw.seal_last {
        if raw.order.is_none() {
            cx.problem(
                "seal.last",
                "[seal] last needs an order column; set `order` in [data]",
            );
            return None;
        }
        if raw.seal_stratify.is_some() {
            cx.problem(
                "seal.stratify",
                "[seal] stratify does not apply with `last`; remove it",
            );
        }
        return Some(SealSpec::Last { fraction });
    }
    if raw.seal_stratify == Some(true) && !classification {
        cx.problem(
            "seal.stratify",
            "[seal] stratify needs a classification target; remove it for regression",
        );
    }
    Some(SealSpec::Random {
        // The common 75/25 development/test split (common practice, no source).
        fraction: raw.seal_fraction.unwrap_or(0.25),
        stratify: raw.seal_stratify.unwrap_or(classification) && classification,
    })
}

fn prep_spec(raw: &RawPlan) -> PrepSpec {
    PrepSpec {
        scale: match raw.scale.as_deref() {
            Some("min-max") => Scale::MinMax,
            Some("none") => Scale::None,
            _ => Scale::ZScore,
        },
        impute: match raw.impute.as_deref() {
            Some("mean") => Impute::Mean,
            Some("median") => Impute::Median,
            _ => Impute::None,
        },
    }
}

fn candidates(cx: &mut Ctx<'_>, raw: &RawPlan, task: Task) -> Vec<CandidateSpec> {
    let mut out: Vec<CandidateSpec> = Vec::new();
    for (i, block) in raw.candidates.iter().enumerate() {
        let Some(learner) = learn::by_name(&block.learner) else {
            continue;
        };
        if !learner.supports(task) {
            let task_name = if matches!(task, Task::Regression) {
                "regression"
            } else {
                "classification"
            };
            let key = format!("candidates.{i}.learner");
            cx.problem(
                &key,
                format!(
                    "learner {} does not do {task_name}; choose another learner",
                    learner.name()
                ),
            );
            continue;
        }
        match grid::expand(learner, block) {
            Ok(list) => {
                for settings in list {
                    let c = CandidateSpec {
                        learner: block.learner.clone(),
                        settings,
                    };
                    if out.contains(&c) {
                        let label = grid::label(&c.learner, &c.settings, learner.settings());
                        let key = format!("candidates.{i}.learner");
                        cx.problem(
                            &key,
                            format!("candidate `{label}` is listed twice; remove the repeat"),
                        );
                    } else {
                        out.push(c);
                    }
                }
            }
            Err(problems) => cx.problems.extend(problems),
        }
    }
    out
}

fn select(cx: &mut Ctx<'_>, raw: &RawPlan, classification: bool) -> Option<SelectSection> {
    let default = if classification {
        Metric::BalancedAccuracy
    } else {
        Metric::Rmse
    };
    let metric = raw
        .metric
        .as_deref()
        .and_then(Metric::from_name)
        .unwrap_or(default);
    let task = if classification {
        Task::Classification { classes: 2 }
    } else {
        Task::Regression
    };
    if !Metric::for_task(task).contains(&metric) {
        let kind = if classification {
            "classification"
        } else {
            "regression"
        };
        let valid: Vec<&str> = Metric::for_task(task).iter().map(|m| m.name()).collect();
        cx.problem(
            "select.metric",
            format!(
                "[select] metric {} does not apply to {kind}; use one of {}",
                metric.name(),
                valid.join(", ")
            ),
        );
        return None;
    }
    Some(SelectSection {
        metric,
        rule: raw.rule.clone().unwrap_or_else(|| "best".into()),
        training_scores: raw.training_scores.unwrap_or(true),
    })
}
