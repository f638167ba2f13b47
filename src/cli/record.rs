//! `run`, `unseal` and `replay`: printing what the library did.

use std::path::{Path, PathBuf};

use chrono::{DateTime, Utc};

use crate::exec::{self, ReplayError, RunError, UnsealError};
use crate::exit;
use crate::ledger::{self, Ledger};

use super::view::{entry_json, num, selection_table};
use super::{CliError, err, out};

/// The clock: `HOLDFAST_NOW` (RFC 3339) when set, so tests can fix it.
pub fn now() -> DateTime<Utc> {
    std::env::var("HOLDFAST_NOW")
        .ok()
        .and_then(|t| DateTime::parse_from_rfc3339(&t).ok())
        .map_or_else(Utc::now, |t| t.with_timezone(&Utc))
}

/// The ledger path for a command (flag, then environment, then default).
pub fn ledger_path(flag: Option<&Path>, plan: Option<&Path>) -> PathBuf {
    ledger::resolve_path(flag, ledger::ledger_var(), plan)
}

impl From<ledger::LedgerError> for CliError {
    fn from(e: ledger::LedgerError) -> CliError {
        CliError {
            code: e.exit_code(),
            message: e.to_string(),
        }
    }
}

impl From<RunError> for CliError {
    fn from(e: RunError) -> CliError {
        match e {
            RunError::Ledger(l) => l.into(),
            RunError::Internal(m) => CliError::internal(m),
            other => CliError::user(other.to_string()),
        }
    }
}

impl From<UnsealError> for CliError {
    fn from(e: UnsealError) -> CliError {
        match e {
            UnsealError::Run(r) => r.into(),
            other => CliError::user(other.to_string()),
        }
    }
}

impl From<ReplayError> for CliError {
    fn from(e: ReplayError) -> CliError {
        match e {
            ReplayError::Ledger(l) => l.into(),
            ReplayError::Run(r) => r.into(),
            ReplayError::Unseal(u) => u.into(),
            ReplayError::PlanChanged { .. } => CliError::integrity(e.to_string()),
            other => CliError::user(other.to_string()),
        }
    }
}

fn print_json(v: &serde_json::Value) -> Result<(), CliError> {
    out(&crate::canon::canonical_json(v)?);
    Ok(())
}

/// `holdfast run PLAN`.
pub fn run(plan: &Path, flag: Option<&Path>, json: bool) -> Result<(), CliError> {
    let ledger = Ledger::open(&ledger_path(flag, Some(plan)))?;
    let done = exec::run_plan(plan, &ledger, now())?;
    for w in &done.warnings {
        err(&format!("warning: {w}"));
    }
    if json {
        return print_json(&entry_json(&done.entry));
    }
    let s = &done.selection;
    out(&format!(
        "ran {} jobs ({} reused from the ledger, {} fresh) in {:.1}s",
        done.facts.jobs, done.facts.reused, done.facts.fresh, done.facts.seconds
    ));
    out(&format!(
        "{} over {} splits, rule {} ({}):",
        s.metric,
        s.splits,
        s.rule,
        if s.larger_is_better {
            "larger is better"
        } else {
            "smaller is better"
        }
    ));
    let analysis = super::view::analysis_of(&done.entry);
    out(&selection_table(s, analysis.as_ref().ok()));
    out(&format!("chosen: {}", s.chosen_label));
    match &analysis {
        Ok(a) => {
            out(&a.optimism.sentence);
            out(&format!(
                "`~` marks candidates not distinguishable from the chosen one ({}; p >= 0.05, not adjusted for the number of comparisons)",
                a.test.description
            ));
        }
        Err(why) => err(&format!("warning: no comparisons: {why}")),
    }
    if let Some(n) = &s.nested {
        out(&format!(
            "nested estimate of the whole choosing procedure: {} (se {}) over {} outer splits",
            num(n.mean),
            num(n.se),
            n.outer.len()
        ));
    }
    out(&format!(
        "recorded selection entry {} ({}) in {}",
        done.entry.seq,
        &done.entry.hash[..16],
        ledger.path().display()
    ));
    out(&format!(
        "the sealed partition ({} rows) is still sealed; open it once with `holdfast unseal {} --reason ...`",
        s.sealed_rows,
        plan.display()
    ));
    Ok(())
}

/// `holdfast unseal PLAN --reason TEXT [--again]`.
pub fn unseal(
    plan: &Path,
    reason: &str,
    again: bool,
    flag: Option<&Path>,
    json: bool,
) -> Result<(), CliError> {
    if reason.trim().is_empty() {
        return Err(CliError::user(
            "--reason is empty; say why you are opening the sealed partition (it is recorded)",
        ));
    }
    let ledger = Ledger::open(&ledger_path(flag, Some(plan)))?;
    let done = exec::unseal(plan, &ledger, reason, again, now())?;
    for w in &done.warnings {
        err(&format!("warning: {w}"));
    }
    if json {
        return print_json(&entry_json(&done.entry));
    }
    let o = &done.opening;
    out(&format!(
        "opened sealed partition {} ({} rows) with {}",
        &o.partition[..12.min(o.partition.len())],
        o.n,
        o.candidate_label
    ));
    out(&format!(
        "{} = {:.4}, 95% interval {:.4} to {:.4} ({})",
        o.metric, o.score, o.interval.low, o.interval.high, o.interval_note
    ));
    if let Some(b) = &o.bonferroni {
        out(&format!(
            "opening {} of this partition: Bonferroni-adjusted {:.2}% interval {} to {} (level 1 - 0.05/{})",
            o.openings,
            100.0 * b.level,
            num(Some(b.low)),
            num(Some(b.high)),
            o.openings
        ));
    }
    if !done.previous.is_empty() {
        out(&format!(
            "this partition has now been opened {} times:",
            o.openings
        ));
        for e in &done.previous {
            out(&format!(
                "  entry {} at {} by {}@{}",
                e.seq,
                ledger::timestamp_text(&e.timestamp),
                e.provenance.user,
                e.provenance.host
            ));
        }
        out(&format!("  entry {} (this one)", done.entry.seq));
    }
    out(&format!(
        "recorded opening entry {} ({}) in {}",
        done.entry.seq,
        &done.entry.hash[..16],
        ledger.path().display()
    ));
    Ok(())
}

/// `holdfast replay ENTRY`.
pub fn replay(spec: &str, flag: Option<&Path>, json: bool) -> Result<(), CliError> {
    let ledger = Ledger::open_existing(&ledger_path(flag, None))?;
    let report = exec::replay(&ledger, spec)?;
    if json {
        print_json(&serde_json::to_value(&report).unwrap_or_default())?;
    } else {
        if report.kind == ledger::EntryKind::Opening {
            out(
                "replaying an opening recomputes a recorded number: it is not a new opening and is not counted",
            );
        }
        if report.identical {
            out("identical");
        } else {
            out(&format!(
                "differs: recorded result hash {}, recomputed {}",
                report.recorded_hash, report.recomputed_hash
            ));
            if let Some(d) = &report.first_difference {
                out(&format!(
                    "first difference at {}: recorded {}, recomputed {}",
                    d.path, d.recorded, d.recomputed
                ));
            }
            if report.recorded_by != report.replayed_by {
                out(&format!(
                    "the entry was recorded by holdfast {} and replayed by holdfast {}: a release \
                     that changes how a learner or metric computes gives other last digits, so \
                     replay with holdfast {} to compare",
                    report.recorded_by, report.replayed_by, report.recorded_by
                ));
            }
        }
    }
    if report.identical {
        Ok(())
    } else {
        Err(CliError {
            code: exit::INTEGRITY,
            message: format!("replay of entry {} differs from the ledger", report.entry),
        })
    }
}
