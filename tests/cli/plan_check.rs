//! `check` and `compile`: bad input gets a clear error and exit code 2, and
//! the plan hash and job sheet are deterministic.

use crate::support::{Fixture, PENGUINS_PLAN, run};

/// Check a plan and expect a user error whose message contains every fragment.
fn expect_user_error(fx: &Fixture, plan_text: &str, fragments: &[&str]) {
    let plan = fx.write("plan.toml", plan_text);
    let (code, stdout, stderr) = run(fx.cmd().arg("check").arg(&plan));
    assert_eq!(code, 2, "exit code; stderr: {stderr}");
    assert!(stdout.is_empty(), "nothing on stdout on error: {stdout}");
    for f in fragments {
        assert!(stderr.contains(f), "wanted {f:?} in stderr:\n{stderr}");
    }
}

#[test]
fn a_good_plan_checks() {
    let fx = Fixture::new();
    let plan = fx.write("plan.toml", PENGUINS_PLAN);
    let (code, stdout, stderr) = run(fx.cmd().arg("check").arg(&plan));
    assert_eq!(code, 0, "{stderr}");
    assert!(stdout.contains("plan hash"), "{stdout}");
    // 344 rows in the penguins file (its provenance README), 25% sealed by default.
    assert!(stdout.contains("344 rows"), "{stdout}");
}

#[test]
fn check_json_has_the_counts() {
    let fx = Fixture::new();
    let plan = fx.write("plan.toml", PENGUINS_PLAN);
    let (code, stdout, stderr) = run(fx.cmd().args(["check", "--json"]).arg(&plan));
    assert_eq!(code, 0, "{stderr}");
    let v: serde_json::Value = serde_json::from_str(&stdout).expect("one JSON object");
    assert_eq!(v["data"]["rows"], 344);
    assert_eq!(
        v["sealed_rows"].as_u64().unwrap() + v["development_rows"].as_u64().unwrap(),
        344
    );
    assert_eq!(v["splits"], 5);
    assert_eq!(v["candidates"], 3);
    // 3 candidates + the reference baseline, on 5 splits.
    assert_eq!(v["jobs"], 20);
}

#[test]
fn a_missing_plan_file_is_named() {
    let fx = Fixture::new();
    let (code, _, stderr) = run(fx.cmd().args(["check", "nowhere.toml"]));
    assert_eq!(code, 2);
    assert!(stderr.contains("nowhere.toml"), "{stderr}");
}

#[test]
fn plan_mistakes_name_the_place_and_what_to_do() {
    let fx = Fixture::new();
    let cases: &[(&str, &str, &[&str])] = &[
        (
            "seed = 11",
            "sede = 11",
            &[
                "plan.toml:4:1",
                "unknown key `sede`",
                "did you mean `seed`?",
            ],
        ),
        (
            "seed = 11",
            "seed = 1.5",
            &["plan.toml:4:8", "whole number"],
        ),
        (
            "folds = 5",
            "folds = \"5\"",
            &["[resample] folds must be a whole number"],
        ),
        (
            "k = [1, 5, 9]",
            "k = { from = 1, to = 9, steps = 0 }",
            &["steps must be at least 1"],
        ),
        (
            "[resample]",
            "[seal]\nfraction = 1.25\n\n[resample]",
            &["[seal] fraction must be a fraction between 0 and 1"],
        ),
        (
            "target = \"species\"",
            "target = \"specie\"",
            &["target column `specie`", "did you mean `species`?"],
        ),
        (
            "target = \"species\"",
            "target = \"species\"\ngroup = \"islands\"",
            &["group column `islands`", "did you mean `island`?"],
        ),
        (
            "target = \"species\"",
            "target = \"species\"\norder = \"yr\"",
            &["order column `yr`"],
        ),
    ];
    for (from, to, fragments) in cases {
        assert!(PENGUINS_PLAN.contains(from), "fixture has {from}");
        expect_user_error(&fx, &PENGUINS_PLAN.replace(from, to), fragments);
    }
}

#[test]
fn an_empty_candidate_list_is_an_error() {
    let fx = Fixture::new();
    let text = PENGUINS_PLAN
        .split("[[candidates]]")
        .next()
        .unwrap_or_default();
    expect_user_error(&fx, text, &["no [[candidates]]"]);
}

#[test]
fn a_missing_data_file_shows_the_resolved_path() {
    let fx = Fixture::new();
    let text = PENGUINS_PLAN.replace("path = \"penguins.csv\"", "path = \"data/nope.csv\"");
    let plan = fx.write("sub/plan.toml", &text);
    let (code, _, stderr) = run(fx.cmd().arg("check").arg(&plan));
    assert_eq!(code, 2, "{stderr}");
    let resolved = fx.path("sub").join("data/nope.csv");
    assert!(
        stderr.contains(&resolved.display().to_string()),
        "wanted {} in {stderr}",
        resolved.display()
    );
}

fn plan_hash(fx: &Fixture, text: &str) -> String {
    let plan = fx.write("plan.toml", text);
    let (code, stdout, stderr) = run(fx.cmd().args(["check", "--json"]).arg(&plan));
    assert_eq!(code, 0, "{stderr}");
    let v: serde_json::Value = serde_json::from_str(&stdout).expect("json");
    v["plan_hash"].as_str().unwrap_or_default().to_string()
}

#[test]
fn the_plan_hash_ignores_layout_and_follows_meaning() {
    let fx = Fixture::new();
    let base = plan_hash(&fx, PENGUINS_PLAN);
    // Comments, whitespace, key order and table order do not matter.
    let relaid = r#"
# a comment
[[candidates]]
k = [1,5,9]      # same values
learner = "nearest-neighbors"

[resample]
folds=5
[prep]
impute = "mean"
[data]
features = ["bill_*", "flipper_length_mm", "body_mass_g"]
target = "species"
path = "penguins.csv"
[plan]
seed = 11
name = "penguins"
"#;
    assert_eq!(plan_hash(&fx, relaid), base);
    // Writing a default out does not change the meaning either.
    assert_eq!(
        plan_hash(
            &fx,
            &PENGUINS_PLAN.replace("folds = 5", "folds = 5\nrepeats = 1")
        ),
        base
    );
    // Any setting change does.
    for (from, to) in [
        ("seed = 11", "seed = 12"),
        ("k = [1, 5, 9]", "k = [1, 5, 7]"),
        ("folds = 5", "folds = 6"),
    ] {
        assert_ne!(
            plan_hash(&fx, &PENGUINS_PLAN.replace(from, to)),
            base,
            "{to}"
        );
    }
    // One changed byte of data does: 39.1 -> 39.2 in the first data row.
    let data = std::fs::read_to_string(fx.path("penguins.csv")).expect("data");
    std::fs::write(fx.path("penguins.csv"), data.replacen("39.1", "39.2", 1)).expect("write");
    assert_ne!(plan_hash(&fx, PENGUINS_PLAN), base);
}

fn compile(fx: &Fixture, text: &str, out: &str) -> Vec<u8> {
    let plan = fx.write("plan.toml", text);
    let (code, _, stderr) = run(fx
        .cmd()
        .arg("compile")
        .arg(&plan)
        .arg("--out")
        .arg(fx.path(out)));
    assert_eq!(code, 0, "{stderr}");
    std::fs::read(fx.path(out)).expect("job sheet")
}

#[test]
fn compile_is_byte_identical_and_candidates_never_move_folds() {
    let fx = Fixture::new();
    let a = compile(&fx, PENGUINS_PLAN, "a.json");
    let b = compile(&fx, PENGUINS_PLAN, "b.json");
    assert_eq!(a, b);
    let more = format!("{PENGUINS_PLAN}\n[[candidates]]\nlearner = \"nearest-centroid\"\n");
    let c = compile(&fx, &more, "c.json");
    let parse = |bytes: &[u8]| serde_json::from_slice::<serde_json::Value>(bytes).expect("json");
    let (va, vc) = (parse(&a), parse(&c));
    assert_eq!(va["splits"], vc["splits"]);
    assert_eq!(va["sealed"], vc["sealed"]);
    assert_eq!(vc["candidates"].as_array().map(Vec::len), Some(5));
}

#[test]
fn the_job_sheet_has_the_documented_keys() {
    let fx = Fixture::new();
    let sheet: serde_json::Value =
        serde_json::from_slice(&compile(&fx, PENGUINS_PLAN, "s.json")).expect("json");
    for key in [
        "plan_hash",
        "data",
        "sealed",
        "development",
        "splits",
        "candidates",
        "jobs",
    ] {
        assert!(sheet.get(key).is_some(), "missing {key}");
    }
    assert_eq!(sheet["data"]["rows"], 344);
    assert!(
        sheet["data"]["fingerprint"]
            .as_str()
            .is_some_and(|f| f.len() == 64)
    );
    let split = &sheet["splits"][0];
    for key in ["id", "train", "validation", "repeat", "fold"] {
        assert!(split.get(key).is_some(), "split missing {key}");
    }
    let job = &sheet["jobs"][0];
    for key in ["id", "split", "candidate"] {
        assert!(job.get(key).is_some(), "job missing {key}");
    }
    // Every development row is in exactly one validation part (k-fold, one repeat: common practice).
    let mut seen: Vec<u64> = sheet["splits"]
        .as_array()
        .into_iter()
        .flatten()
        .flat_map(|s| s["validation"].as_array().cloned().unwrap_or_default())
        .filter_map(|v| v.as_u64())
        .collect();
    seen.sort();
    let dev: Vec<u64> = sheet["development"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|v| v.as_u64())
        .collect();
    assert_eq!(seen, dev);
}

#[test]
fn help_lists_every_command() {
    let fx = Fixture::new();
    let (code, stdout, _) = run(fx.cmd().arg("--help"));
    assert_eq!(code, 0);
    let commands = [
        "check",
        "compile",
        "run",
        "unseal",
        "audit",
        "verify",
        "head",
        "replay",
        "log",
        "show",
        "report",
        "bench-data",
        "demo",
    ];
    for c in commands {
        // One line each: the command name, then its description on the same line.
        let line = stdout
            .lines()
            .find(|l| l.trim_start().starts_with(&format!("{c} ")))
            .unwrap_or_default();
        assert!(
            line.split_whitespace().count() > 2,
            "{c} has a one-line description in help:\n{stdout}"
        );
    }
}
