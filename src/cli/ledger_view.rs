//! `audit`, `verify`, `head`, `log` and `show`: reading the ledger.

use std::path::Path;

use tabled::settings::Style;
use tabled::{Table, Tabled};

use crate::audit::{self, AuditReport};
use crate::exec::{partition_id, row_hashes};
use crate::ledger::{EntryKind, HeadCheck, Ledger, timestamp_text};

use super::record::ledger_path;
use super::view::{entry_json, num};
use super::{CliError, out};

fn json_out(v: &impl serde::Serialize) -> Result<(), CliError> {
    out(&crate::canon::canonical_json(v)?);
    Ok(())
}

fn chain_line(r: &AuditReport) -> String {
    match (&r.chain.first_problem, r.chain.verified) {
        (_, true) => format!(
            "chain verified: {} entries, head {}",
            r.chain.entries,
            r.chain.head.clone().unwrap_or_else(|| "(empty)".into())
        ),
        (Some(p), false) => {
            format!("CHAIN DOES NOT VERIFY: {p}; run `holdfast verify` for details")
        }
        (None, false) => "CHAIN DOES NOT VERIFY; run `holdfast verify` for details".to_string(),
    }
}

fn histogram_text(h: &std::collections::BTreeMap<u32, usize>) -> String {
    h.iter()
        .map(|(k, v)| format!("{v} rows in {k} opening(s)"))
        .collect::<Vec<_>>()
        .join(", ")
}

fn print_audit(r: &AuditReport) {
    out(&chain_line(r));
    out(&format!("ledger {}", r.ledger));
    if r.partitions.is_empty() {
        out("no selections or openings of this data are recorded");
    }
    for p in &r.partitions {
        out("");
        out(&format!(
            "sealed partition {} ({} rows, data {})",
            &p.partition[..12.min(p.partition.len())],
            p.sealed_rows,
            &p.data_file[..12.min(p.data_file.len())]
        ));
        out(&format!("  openings: {}", p.openings.len()));
        for o in &p.openings {
            out(&format!(
                "    entry {} at {} by {}@{}: {} {} = {} after {} candidate(s) compared; reason: {}",
                o.seq,
                o.timestamp,
                o.user,
                o.host,
                o.candidate_label,
                o.metric,
                num(o.score),
                o.candidates_compared_before,
                o.reason
            ));
        }
        out(&format!(
            "  rows by openings: {}",
            histogram_text(&p.rows_by_openings)
        ));
        out(&format!("  selections: {}", p.selections.len()));
        for s in &p.selections {
            out(&format!(
                "    entry {} at {} by {}: {} candidates, chose {}",
                s.seq, s.timestamp, s.user, s.candidates, s.chosen_label
            ));
        }
    }
    if let Some(p) = &r.plan {
        out("");
        out(&format!(
            "this plan seals {} rows; {} of them were already in an opened partition ({})",
            p.sealed_rows,
            p.already_seen_rows,
            histogram_text(&p.rows_by_openings)
        ));
    }
}

/// `holdfast audit [PLAN]`.
pub fn audit(plan: Option<&Path>, flag: Option<&Path>, json: bool) -> Result<(), CliError> {
    let ledger = Ledger::open_existing(&ledger_path(flag, plan))?;
    let rows = match plan {
        Some(p) => {
            let (r, sheet) = super::check::load(p)?;
            let hashes = row_hashes(&r, &sheet.sealed);
            Some((
                partition_id(&r.plan.data.file_hash, &hashes),
                r.plan.data.file_hash.clone(),
                hashes,
            ))
        }
        None => None,
    };
    let report = audit::audit(&ledger, rows.as_ref())?;
    if json {
        json_out(&report)
    } else {
        print_audit(&report);
        Ok(())
    }
}

/// `holdfast verify [--head HASH]`.
pub fn verify(head: Option<&str>, flag: Option<&Path>, json: bool) -> Result<(), CliError> {
    let ledger = Ledger::open_existing(&ledger_path(flag, None))?;
    let v = ledger.verify(head)?;
    let head_ok = v
        .head_check
        .as_ref()
        .is_none_or(|h| matches!(h, HeadCheck::Proven { .. }));
    if json {
        json_out(&v)?;
    } else if v.is_intact() && head_ok {
        out(&format!(
            "verified: {} entries, {} cached job results; head {}",
            v.entries,
            v.jobs_checked,
            v.head.clone().unwrap_or_else(|| "(empty)".into())
        ));
        if let (Some(HeadCheck::Proven { seq }), Some(h)) = (&v.head_check, head) {
            out(&format!(
                "head {h} is entry {seq} of the chain: nothing up to it was rewritten"
            ));
        }
    } else {
        for p in &v.problems {
            out(&format!("problem: {p}"));
        }
        match (&v.head_check, head) {
            (Some(HeadCheck::NotFound), Some(h)) => out(&format!(
                "head {h} is not in the chain: history up to it was rewritten"
            )),
            (Some(HeadCheck::Unproven { seq }), Some(h)) => out(&format!(
                "head {h} is entry {seq}, but the chain does not verify up to it"
            )),
            _ => {}
        }
    }
    if v.is_intact() && head_ok {
        Ok(())
    } else {
        let first = v.first_problem().map_or_else(
            || "the given head is not in the chain".to_string(),
            |p| p.to_string(),
        );
        Err(CliError::integrity(format!(
            "ledger {} does not verify: {first}",
            ledger.path().display()
        )))
    }
}

/// `holdfast head`.
pub fn head(flag: Option<&Path>, json: bool) -> Result<(), CliError> {
    let ledger = Ledger::open_existing(&ledger_path(flag, None))?;
    let h = ledger.head()?;
    if json {
        return json_out(
            &serde_json::json!({ "head": h, "ledger": ledger.path().display().to_string() }),
        );
    }
    match h {
        Some(h) => out(&h),
        None => out("(the ledger has no entries yet)"),
    }
    Ok(())
}

#[derive(Tabled)]
struct LogRow {
    #[tabled(rename = "entry")]
    seq: u64,
    #[tabled(rename = "kind")]
    kind: String,
    #[tabled(rename = "time (UTC)")]
    time: String,
    #[tabled(rename = "by")]
    by: String,
    #[tabled(rename = "plan hash")]
    plan: String,
    #[tabled(rename = "hash")]
    hash: String,
}

/// `holdfast log`.
pub fn log(flag: Option<&Path>, json: bool) -> Result<(), CliError> {
    let ledger = Ledger::open_existing(&ledger_path(flag, None))?;
    let metas = ledger.list()?;
    if json {
        return json_out(&metas);
    }
    let rows: Vec<LogRow> = metas
        .iter()
        .map(|m| LogRow {
            seq: m.seq,
            kind: match m.kind {
                EntryKind::Selection => "selection".into(),
                EntryKind::Opening => "opening".into(),
            },
            time: timestamp_text(&m.timestamp),
            by: format!("{}@{}", m.provenance.user, m.provenance.host),
            plan: m.plan_hash[..12.min(m.plan_hash.len())].to_string(),
            hash: m.hash[..16.min(m.hash.len())].to_string(),
        })
        .collect();
    out(&Table::new(rows).with(Style::sharp()).to_string());
    Ok(())
}

/// `holdfast show ENTRY`.
pub fn show(spec: &str, flag: Option<&Path>, json: bool) -> Result<(), CliError> {
    let ledger = Ledger::open_existing(&ledger_path(flag, None))?;
    let e = ledger.entry(spec)?;
    let v = entry_json(&e);
    if json {
        return json_out(&v);
    }
    out(&serde_json::to_string_pretty(&v).unwrap_or_default());
    Ok(())
}

/// `holdfast report ENTRY --out FILE.html`.
pub fn report(spec: &str, target: &Path, flag: Option<&Path>, json: bool) -> Result<(), CliError> {
    let ledger = Ledger::open_existing(&ledger_path(flag, None))?;
    let summary = crate::report::write_report(&ledger, spec, target).map_err(|e| CliError {
        code: e.exit_code(),
        message: e.to_string(),
    })?;
    if json {
        return json_out(&summary);
    }
    out(&format!(
        "wrote report of entry {} to {} ({})",
        summary.entry,
        summary.out,
        summary.plots.join(", ")
    ));
    Ok(())
}
