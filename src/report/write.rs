//! [`write_report`]: read the entry (and, for an opening, its selection),
//! analyse the selection, draw the plots, gather the openings and the
//! chain's state, and write the page.

use std::path::Path;

use serde::Serialize;
use serde_json::Value;

use crate::analysis::{self, Analysis};
use crate::exec::hashed_part;
use crate::ledger::{Entry, EntryKind, Ledger, Verification};
use crate::plan::raw;

use super::error::ReportError;
use super::fold_map::{FoldMap, fold_map};
use super::page;
use super::plots::{Plot, curve_plot, split_plot};

/// What `report` wrote.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ReportSummary {
    /// The file written.
    pub out: String,
    /// The entry reported on.
    pub entry: u64,
    /// The selection entry whose analysis the page shows (the entry itself,
    /// or the selection an opening opened).
    pub selection: u64,
    /// Names of the plots in the file, in page order.
    pub plots: Vec<String>,
    /// Why the fold map is left out, when it is.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fold_map_omitted: Option<String>,
}

/// Everything the page shows.
pub(super) struct Context {
    pub plan_name: String,
    pub selection: Entry,
    /// The opening the report was asked for, if it was.
    pub opening: Option<Entry>,
    pub analysis: Analysis,
    pub curves: Vec<Plot>,
    pub splits: Plot,
    pub folds: Result<FoldMap, String>,
    /// Bootstrap selections: exact .632 and .632+ from refits.
    pub exact: Option<Result<Vec<super::refit::Exact632>, String>>,
    pub openings: Vec<Entry>,
    pub verification: Verification,
}

/// The plan's name from the recorded plan text.
fn plan_name(entry: &Entry) -> String {
    let text = entry
        .body
        .get("plan_text")
        .and_then(Value::as_str)
        .unwrap_or_default();
    let path = Path::new(&entry.provenance.plan_path);
    raw::parse(path, text)
        .ok()
        .and_then(|p| p.raw.name)
        .unwrap_or_else(|| "(unnamed plan)".into())
}

/// The selection entry behind `entry`, and the opening if `entry` is one.
fn selection_of(ledger: &Ledger, entry: Entry) -> Result<(Entry, Option<Entry>), ReportError> {
    if entry.kind == EntryKind::Selection {
        return Ok((entry, None));
    }
    let hash = entry
        .body
        .get("selection")
        .and_then(Value::as_str)
        .unwrap_or_default();
    if hash.is_empty() {
        return Err(ReportError::NoSelection { seq: entry.seq });
    }
    Ok((ledger.entry(hash)?, Some(entry)))
}

/// One validation-curve plot per learner, in the analysis' curve order.
fn curve_plots(a: &Analysis) -> Result<Vec<Plot>, ReportError> {
    let mut learners: Vec<&str> = Vec::new();
    for c in &a.curves {
        if !learners.contains(&c.learner.as_str()) {
            learners.push(&c.learner);
        }
    }
    learners
        .into_iter()
        .map(|l| {
            let curves: Vec<_> = a.curves.iter().filter(|c| c.learner == l).collect();
            curve_plot(a, l, &curves)
        })
        .collect()
}

/// Write the report of entry `spec` of `ledger` to `out`.
pub fn write_report(ledger: &Ledger, spec: &str, out: &Path) -> Result<ReportSummary, ReportError> {
    let entry = ledger.entry(spec)?;
    let seq = entry.seq;
    let (selection, opening) = selection_of(ledger, entry)?;
    let analysis = analysis::analyse(&hashed_part(&selection.body)).map_err(|source| {
        ReportError::Analysis {
            seq: selection.seq,
            source,
        }
    })?;
    let ctx = Context {
        plan_name: plan_name(&selection),
        curves: curve_plots(&analysis)?,
        splits: split_plot(&analysis)?,
        folds: fold_map(&selection, &analysis),
        exact: analysis
            .bootstrap
            .as_ref()
            .map(|_| super::refit::exact_632(&selection, &analysis)),
        openings: ledger.openings(&selection.partition)?,
        verification: ledger.verify(None)?,
        analysis,
        opening,
        selection,
    };
    let html = page::render(&ctx);
    std::fs::write(out, html).map_err(|source| ReportError::Write {
        path: out.to_path_buf(),
        source,
    })?;
    let mut plots: Vec<String> = ctx.curves.iter().map(|p| p.name.clone()).collect();
    plots.push(ctx.splits.name.clone());
    if let Ok(f) = &ctx.folds {
        plots.push(f.plot.name.clone());
    }
    Ok(ReportSummary {
        out: out.display().to_string(),
        entry: seq,
        selection: ctx.selection.seq,
        plots,
        fold_map_omitted: ctx.folds.as_ref().err().cloned(),
    })
}
