//! The stages around the learners, and a whole run:
//!
//! - `load`: reading a generated CSV into the matrix with its fingerprint
//!   (file hash and one hash per row), 100,000 rows of 20 features.
//! - `compile`: resolving and compiling a large plan (100,000 rows, grouped
//!   stratified 10-fold x 5 repeats, 60 candidates with the baseline: 3,000 jobs).
//! - `ledger/store-jobs`: appending the results of 1,000,000 jobs to the
//!   job cache in one call (target: under 10 s).
//! - `ledger/audit`: `audit` on a ledger of 10,000 entries (100 partitions
//!   of 90 selections and 10 openings each; target: under 200 ms), and
//!   `ledger/verify` on the same ledger (the chain walk the audit starts
//!   with).
//! - `run`: `exec::run_plan` (compile, run, select, ledger writes) on a
//!   fresh ledger, at 2,500, 10,000 and 40,000 rows, so that growth with
//!   rows can be read off.

mod common;

use std::hint::black_box;
use std::path::{Path, PathBuf};
use std::time::Duration;

use chrono::{TimeZone, Utc};
use criterion::{BatchSize, BenchmarkId, Criterion, criterion_group, criterion_main};
use holdfast::data::{DataSpec, load};
use holdfast::ledger::{EntryKind, Ledger, NewEntry, Provenance, StoredJob};
use serde_json::json;

use common::{Bed, classification_plan, compiled};

fn features(n: usize) -> Vec<String> {
    (1..=n).map(|j| format!("f{j:02}")).collect()
}

fn load_csv(c: &mut Criterion) {
    let bed = Bed::new(100_000, 20, 1_000);
    let spec = DataSpec {
        path: bed.data.clone(),
        target: "label".into(),
        classification: true,
        features: features(20),
        categorical: Vec::new(),
        group: Some("unit".into()),
        order: Some("t".into()),
        allow_missing: false,
    };
    let mut group = c.benchmark_group("load");
    group.sample_size(10);
    group.bench_function("100000x20-load-and-fingerprint", |b| {
        b.iter(|| black_box(load(&spec).expect("the data loads").rows()))
    });
    group.finish();
}

const LARGE_PLAN: &str = "[[candidates]]\nlearner = \"nearest-neighbors\"\n\
    k = [1, 3, 5, 7, 9, 11, 13, 15, 17, 19, 21, 23, 25, 27, 29, 31]\n\
    vote = [\"equal\", \"inverse-distance\"]\n\n\
    [[candidates]]\nlearner = \"shrunken-centroid\"\ndelta = { from = 0.0, to = 4.0, steps = 17 }\n\n\
    [[candidates]]\nlearner = \"tree\"\ndepth = { from = 1, to = 10, steps = 10 }\n";

fn compile_plan(c: &mut Criterion) {
    let bed = Bed::new(100_000, 20, 1_000);
    let plan = bed.plan(
        "large.toml",
        &classification_plan(10, 5, LARGE_PLAN)
            .replace("folds = 10", "folds = 10\nstratify = true"),
    );
    let mut group = c.benchmark_group("compile");
    group.sample_size(10);
    group.bench_function("100000-rows-50-splits-3000-jobs", |b| {
        b.iter(|| black_box(compiled(&plan).1.jobs.len()))
    });
    group.finish();
}

/// A job result as `run` stores it (canonical JSON of a `JobResult`).
fn job_result(i: usize) -> StoredJob {
    let id = blake3::hash(&i.to_le_bytes()).to_hex().to_string();
    let split = blake3::hash(&(i / 17).to_le_bytes()).to_hex().to_string();
    let value = (i % 1000) as f64 / 1000.0;
    let result = json!({
        "candidate": blake3::hash(&(i % 17).to_le_bytes()).to_hex().to_string(),
        "id": id,
        "note": {},
        "scores": {"accuracy": value, "auc": value, "balanced-accuracy": value,
                   "brier": value, "log-loss": value},
        "split": split,
        "training": {"accuracy": value, "balanced-accuracy": value},
    });
    StoredJob {
        id,
        result: result.to_string(),
        seconds: 0.001,
    }
}

fn fresh_ledger(dir: &Path, name: &str) -> (PathBuf, Ledger) {
    let path = dir.join(name);
    let _ = std::fs::remove_file(&path);
    let ledger = Ledger::open(&path).expect("a ledger");
    (path, ledger)
}

fn store_jobs(c: &mut Criterion) {
    let dir = tempfile::tempdir().expect("a temporary folder");
    let jobs: Vec<StoredJob> = (0..1_000_000).map(job_result).collect();
    let mut group = c.benchmark_group("ledger");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(60));
    group.bench_function("store-jobs-1000000", |b| {
        b.iter_batched(
            || fresh_ledger(dir.path(), "jobs.sqlite"),
            |(_, ledger)| ledger.store_jobs(&jobs).expect("jobs stored"),
            BatchSize::PerIteration,
        )
    });
    group.finish();
}

fn provenance() -> Provenance {
    Provenance {
        user: "bench".into(),
        host: "bench-host".into(),
        tool_version: env!("CARGO_PKG_VERSION").into(),
        plan_path: "/bench/plan.toml".into(),
        git_commit: None,
        git_dirty: None,
    }
}

/// Entry `i` of the audit ledger: partition `i / 100`; the last 10 of each
/// 100 are openings of 500 sealed rows.
fn entry(i: usize) -> NewEntry {
    let hash = |s: String| blake3::hash(s.as_bytes()).to_hex().to_string();
    let part = i / 100;
    let opening = i % 100 >= 90;
    let candidates: Vec<_> = (0..20)
        .map(|c| json!({"id": hash(format!("c{c}-{}", i % 7)), "reference": c == 19}))
        .collect();
    let body = if opening {
        json!({"candidate": hash(format!("c{i}")), "candidate_label": "tree depth=3",
               "metric": "balanced-accuracy", "score": 0.7, "reason": "bench"})
    } else {
        json!({"candidates": candidates, "chosen_label": "tree depth=3", "sealed_rows": 500})
    };
    let sealed_rows = if opening {
        (0..500).map(|r| hash(format!("{part}/{r}"))).collect()
    } else {
        Vec::new()
    };
    NewEntry {
        kind: if opening {
            EntryKind::Opening
        } else {
            EntryKind::Selection
        },
        timestamp: Utc.timestamp_opt(1_700_000_000 + i as i64, 0).unwrap(),
        plan_hash: hash(format!("plan{part}")),
        data_file: hash(format!("data{part}")),
        partition: hash(format!("partition{part}")),
        result_hash: hash(format!("result{i}")),
        body,
        sealed_rows,
        provenance: provenance(),
    }
}

fn audit(c: &mut Criterion) {
    let dir = tempfile::tempdir().expect("a temporary folder");
    let (_, ledger) = fresh_ledger(dir.path(), "audit.sqlite");
    for i in 0..10_000 {
        ledger.append(entry(i)).expect("an entry");
    }
    let mut group = c.benchmark_group("ledger");
    group.sample_size(10);
    group.bench_function("audit-10000-entries", |b| {
        b.iter(|| {
            let report = holdfast::audit::audit(&ledger, None).expect("an audit");
            // A chain that does not verify is audited the slow way.
            assert!(report.chain.verified);
            black_box(report.partitions.len())
        })
    });
    group.bench_function("verify-10000-entries", |b| {
        b.iter(|| {
            let v = ledger.verify(None).expect("a verification");
            assert!(v.is_intact());
            black_box(v.entries)
        })
    });
    group.bench_function("append-one-entry-to-10000", |b| {
        let mut i = 10_000;
        b.iter(|| {
            i += 1;
            black_box(ledger.append(entry(i)).expect("an entry").seq)
        })
    });
    group.finish();
}

const RUN_PLAN: &str = "[[candidates]]\nlearner = \"nearest-neighbors\"\n\
    k = [1, 3, 5, 7, 9, 11, 13, 15, 17, 19, 21, 23, 25, 27, 29, 31]\n\n\
    [[candidates]]\nlearner = \"shrunken-centroid\"\ndelta = { from = 0.0, to = 4.0, steps = 17 }\n\n\
    [[candidates]]\nlearner = \"tree\"\ndepth = { from = 1, to = 10, steps = 10 }\n";

fn run(c: &mut Criterion) {
    let mut group = c.benchmark_group("run");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(10));
    let now = Utc.timestamp_opt(1_700_000_000, 0).unwrap();
    for rows in [2_500, 10_000, 40_000] {
        let bed = Bed::new(rows, 5, 100);
        let plan = bed.plan("run.toml", &classification_plan(5, 2, RUN_PLAN));
        group.bench_with_input(
            BenchmarkId::new("5x2-folds-44-candidates", rows),
            &rows,
            |b, _| {
                b.iter_batched(
                    || fresh_ledger(bed.dir.path(), "run.sqlite"),
                    |(_, ledger)| {
                        let out =
                            holdfast::exec::run_plan(&plan, &ledger, now).expect("the plan runs");
                        black_box(out.facts.fresh)
                    },
                    BatchSize::PerIteration,
                )
            },
        );
    }
    group.finish();
}

criterion_group!(benches, load_csv, compile_plan, store_jobs, audit, run);
criterion_main!(benches);
