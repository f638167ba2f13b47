//! Shapes of output: an entry as one JSON object (what `show --json`,
//! `run --json` and `unseal --json` print) and the tables people read.

use serde_json::{Map, Value};
use tabled::settings::Style;
use tabled::{Table, Tabled};

use crate::analysis::Analysis;
use crate::exec::{CandidateSummary, SelectionResult};
use crate::ledger::{Entry, timestamp_text};

/// An entry as one JSON object: its ledger fields, then every key of its
/// body at the top level (`result_hash`, `chosen`, `jobs` for a selection;
/// `partition`, `candidate`, `metric`, `score`, `n`, `interval`,
/// `openings` for an opening).
pub fn entry_json(e: &Entry) -> Value {
    let mut map = Map::new();
    if let Value::Object(body) = &e.body {
        for (k, v) in body {
            map.insert(k.clone(), v.clone());
        }
    }
    let meta = [
        ("seq", Value::from(e.seq)),
        ("hash", Value::from(e.hash.clone())),
        ("prev", Value::from(e.prev.clone())),
        ("kind", serde_json::to_value(e.kind).unwrap_or_default()),
        ("timestamp", Value::from(timestamp_text(&e.timestamp))),
        ("plan_hash", Value::from(e.plan_hash.clone())),
        ("data_file", Value::from(e.data_file.clone())),
        ("partition", Value::from(e.partition.clone())),
        ("result_hash", Value::from(e.result_hash.clone())),
        (
            "provenance",
            serde_json::to_value(&e.provenance).unwrap_or_default(),
        ),
    ];
    for (k, v) in meta {
        map.insert(k.to_string(), v);
    }
    if !e.sealed_rows.is_empty() {
        map.insert(
            "sealed_row_hashes".into(),
            Value::from(e.sealed_rows.clone()),
        );
    }
    if e.kind == crate::ledger::EntryKind::Selection {
        // Computed from the recorded result each time it is shown (never
        // hashed): the same numbers the report draws.
        match analysis_of(e) {
            Ok(a) => map.insert(
                "analysis".into(),
                serde_json::to_value(a).unwrap_or_default(),
            ),
            Err(why) => map.insert("analysis_error".into(), Value::from(why)),
        };
    }
    Value::Object(map)
}

/// The analysis of a selection entry (comparisons, optimism, curves).
pub fn analysis_of(e: &Entry) -> Result<Analysis, String> {
    crate::analysis::analyse(&crate::exec::hashed_part(&e.body)).map_err(|err| err.to_string())
}

/// A number for a table: 4 decimals, or a dash.
pub fn num(v: Option<f64>) -> String {
    v.map_or_else(|| "-".to_string(), |x| format!("{x:.4}"))
}

#[derive(Tabled)]
struct Row {
    #[tabled(rename = "rank")]
    rank: String,
    #[tabled(rename = "candidate")]
    candidate: String,
    #[tabled(rename = "mean")]
    mean: String,
    #[tabled(rename = "sd")]
    sd: String,
    #[tabled(rename = "se")]
    se: String,
    #[tabled(rename = "train mean")]
    train: String,
    #[tabled(rename = "splits")]
    splits: String,
    #[tabled(rename = "")]
    mark: String,
}

/// Candidates ranked by mean (best first; candidates without a mean last).
pub fn ranked(s: &SelectionResult) -> Vec<&CandidateSummary> {
    let mut list: Vec<&CandidateSummary> = s.candidates.iter().collect();
    let key = |c: &CandidateSummary| c.mean.map(|m| if s.larger_is_better { -m } else { m });
    list.sort_by(|a, b| match (key(a), key(b)) {
        (Some(x), Some(y)) => x.total_cmp(&y),
        (Some(_), None) => std::cmp::Ordering::Less,
        (None, Some(_)) => std::cmp::Ordering::Greater,
        (None, None) => std::cmp::Ordering::Equal,
    });
    list
}

fn mark(s: &SelectionResult, c: &CandidateSummary, a: Option<&Analysis>) -> String {
    let mut marks = Vec::new();
    let comparison = a.and_then(|a| a.comparisons.iter().find(|x| x.candidate == c.id));
    if let Some(x) = comparison {
        match (x.distinguishable, x.p) {
            (Some(false), Some(p)) => {
                marks.push(format!("~ not distinguishable from chosen (p {p:.2})"))
            }
            (Some(true), Some(p)) if p < 0.001 => {
                marks.push("worse than chosen (p < 0.001)".to_string())
            }
            (Some(true), Some(p)) => marks.push(format!("worse than chosen (p {p:.3})")),
            _ => {}
        }
    }
    if c.id == s.chosen {
        marks.push("<- chosen".to_string());
    } else if c.id == s.best {
        marks.push("best mean".to_string());
    }
    if c.reference {
        marks.push("baseline".to_string());
    }
    if let Some(w) = c.why_not.as_ref().filter(|_| !c.reference) {
        marks.push(w.clone());
    }
    if !c.active_features.is_empty() {
        let n = c.active_features.len() as f64;
        let mean = c.active_features.iter().map(|&a| a as f64).sum::<f64>() / n;
        marks.push(format!("{mean:.1} active features"));
    }
    if c.not_converged > 0 {
        marks.push(format!("did not converge on {} split(s)", c.not_converged));
    }
    marks.join("; ")
}

/// The selection table; with the analysis, candidates not distinguishable
/// from the chosen one (corrected resampled t-test, p >= 0.05) are marked `~`.
pub fn selection_table(s: &SelectionResult, a: Option<&Analysis>) -> String {
    let rows: Vec<Row> = ranked(s)
        .into_iter()
        .enumerate()
        .map(|(i, c)| Row {
            rank: (i + 1).to_string(),
            candidate: c.label.clone(),
            mean: num(c.mean),
            sd: num(c.sd),
            se: num(c.se),
            train: num(c.training_mean),
            splits: c.scored_splits.to_string(),
            mark: mark(s, c, a),
        })
        .collect();
    Table::new(rows).with(Style::sharp()).to_string()
}
