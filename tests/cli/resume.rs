//! A run killed with SIGKILL leaves the ledger valid, and the next run
//! reuses the recorded jobs and ends with the same result bytes as an
//! uninterrupted run. Jobs are keyed by content, so another plan that shares
//! them reuses them too.

use std::time::{Duration, SystemTime, UNIX_EPOCH};

use serde_json::Value;

use crate::support::{Fixture, PENGUINS_PLAN, run};

/// The shared penguins plan, made long enough to kill mid-run: 30 repeats
/// of 5 folds and three learners.
fn plan() -> String {
    let head = PENGUINS_PLAN
        .replace(
            "name = \"penguins\"\nseed = 11",
            "name = \"resume\"\nseed = 3",
        )
        .replace("folds = 5", "folds = 5\nrepeats = 30")
        .replace("k = [1, 5, 9]", "k = [1, 3, 5, 7, 9, 11, 13, 15]");
    assert!(
        head.contains("seed = 3") && head.contains("repeats = 30") && head.contains("k = [1, 3, 5")
    );
    head + "\n[[candidates]]\nlearner = \"tree\"\ndepth = [1, 2, 3, 4, 5, 6]\n\n\
            [[candidates]]\nlearner = \"logistic\"\nlambda = [0.1, 1.0, 10.0]\n"
}

fn run_json(fx: &Fixture, ledger: &str, plan: &str) -> Value {
    let (code, stdout, stderr) = run(fx
        .cmd()
        .env("HOLDFAST_LEDGER", fx.path(ledger))
        .args(["run", plan, "--json"]));
    assert_eq!(code, 0, "{stderr}");
    serde_json::from_str(&stdout).expect("json")
}

#[test]
fn a_killed_run_resumes_to_the_same_result_bytes() {
    let fx = Fixture::new();
    fx.write("plan.toml", &plan());
    let whole = run_json(&fx, "whole.sqlite", "plan.toml");
    // Kill at a random point of the run (the delay is printed so a failure can be retried).
    let nanos = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map_or(0, |d| d.subsec_nanos());
    let delay = Duration::from_millis(500 + u64::from(nanos % 4000));
    eprintln!("killing the run after {delay:?}");
    let mut child = std::process::Command::new(assert_cmd::cargo::cargo_bin("holdfast"))
        .current_dir(fx.dir.path())
        .env("HOLDFAST_LEDGER", fx.path("killed.sqlite"))
        .args(["run", "plan.toml"])
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .expect("spawn");
    std::thread::sleep(delay);
    child.kill().expect("SIGKILL");
    let _ = child.wait();
    if fx.path("killed.sqlite").exists() {
        let (code, _, stderr) = run(fx
            .cmd()
            .env("HOLDFAST_LEDGER", fx.path("killed.sqlite"))
            .arg("verify"));
        assert!(
            code == 0 || stderr.contains("no run has recorded"),
            "the killed ledger verifies: {stderr}"
        );
    }
    let resumed = run_json(&fx, "killed.sqlite", "plan.toml");
    assert_eq!(resumed["result_hash"], whole["result_hash"]);
    assert_eq!(resumed["jobs"], whole["jobs"]);
    let facts = &resumed["run"];
    assert_eq!(
        facts["reused"].as_u64().unwrap_or(0) + facts["fresh"].as_u64().unwrap_or(0),
        2700
    );
    eprintln!("resumed run reused {} jobs", facts["reused"]);
    let (code, _, stderr) = run(fx
        .cmd()
        .env("HOLDFAST_LEDGER", fx.path("killed.sqlite"))
        .arg("verify"));
    assert_eq!(code, 0, "{stderr}");
}

#[test]
fn another_plan_that_shares_jobs_reuses_them() {
    let fx = Fixture::new();
    let small = plan().replace("repeats = 30", "repeats = 1");
    fx.write("a.toml", &small);
    run_json(&fx, "l.sqlite", "a.toml");
    // Same data, splits, prep and candidates, plus one more block and a new name.
    let more = format!(
        "{}\n[[candidates]]\nlearner = \"nearest-centroid\"\n",
        small.replace("name = \"resume\"", "name = \"more\"")
    );
    fx.write("b.toml", &more);
    let (code, stdout, stderr) = run(fx
        .cmd()
        .env("HOLDFAST_LEDGER", fx.path("l.sqlite"))
        .args(["run", "b.toml"]));
    assert_eq!(code, 0, "{stderr}");
    // a.toml: 5 splits x (17 candidates + baseline) = 90 jobs; b.toml adds 5.
    assert!(
        stdout.contains("ran 95 jobs (90 reused from the ledger, 5 fresh)"),
        "{stdout}"
    );
}
