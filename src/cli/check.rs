//! `check`, `compile` and `demo`: the plan compiler's commands.

use std::path::Path;

use serde::Serialize;

use crate::compile::{self, JobSheet};
use crate::plan::{self, Resolved};
use crate::resample::Role;

use super::{CliError, out};

/// What `check` reports, also its `--json` form.
#[derive(Serialize)]
pub struct CheckReport {
    pub plan: String,
    pub name: String,
    pub plan_hash: String,
    pub data: DataReport,
    pub sealed_rows: usize,
    pub development_rows: usize,
    pub splits: usize,
    pub inner_splits: usize,
    pub candidates: usize,
    pub reference_candidates: usize,
    pub jobs: usize,
    /// Learner fits the run makes (one per job; a nested refit is one fit).
    pub fits: usize,
    /// For nested resampling, the fits in words.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fits_detail: Option<String>,
    pub warnings: Vec<String>,
}

#[derive(Serialize)]
pub struct DataReport {
    pub path: String,
    pub fingerprint: String,
    pub rows: usize,
    pub features: usize,
    pub missing_cells: usize,
}

/// Resolve and compile the plan at `path`.
pub fn load(path: &Path) -> Result<(Resolved, JobSheet), CliError> {
    let resolved = plan::resolve_file(path)?;
    let sheet = compile::compile(&resolved)?;
    Ok((resolved, sheet))
}

fn report(path: &Path, r: &Resolved, sheet: &JobSheet) -> CheckReport {
    let reference = sheet.candidates.iter().filter(|c| c.reference).count();
    CheckReport {
        plan: path.display().to_string(),
        name: r.plan.plan.name.clone(),
        plan_hash: r.hash.clone(),
        data: DataReport {
            path: r.data_path.display().to_string(),
            fingerprint: r.plan.data.file_hash.clone(),
            rows: r.data.rows(),
            features: r.data.feature_names.len(),
            missing_cells: r.data.missing_cells,
        },
        sealed_rows: sheet.sealed.len(),
        development_rows: sheet.development.len(),
        splits: sheet.outer_splits().count(),
        inner_splits: sheet
            .splits
            .iter()
            .filter(|s| s.role == Role::Inner)
            .count(),
        candidates: sheet.candidates.len() - reference,
        reference_candidates: reference,
        jobs: sheet.jobs.len(),
        fits: sheet.jobs.len(),
        fits_detail: fits_detail(sheet),
        warnings: compile::warnings(r, sheet),
    }
}

/// Nested fits in words: outer x inner x candidates + one refit per outer
/// split (common practice, no source) + the final choice's inner splits.
fn fits_detail(sheet: &JobSheet) -> Option<String> {
    let outer = sheet.outer_splits().count();
    let refits = sheet
        .jobs
        .iter()
        .filter(|j| j.candidate == compile::INNER_CHOICE)
        .count();
    if refits == 0 {
        return None;
    }
    let inner = sheet
        .splits
        .iter()
        .filter(|s| s.role == Role::Inner && s.parent.is_some())
        .count();
    let finals = sheet
        .splits
        .iter()
        .filter(|s| s.role == Role::Inner && s.parent.is_none())
        .count();
    let c = sheet.candidates.len();
    Some(format!(
        "{outer} outer splits x {} inner splits x {c} candidates + {refits} refits (one per outer split) \
         + {finals} splits x {c} candidates of the inner scheme on the whole development partition, which chooses the final candidate",
        inner / outer.max(1)
    ))
}

fn print_report(c: &CheckReport) {
    let share = 100.0 * c.sealed_rows as f64 / c.data.rows.max(1) as f64;
    out(&format!("plan         {} ({})", c.name, c.plan));
    out(&format!("plan hash    {}", c.plan_hash));
    out(&format!(
        "data         {}, {} rows, {} features",
        c.data.path, c.data.rows, c.data.features
    ));
    out(&format!("fingerprint  {}", c.data.fingerprint));
    if c.data.missing_cells > 0 {
        out(&format!(
            "missing      {} cells (imputed inside each training part)",
            c.data.missing_cells
        ));
    }
    out(&format!(
        "sealed       {} rows ({share:.1}%), not seen until unseal",
        c.sealed_rows
    ));
    out(&format!("development  {} rows", c.development_rows));
    if c.inner_splits > 0 {
        out(&format!(
            "splits       {} outer, {} inner",
            c.splits, c.inner_splits
        ));
    } else {
        out(&format!("splits       {}", c.splits));
    }
    let reference = if c.reference_candidates > 0 {
        " (+ baseline, for reference)"
    } else {
        ""
    };
    out(&format!("candidates   {}{reference}", c.candidates));
    out(&format!("jobs         {}", c.jobs));
    if let Some(d) = &c.fits_detail {
        out(&format!("fits         {} = {d}", c.fits));
    }
    for w in &c.warnings {
        super::err(&format!("warning: {w}"));
    }
}

/// `holdfast check PLAN`: also warns when a ledger exists and some of the
/// rows this plan seals were already in an opened partition.
pub fn check(path: &Path, ledger: Option<&Path>, json: bool) -> Result<(), CliError> {
    let (resolved, sheet) = load(path)?;
    let mut report = report(path, &resolved, &sheet);
    let file = super::record::ledger_path(ledger, Some(path));
    if file.exists() {
        let ledger = crate::ledger::Ledger::open_existing(&file)?;
        if let Some((_, w)) = crate::exec::exposure_warning(&ledger, &resolved, &sheet.sealed)? {
            report.warnings.push(w);
        }
    }
    if json {
        out(&crate::canon::canonical_json(&report)?);
    } else {
        print_report(&report);
    }
    Ok(())
}

/// `holdfast compile PLAN --out FILE`.
pub fn compile(path: &Path, target: &Path) -> Result<(), CliError> {
    let (_, sheet) = load(path)?;
    let mut text = sheet.canonical_json();
    text.push('\n');
    std::fs::write(target, text).map_err(|e| {
        CliError::user(format!(
            "failed to write job sheet {}: {e}; check the folder exists and is writable",
            target.display()
        ))
    })?;
    out(&format!(
        "wrote job sheet {} ({} splits, {} jobs)",
        target.display(),
        sheet.splits.len(),
        sheet.jobs.len()
    ));
    Ok(())
}

/// `holdfast demo`: write the demo data and plan, run it, open the sealed
/// partition once and print the audit. The demo's ledger lives in the demo
/// folder (`ledger/holdfast.sqlite`), so it never mixes with yours; on a
/// second demo run the partition is already opened and is not opened again.
pub fn demo(dir: &Path, json: bool) -> Result<(), CliError> {
    let plan = crate::demo::write(dir).map_err(|e| {
        CliError::user(format!(
            "failed to write the demo into {}: {e}",
            dir.display()
        ))
    })?;
    let ledger_file = dir.join(crate::ledger::LEDGER_FILE);
    let ledger = crate::ledger::Ledger::open(&ledger_file)?;
    if json {
        return demo_json(&plan, &ledger);
    }
    out(&format!(
        "wrote the demo data and plan into {}",
        dir.display()
    ));
    out("");
    check(&plan, Some(&ledger_file), false)?;
    out("");
    super::record::run(&plan, Some(&ledger_file), false)?;
    out("");
    let (r, sheet) = load(&plan)?;
    let partition = crate::exec::partition_id(
        &r.plan.data.file_hash,
        &crate::exec::row_hashes(&r, &sheet.sealed),
    );
    if ledger.openings(&partition)?.is_empty() {
        super::record::unseal(
            &plan,
            "demo: the one planned look at the sealed partition",
            false,
            Some(&ledger_file),
            false,
        )?;
    } else {
        out(
            "the demo's sealed partition was opened by an earlier demo run; it is not opened again (see the audit)",
        );
    }
    out("");
    super::ledger_view::audit(Some(&plan), Some(&ledger_file), false)
}

fn demo_json(plan: &Path, ledger: &crate::ledger::Ledger) -> Result<(), CliError> {
    let (r, sheet) = load(plan)?;
    let checked = report(plan, &r, &sheet);
    let ran = crate::exec::run_plan(plan, ledger, super::record::now())?;
    let partition = crate::exec::partition_id(
        &r.plan.data.file_hash,
        &crate::exec::row_hashes(&r, &sheet.sealed),
    );
    let opening = if ledger.openings(&partition)?.is_empty() {
        let done = crate::exec::unseal(
            plan,
            ledger,
            "demo: the one planned look at the sealed partition",
            false,
            super::record::now(),
        )?;
        Some(super::view::entry_json(&done.entry))
    } else {
        None
    };
    let rows = (
        partition,
        r.plan.data.file_hash.clone(),
        crate::exec::row_hashes(&r, &sheet.sealed),
    );
    let audit = crate::audit::audit(ledger, Some(&rows))?;
    let all = serde_json::json!({
        "check": checked,
        "selection": super::view::entry_json(&ran.entry),
        "opening": opening,
        "audit": audit,
    });
    out(&crate::canon::canonical_json(&all)?);
    Ok(())
}

/// `holdfast bench-data`: a seeded synthetic data set for benchmarks.
pub fn bench_data(
    target: &Path,
    rows: usize,
    groups: usize,
    features: usize,
    classes: usize,
    seed: u64,
) -> Result<(), CliError> {
    let fail = |e: std::io::Error| {
        CliError::user(format!(
            "failed to write {}: {e}; check the folder exists and is writable",
            target.display()
        ))
    };
    let file = std::fs::File::create(target).map_err(fail)?;
    let mut w = std::io::BufWriter::new(file);
    crate::demo::write_bench(&mut w, seed, rows, groups, features, classes).map_err(fail)?;
    std::io::Write::flush(&mut w).map_err(fail)?;
    out(&format!(
        "wrote {} ({rows} rows, {groups} groups `unit`, order `t`, {features} features, {classes} classes `label`)",
        target.display()
    ));
    Ok(())
}
