//! The README's examples: every plan under `plans/` checks, and `demo` runs
//! the whole job (run, one opening, audit).

use serde_json::Value;

use crate::support::{Fixture, repo_file, run};

#[test]
fn every_plan_under_plans_checks() {
    let fx = Fixture::new();
    let mut seen = 0;
    for entry in std::fs::read_dir(repo_file("plans")).expect("plans/") {
        let path = entry.expect("entry").path();
        if path.extension().is_some_and(|e| e == "toml") {
            let (code, stdout, stderr) = run(fx.cmd().arg("check").arg(&path));
            assert_eq!(code, 0, "{}: {stderr}", path.display());
            assert!(stdout.contains("plan hash"), "{stdout}");
            seen += 1;
        }
    }
    assert!(seen > 0, "plans/ holds at least one plan");
}

#[test]
fn demo_runs_the_whole_job_once() {
    let fx = Fixture::new();
    let (code, stdout, stderr) = run(fx.cmd().args(["demo", "--dir", "demo", "--json"]));
    assert_eq!(code, 0, "{stderr}");
    let v: Value = serde_json::from_str(&stdout).expect("one JSON object");
    assert_eq!(v["selection"]["kind"], "selection");
    assert_eq!(v["opening"]["kind"], "opening");
    assert_eq!(v["opening"]["openings"], 1);
    assert_eq!(v["audit"]["chain"]["verified"], true);
    assert!(
        fx.path("demo/ledger/holdfast.sqlite").exists(),
        "the demo's ledger is in its folder"
    );
    // A second demo does not open the sealed partition again.
    let (code, stdout, stderr) = run(fx.cmd().args(["demo", "--dir", "demo", "--json"]));
    assert_eq!(code, 0, "{stderr}");
    let v: Value = serde_json::from_str(&stdout).expect("one JSON object");
    assert!(v["opening"].is_null());
    let parts = v["audit"]["partitions"].as_array().expect("partitions");
    assert_eq!(parts[0]["openings"].as_array().map(Vec::len), Some(1));
}
