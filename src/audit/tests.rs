//! The audit read in one pass against the full read (every entry fetched
//! and parsed whole), on ledgers built to exercise every field it shows.

use chrono::{TimeZone, Utc};
use rusqlite::Connection;
use serde_json::{Value, json};

use super::report::{PlanRows, chain, full_partitions, histogram};
use super::*;
use crate::ledger::{EntryKind, Ledger, NewEntry, Provenance};

fn provenance(i: usize) -> Provenance {
    Provenance {
        user: format!("user-{}", i % 3),
        host: "lab".into(),
        tool_version: "0.1.0".into(),
        plan_path: "plan.toml".into(),
        git_commit: None,
        git_dirty: Some(i.is_multiple_of(2)),
    }
}

fn entry(i: usize, kind: EntryKind, partition: &str, data: &str, body: Value) -> NewEntry {
    let rows = match kind {
        // Rows overlap between partitions, and one row comes twice.
        EntryKind::Opening => (0..6 + i % 4)
            .map(|r| format!("row-{}", (r + i) % 9))
            .chain(["row-dup".to_string(), "row-dup".to_string()])
            .collect(),
        EntryKind::Selection => Vec::new(),
    };
    NewEntry {
        kind,
        timestamp: Utc
            .timestamp_opt(1_700_000_000 + i as i64, 250_000)
            .unwrap(),
        plan_hash: format!("plan-{}", i % 2),
        data_file: data.into(),
        partition: partition.into(),
        result_hash: format!("result-{i}"),
        body,
        sealed_rows: rows,
        provenance: provenance(i),
    }
}

fn selection_body(i: usize) -> Value {
    let candidates: Vec<Value> = (0..4)
        .map(|c| json!({"id": format!("cand-{}", (c + i) % 6), "reference": c == 3}))
        .collect();
    match i % 5 {
        // Bodies as real selections write them, and some that are odd.
        0 => json!({"candidates": candidates, "chosen_label": "tree depth=3", "sealed_rows": 40}),
        1 => json!({"candidates": candidates, "chosen_label": "k=5 \"quoted\"\n"}),
        2 => json!({"candidates": "none", "chosen_label": 7, "sealed_rows": -1}),
        3 => json!({"candidates": [1, {"id": 2}, {"reference": "yes"}, {"id": "cand-9"}]}),
        _ => json!({"candidates": [], "sealed_rows": 12.0, "other": {"deep": [candidates]}}),
    }
}

fn opening_body(i: usize) -> Value {
    match i % 3 {
        // Scores in 1/1024ths, which binary floats hold exactly.
        0 => json!({"candidate": format!("cand-{i}"), "candidate_label": "tree depth=3",
                    "metric": "balanced-accuracy", "score": 0.5 + i as f64 / 1024.0, "reason": "look"}),
        1 => json!({"candidate": "c", "metric": "auc", "score": 3, "reason": "ü €"}),
        _ => json!({"candidate": null, "score": "high", "reason": ["not", "text"]}),
    }
}

/// Four partitions over two data files, their entries interleaved; one
/// partition has no opening.
fn ledger() -> (tempfile::TempDir, Ledger) {
    let dir = tempfile::tempdir().unwrap();
    let ledger = Ledger::open(&dir.path().join("audit.sqlite")).unwrap();
    let parts = [
        ("seal-b", "data-1"),
        ("seal-a", "data-1"),
        ("seal-c", "data-2"),
        ("seal-d", "data-1"),
    ];
    for i in 0..60 {
        let (partition, data) = parts[(i / 3) % parts.len()];
        let opening = i % 4 == 3 && partition != "seal-d";
        let (kind, body) = match opening {
            true => (EntryKind::Opening, opening_body(i)),
            false => (EntryKind::Selection, selection_body(i)),
        };
        ledger
            .append(entry(i, kind, partition, data, body))
            .unwrap();
    }
    (dir, ledger)
}

/// The audit as it was read before the one-pass tally: verify, then every
/// entry fetched and parsed whole, exposure asked row by row.
fn full_audit(ledger: &Ledger, plan: Option<&PlanRows>) -> AuditReport {
    AuditReport {
        ledger: ledger.path().display().to_string(),
        chain: chain(&ledger.verify(None).unwrap()),
        partitions: full_partitions(ledger, plan).unwrap(),
        plan: plan.map(|(id, _, rows)| {
            let counts = ledger.exposure(rows).unwrap();
            PlanExposure {
                partition: id.clone(),
                sealed_rows: rows.len(),
                already_seen_rows: counts.iter().filter(|&&c| c > 0).count(),
                rows_by_openings: histogram(&counts),
            }
        }),
    }
}

fn plan_rows() -> PlanRows {
    let rows = ["row-1", "row-2", "row-dup", "row-never"].map(String::from);
    ("seal-a".to_string(), "data-1".to_string(), rows.to_vec())
}

#[test]
fn the_one_pass_audit_equals_the_full_read() {
    let (_dir, ledger) = ledger();
    let report = audit(&ledger, None).unwrap();
    assert!(report.chain.verified);
    assert_eq!(report, full_audit(&ledger, None));
    let names: Vec<&str> = report
        .partitions
        .iter()
        .map(|p| p.partition.as_str())
        .collect();
    assert_eq!(
        names,
        ["seal-b", "seal-a", "seal-c", "seal-d"],
        "order of first entries"
    );
    let plan = plan_rows();
    let planned = audit(&ledger, Some(&plan)).unwrap();
    assert_eq!(planned, full_audit(&ledger, Some(&plan)));
    assert_eq!(planned.partitions.len(), 3, "seal-c is another data file's");
}

/// Counted by hand from the generator (entry i has sequence number i + 1):
/// seal-a holds i = 3-5, 15-17, 27-29, 39-41, 51-53, of which those with
/// i % 4 == 3 (3, 15, 27, 39, 51) are openings; seal-b holds i = 0-2,
/// 12-14, 24-26, 36-38, 48-50, none of them an opening.
#[test]
fn the_audit_counts_what_the_generator_wrote() {
    let (_dir, ledger) = ledger();
    let report = audit(&ledger, None).unwrap();
    let a = &report.partitions[1];
    let seqs: Vec<u64> = a.openings.iter().map(|o| o.seq).collect();
    assert_eq!(seqs, [4, 16, 28, 40, 52]);
    assert_eq!(a.selections.len(), 10);
    // Before opening 3 (i = 3), no selection of seal-a was run.
    assert_eq!(a.openings[0].candidates_compared_before, 0);
    // i = 3: opening body 3 % 3 == 0, score 0.5 + 3/1024.
    assert_eq!(a.openings[0].score, Some(0.5029296875));
    assert_eq!(a.openings[0].candidate, "cand-3");
    // Before i = 15, the selections i = 4 and 5: bodies 4 % 5 == 4 (no
    // candidates) and 5 % 5 == 0 (ids cand-5, cand-0, cand-1; cand-2 is
    // the reference).
    assert_eq!(a.openings[1].candidates_compared_before, 3);
    // The last opening (i = 51) has 6 + 51 % 4 = 9 rows, row-0 to row-8,
    // and row-dup twice.
    assert_eq!(a.sealed_rows, 11);
    let b = &report.partitions[0];
    assert!(b.openings.is_empty());
    // seal-b's last selection is i = 50: body 50 % 5 == 0, 40 sealed rows.
    assert_eq!(b.sealed_rows, 40);
    assert_eq!(b.rows_by_openings, [(0, 40)].into_iter().collect());
}

/// Drop the triggers and run `sql`, as someone editing the file would.
fn tamper(ledger: &Ledger, sql: &str) {
    let conn = Connection::open(ledger.path()).unwrap();
    conn.execute_batch(
        "DROP TRIGGER IF EXISTS entry_body_no_update; DROP TRIGGER IF EXISTS exposure_no_update;",
    )
    .unwrap();
    conn.execute_batch(sql).unwrap();
}

#[test]
fn bodies_rewritten_without_changing_content_still_audit_the_same() {
    let (_dir, ledger) = ledger();
    // Spaces, keys out of order and a repeated key whose last copy holds
    // the value: all read back to the same content, so the chain verifies.
    tamper(
        &ledger,
        r#"UPDATE entry_body SET body = replace(body, ',"', ', "') WHERE seq % 7 = 0;
           UPDATE entry_body SET body = '{"score": 9, "reason":"look","metric":"balanced-accuracy",
               "candidate_label":"tree depth=3","candidate":"cand-3","score":0.5029296875}'
               WHERE seq = 4;"#,
    );
    let report = audit(&ledger, None).unwrap();
    assert!(report.chain.verified, "{:?}", report.chain.first_problem);
    assert_eq!(report, full_audit(&ledger, None));
}

#[test]
fn a_ledger_that_does_not_verify_is_audited_the_full_way() {
    let (_dir, ledger) = ledger();
    tamper(
        &ledger,
        r#"UPDATE entry_body SET body = json_set(body, '$.score', 0.99) WHERE seq = 16;
           UPDATE exposure SET row_hash = 'row-new' WHERE seq = 52 AND row_hash = 'row-0';"#,
    );
    let report = audit(&ledger, None).unwrap();
    assert!(!report.chain.verified);
    assert_eq!(report, full_audit(&ledger, None));
    assert_eq!(report.partitions[1].openings[1].score, Some(0.99));
    // Entries that no longer read back fail the audit as they always did.
    for sql in [
        "UPDATE exposure SET copies = 3 WHERE seq = 28 AND row_hash = 'row-dup'",
        "UPDATE entry_body SET body = 'not json' WHERE seq = 5",
    ] {
        tamper(&ledger, sql);
        let err = audit(&ledger, None).unwrap_err();
        let full = full_partitions(&ledger, None).unwrap_err();
        assert_eq!(err.to_string(), full.to_string(), "{sql}");
    }
}
