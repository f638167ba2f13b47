//! The parts of a recorded selection the analysis reads, parsed from the
//! entry's JSON, and the outer-split x candidate score tables built from
//! its jobs.
//!
//! Invariants: candidates keep their recorded order and outer splits their
//! sheet order; a score that a job does not record is `None`, never a
//! stand-in value. Unknown keys are ignored: the body is ledger data written
//! by holdfast, and later versions add keys.

use std::collections::BTreeMap;

use serde::Deserialize;
use serde_json::Value;

use super::analysis::AnalysisError;

#[derive(Debug, Deserialize)]
pub(super) struct Recorded {
    pub metric: String,
    pub larger_is_better: bool,
    pub rule: String,
    pub scheme: Value,
    pub chosen: String,
    pub best: String,
    #[serde(default)]
    pub standard_error: Option<f64>,
    pub candidates: Vec<RecordedCandidate>,
    pub split_facts: Vec<RecordedSplit>,
    pub jobs: Vec<RecordedJob>,
    /// A nested estimate, when a later holdfast records one.
    #[serde(default)]
    pub nested: Option<Value>,
}

#[derive(Debug, Deserialize)]
pub(super) struct RecordedCandidate {
    pub id: String,
    pub label: String,
    pub learner: String,
    #[serde(default)]
    pub settings: BTreeMap<String, Value>,
    #[serde(default)]
    pub reference: bool,
    #[serde(default)]
    pub mean: Option<f64>,
    #[serde(default)]
    pub se: Option<f64>,
    #[serde(default)]
    pub eligible: bool,
    #[serde(default)]
    pub why_not: Option<String>,
}

#[derive(Debug, Deserialize)]
pub(super) struct RecordedSplit {
    pub id: String,
    pub role: String,
    #[serde(default)]
    pub parent: Option<String>,
    #[serde(default)]
    pub repeat: u32,
    #[serde(default)]
    pub fold: u32,
    pub train_rows: usize,
    pub validation_rows: usize,
}

#[derive(Debug, Deserialize)]
pub(super) struct RecordedJob {
    pub split: String,
    pub candidate: String,
    #[serde(default)]
    pub scores: BTreeMap<String, f64>,
    #[serde(default)]
    pub training: BTreeMap<String, f64>,
}

/// The recorded scheme, as far as the analysis needs it.
#[derive(Clone, Debug, PartialEq)]
pub(super) enum SchemeFacts {
    KFold { folds: usize, repeats: usize },
    Bootstrap,
    Nested { outer: Box<SchemeFacts> },
    Other,
}

impl SchemeFacts {
    pub fn of(v: &Value) -> SchemeFacts {
        let count = |k: &str| v.get(k).and_then(Value::as_u64).map(|n| n as usize);
        match v.get("scheme").and_then(Value::as_str) {
            Some("k-fold") => SchemeFacts::KFold {
                folds: count("folds").unwrap_or(0),
                repeats: count("repeats").unwrap_or(1),
            },
            Some("bootstrap") => SchemeFacts::Bootstrap,
            Some("nested") => SchemeFacts::Nested {
                outer: Box::new(SchemeFacts::of(v.get("outer").unwrap_or(&Value::Null))),
            },
            _ => SchemeFacts::Other,
        }
    }

    /// The scheme of the outer loop (the scheme itself when not nested).
    pub fn outer(&self) -> &SchemeFacts {
        match self {
            SchemeFacts::Nested { outer } => outer,
            plain => plain,
        }
    }
}

/// The name of the recorded scheme (`k-fold`, `nested`, ...).
pub(super) fn scheme_name(v: &Value) -> String {
    v.get("scheme")
        .and_then(Value::as_str)
        .unwrap_or("unknown")
        .to_string()
}

/// Scores of every candidate on every outer split, validation and training
/// part: `validation[candidate][split]`.
#[derive(Debug)]
pub(super) struct Tables {
    pub validation: Vec<Vec<Option<f64>>>,
    pub training: Vec<Vec<Option<f64>>>,
}

impl Recorded {
    pub fn parse(selection: &Value) -> Result<Recorded, AnalysisError> {
        let r: Recorded = serde_json::from_value(selection.clone())
            .map_err(|e| AnalysisError::Malformed(e.to_string()))?;
        for (what, id) in [("chosen", &r.chosen), ("best", &r.best)] {
            if r.index(id).is_none() {
                return Err(AnalysisError::Inconsistent(format!(
                    "the {what} candidate {id} is not among the recorded candidates"
                )));
            }
        }
        if r.outer_splits().next().is_none() {
            return Err(AnalysisError::Inconsistent(
                "the selection records no outer split".into(),
            ));
        }
        Ok(r)
    }

    /// The index of candidate `id`.
    pub fn index(&self, id: &str) -> Option<usize> {
        self.candidates.iter().position(|c| c.id == id)
    }

    /// The splits the selection summarised: the outer splits of a plain
    /// scheme; for nested, the inner scheme on the whole development
    /// partition (inner splits without a parent), which chose the final
    /// candidate (the outer splits score refits of inner choices instead).
    pub fn outer_splits(&self) -> impl Iterator<Item = &RecordedSplit> {
        let nested = self
            .split_facts
            .iter()
            .any(|s| s.role == "inner" && s.parent.is_none());
        self.split_facts.iter().filter(move |s| {
            if nested {
                s.role == "inner" && s.parent.is_none()
            } else {
                s.role == "outer"
            }
        })
    }

    /// The scores of `metric` (the selection's, or any other the jobs
    /// record), outer splits only, both parts.
    pub fn tables(&self, metric: &str) -> Tables {
        let splits: BTreeMap<&str, usize> = self
            .outer_splits()
            .enumerate()
            .map(|(i, s)| (s.id.as_str(), i))
            .collect();
        let cands: BTreeMap<&str, usize> = self
            .candidates
            .iter()
            .enumerate()
            .map(|(i, c)| (c.id.as_str(), i))
            .collect();
        let empty = vec![vec![None; splits.len()]; self.candidates.len()];
        let mut t = Tables {
            validation: empty.clone(),
            training: empty,
        };
        for job in &self.jobs {
            let (Some(&s), Some(&c)) = (
                splits.get(job.split.as_str()),
                cands.get(job.candidate.as_str()),
            ) else {
                continue;
            };
            t.validation[c][s] = job.scores.get(metric).copied();
            t.training[c][s] = job.training.get(metric).copied();
        }
        t
    }
}
