//! `run`, `unseal`, `audit`, `verify`, `replay`, `show`: the ledger counts
//! every look at the sealed partition and notices tampering.

use std::collections::BTreeMap;

use serde_json::Value;

use crate::support::{Fixture, PENGUINS_PLAN, run};

/// The shared penguins plan with a second learner and accuracy as the
/// metric, run quickly.
pub fn plan() -> String {
    let head = PENGUINS_PLAN
        .replace(
            "name = \"penguins\"\nseed = 11",
            "name = \"penguins-ledger\"\nseed = 5",
        )
        .replace("k = [1, 5, 9]", "k = [1, 3, 7]");
    assert!(head.contains("seed = 5") && head.contains("k = [1, 3, 7]"));
    head + "\n[[candidates]]\nlearner = \"tree\"\ndepth = [1, 3]\n\n[select]\nmetric = \"accuracy\"\n"
}

fn json(text: &str) -> Value {
    serde_json::from_str(text).unwrap_or_else(|e| panic!("not JSON ({e}): {text}"))
}

fn ok(fx: &Fixture, args: &[&str]) -> String {
    let (code, stdout, stderr) = run(fx.cmd().args(args));
    assert_eq!(code, 0, "holdfast {args:?}: {stderr}");
    stdout
}

#[test]
fn run_records_a_selection_that_show_prints_the_same() {
    let fx = Fixture::new();
    fx.write("plan.toml", &plan());
    let ran = json(&ok(&fx, &["run", "plan.toml", "--json"]));
    assert_eq!(ran["kind"], "selection");
    assert!(ran["result_hash"].as_str().is_some_and(|h| h.len() == 64));
    let jobs = ran["jobs"].as_array().expect("jobs");
    // 5 folds x (3 + 2 candidates + the reference baseline).
    assert_eq!(jobs.len(), 30);
    for j in jobs {
        for key in ["id", "split", "candidate", "scores"] {
            assert!(j.get(key).is_some(), "job lacks {key}: {j}");
        }
        assert!(
            j["scores"]["accuracy"]
                .as_f64()
                .is_some_and(|a| (0.0..=1.0).contains(&a))
        );
    }
    let chosen = ran["chosen"].as_str().expect("chosen");
    assert!(
        ran["candidates"]
            .as_array()
            .expect("candidates")
            .iter()
            .any(|c| c["id"] == chosen)
    );
    let shown = json(&ok(&fx, &["show", "latest", "--json"]));
    assert_eq!(shown, ran);
    // The comparisons the table marks are in the JSON too (not hashed).
    let comparisons = ran["analysis"]["comparisons"]
        .as_array()
        .expect("comparisons");
    assert_eq!(comparisons.len(), 5, "4 other candidates and the baseline");
    let baseline = comparisons
        .iter()
        .find(|c| c["reference"] == true)
        .expect("baseline compared");
    assert_eq!(
        baseline["distinguishable"], true,
        "the chosen candidate beats the baseline: {baseline}"
    );
    let table = ok(&fx, &["run", "plan.toml"]);
    assert!(
        table.contains("30 reused from the ledger, 0 fresh"),
        "{table}"
    );
    assert!(table.contains("baseline"), "{table}");
    assert!(table.contains("<- chosen"), "{table}");
    assert!(table.contains("worse than chosen"), "{table}");
    assert!(table.contains("is optimistic"), "{table}");
}

#[test]
fn sealed_rows_never_reach_a_learner() {
    // Poison every sealed row's features (not its class, so the seal and the
    // folds stay put): if any sealed row reached a learner or a fitted
    // transform, some validation score would move.
    let fx = Fixture::new();
    fx.write("plan.toml", &plan());
    let clean = json(&ok(&fx, &["run", "plan.toml", "--json"]));
    let sheet_path = fx.path("sheet.json");
    ok(
        &fx,
        &[
            "compile",
            "plan.toml",
            "--out",
            sheet_path.to_str().unwrap_or_default(),
        ],
    );
    let sheet = json(&std::fs::read_to_string(&sheet_path).expect("sheet"));
    let sealed: Vec<usize> = sheet["sealed"]
        .as_array()
        .expect("sealed")
        .iter()
        .filter_map(|v| v.as_u64())
        .map(|v| v as usize)
        .collect();
    let text = std::fs::read_to_string(fx.path("penguins.csv")).expect("data");
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    for &row in &sealed {
        let mut cells: Vec<String> = lines[row + 1].split(',').map(str::to_string).collect();
        for c in &mut cells[2..6] {
            *c = "99999".into();
        }
        lines[row + 1] = cells.join(",");
    }
    std::fs::write(fx.path("penguins.csv"), lines.join("\n") + "\n").expect("poison");
    let poisoned = json(&ok(&fx, &["run", "plan.toml", "--json"]));
    assert_ne!(
        clean["data_file"], poisoned["data_file"],
        "the data file did change"
    );
    let scores = |v: &Value| -> Vec<Value> {
        v["jobs"]
            .as_array()
            .expect("jobs")
            .iter()
            .map(|j| j["scores"].clone())
            .collect()
    };
    assert_eq!(scores(&clean), scores(&poisoned));
}

#[test]
fn openings_are_counted_and_refused_without_again() {
    let fx = Fixture::new();
    fx.write("plan.toml", &plan());
    let (code, _, stderr) = run(fx
        .cmd()
        .args(["unseal", "plan.toml", "--reason", "too early"]));
    assert_eq!(code, 2, "unseal before run: {stderr}");
    assert!(stderr.contains("holdfast run"), "{stderr}");
    ok(&fx, &["run", "plan.toml"]);
    let first = json(&ok(
        &fx,
        &["unseal", "plan.toml", "--reason", "final report", "--json"],
    ));
    assert_eq!(first["openings"], 1);
    assert_eq!(first["interval"]["method"], "wilson");
    let n = first["n"].as_u64().expect("n");
    let score = first["score"].as_f64().expect("score");
    let (lo, hi) = (
        first["interval"]["low"].as_f64().unwrap_or(2.0),
        first["interval"]["high"].as_f64().unwrap_or(-1.0),
    );
    assert!(lo <= score && score <= hi, "{lo} {score} {hi}");
    assert!(n > 0);
    let (code, _, stderr) = run(fx.cmd().args(["unseal", "plan.toml", "--reason", "again?"]));
    assert_eq!(
        code, 2,
        "a second opening without --again is refused: {stderr}"
    );
    assert!(
        stderr.contains("--again") && stderr.contains("1 time"),
        "{stderr}"
    );
    let second = json(&ok(
        &fx,
        &[
            "unseal",
            "plan.toml",
            "--again",
            "--reason",
            "reviewer asked",
            "--json",
        ],
    ));
    assert_eq!(second["openings"], 2);
    let shown = json(&ok(&fx, &["show", "latest", "--json"]));
    assert_eq!(shown, second, "unseal --json prints what show --json shows");
    // Bonferroni for m = 2 openings: level 1 - 0.05/2 (METHODS.md), wider than the 95% interval.
    assert_eq!(second["bonferroni"]["level"].as_f64(), Some(0.975));
    assert!(second["bonferroni"]["low"].as_f64() <= second["interval"]["low"].as_f64());
    let third = ok(
        &fx,
        &["unseal", "plan.toml", "--again", "--reason", "third look"],
    );
    assert!(third.contains("opened 3 times"), "{third}");
    let audit = json(&ok(&fx, &["audit", "plan.toml", "--json"]));
    assert_eq!(audit["chain"]["verified"], true);
    let parts = audit["partitions"].as_array().expect("partitions");
    assert_eq!(parts.len(), 1);
    assert_eq!(parts[0]["openings"].as_array().map(Vec::len), Some(3));
    let reasons: Vec<&str> = parts[0]["openings"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|o| o["reason"].as_str())
        .collect();
    assert_eq!(reasons, ["final report", "reviewer asked", "third look"]);
    // One selection of 5 candidates (3 + 2; the baseline is not counted) ran before every opening.
    let compared: Vec<u64> = parts[0]["openings"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|o| o["candidates_compared_before"].as_u64())
        .collect();
    assert_eq!(compared, [5, 5, 5]);
    assert_eq!(parts[0]["selections"].as_array().map(Vec::len), Some(1));
    // Every sealed row was in all three openings.
    assert_eq!(parts[0]["rows_by_openings"], serde_json::json!({ "3": n }));
    let text = ok(&fx, &["audit", "plan.toml"]);
    assert!(
        text.lines()
            .next()
            .is_some_and(|l| l.starts_with("chain verified")),
        "{text}"
    );
}

/// Rows of the CSV (without the header) at the given indices.
fn rows_at(text: &str, rows: &[u64]) -> Vec<String> {
    let lines: Vec<&str> = text.lines().skip(1).collect();
    rows.iter()
        .map(|&r| lines[r as usize].to_string())
        .collect()
}

fn sealed_rows(fx: &Fixture, plan: &str) -> Vec<u64> {
    let out = fx.path("s.json");
    ok(
        fx,
        &["compile", plan, "--out", out.to_str().unwrap_or_default()],
    );
    let sheet = json(&std::fs::read_to_string(out).expect("sheet"));
    sheet["sealed"]
        .as_array()
        .expect("sealed")
        .iter()
        .filter_map(Value::as_u64)
        .collect()
}

#[test]
fn reshuffled_data_and_a_new_seed_warn_with_the_exact_overlap() {
    let fx = Fixture::new();
    fx.write("plan.toml", &plan());
    ok(&fx, &["run", "plan.toml"]);
    ok(&fx, &["unseal", "plan.toml", "--reason", "first look"]);
    let original = std::fs::read_to_string(fx.path("penguins.csv")).expect("data");
    let opened = rows_at(&original, &sealed_rows(&fx, "plan.toml"));
    // Reverse the data rows (a re-shuffle) and seal with a new seed.
    let mut lines: Vec<&str> = original.lines().collect();
    let header = lines.remove(0);
    lines.reverse();
    fx.write("shuffled.csv", &format!("{header}\n{}\n", lines.join("\n")));
    let plan2 = plan()
        .replace("penguins.csv", "shuffled.csv")
        .replace("seed = 5", "seed = 6");
    fx.write("plan2.toml", &plan2);
    let now_sealed = rows_at(
        &std::fs::read_to_string(fx.path("shuffled.csv")).expect("data"),
        &sealed_rows(&fx, "plan2.toml"),
    );
    // Expected overlap, counted as a multiset of row contents (rows are matched by content).
    let mut seen: BTreeMap<&str, usize> = BTreeMap::new();
    for r in &opened {
        *seen.entry(r.as_str()).or_insert(0) += 1;
    }
    let expected = now_sealed
        .iter()
        .filter(|r| seen.contains_key(r.as_str()))
        .count();
    assert!(expected > 0, "the test needs some overlap");
    let want = format!("{expected} of the {} sealed rows", now_sealed.len());
    let (code, _, stderr) = run(fx.cmd().args(["check", "plan2.toml"]));
    assert_eq!(code, 0, "{stderr}");
    assert!(
        stderr.contains(&want),
        "check warns: wanted {want:?} in {stderr}"
    );
    let (code, _, stderr) = run(fx.cmd().args(["run", "plan2.toml"]));
    assert_eq!(code, 0, "{stderr}");
    assert!(stderr.contains(&want), "wanted {want:?} in {stderr}");
    let (code, stdout, stderr) =
        run(fx
            .cmd()
            .args(["unseal", "plan2.toml", "--reason", "new split", "--json"]));
    assert_eq!(code, 0, "{stderr}");
    assert!(stderr.contains(&want), "unseal warns too: {stderr}");
    assert_eq!(
        json(&stdout)["already_seen_rows"].as_u64(),
        Some(expected as u64)
    );
}

#[test]
fn replay_reproduces_selections_and_openings_and_refuses_changed_data() {
    let fx = Fixture::new();
    fx.write("plan.toml", &plan());
    ok(&fx, &["run", "plan.toml"]);
    ok(&fx, &["unseal", "plan.toml", "--reason", "look"]);
    let sel = ok(&fx, &["replay", "1"]);
    assert!(sel.lines().any(|l| l == "identical"), "{sel}");
    let opening = ok(&fx, &["replay", "2"]);
    assert!(opening.lines().any(|l| l == "identical"), "{opening}");
    assert!(opening.contains("not a new opening"), "{opening}");
    // The JSON twin names the version that recorded and the one that replayed.
    let report = json(&ok(&fx, &["replay", "1", "--json"]));
    assert_eq!(report["identical"], true);
    assert_eq!(report["recorded_by"], env!("CARGO_PKG_VERSION"));
    assert_eq!(report["replayed_by"], env!("CARGO_PKG_VERSION"));
    let audit = json(&ok(&fx, &["audit", "--json"]));
    assert_eq!(
        audit["partitions"][0]["openings"].as_array().map(Vec::len),
        Some(1),
        "replay is not counted"
    );
    let data = std::fs::read_to_string(fx.path("penguins.csv")).expect("data");
    std::fs::write(fx.path("penguins.csv"), data.replacen("39.1", "39.2", 1)).expect("edit");
    let (code, _, stderr) = run(fx.cmd().args(["replay", "1"]));
    assert_eq!(code, 2, "{stderr}");
    assert!(stderr.contains("fingerprint"), "{stderr}");
}

#[test]
fn bad_ledgers_get_a_clear_message_and_stay_unchanged() {
    let fx = Fixture::new();
    fx.write("plan.toml", &plan());
    // Not SQLite.
    let fake = fx.write("fake.sqlite", "species,island\nAdelie,Dream\n");
    let before = std::fs::read(&fake).expect("read");
    let (code, _, stderr) = run(fx
        .cmd()
        .args(["run", "plan.toml", "--ledger", "fake.sqlite"]));
    assert_eq!(code, 2, "{stderr}");
    assert!(stderr.contains("fake.sqlite"), "{stderr}");
    assert_eq!(std::fs::read(&fake).expect("read"), before);
    // A newer schema.
    ok(&fx, &["run", "plan.toml", "--ledger", "newer.sqlite"]);
    {
        let conn = rusqlite::Connection::open(fx.path("newer.sqlite")).expect("open");
        conn.pragma_update(None, "user_version", 99)
            .expect("bump version");
    }
    let before = std::fs::read(fx.path("newer.sqlite")).expect("read");
    let (code, _, stderr) = run(fx.cmd().args(["log", "--ledger", "newer.sqlite"]));
    assert_eq!(code, 2, "{stderr}");
    assert!(stderr.contains("newer"), "{stderr}");
    assert_eq!(
        std::fs::read(fx.path("newer.sqlite")).expect("read"),
        before
    );
    // A location nobody can write (even root cannot create files in /proc).
    let (code, _, stderr) = run(fx.cmd().args([
        "run",
        "plan.toml",
        "--ledger",
        "/proc/holdfast/ledger.sqlite",
    ]));
    assert_eq!(code, 2, "{stderr}");
    assert!(stderr.contains("/proc/holdfast"), "{stderr}");
    // An unknown entry.
    ok(&fx, &["run", "plan.toml"]);
    let before = std::fs::read(fx.path("ledger.sqlite")).expect("read");
    for spec in ["42", "ffffffff"] {
        let (code, _, stderr) = run(fx.cmd().args(["show", spec]));
        assert_eq!(code, 2, "{spec}: {stderr}");
        assert!(stderr.contains(spec), "{stderr}");
    }
    assert_eq!(
        std::fs::read(fx.path("ledger.sqlite")).expect("read"),
        before
    );
}

#[test]
fn two_concurrent_runs_both_land_and_the_chain_verifies() {
    let fx = Fixture::new();
    fx.write("plan.toml", &plan());
    fx.write("plan2.toml", &plan().replace("seed = 5", "seed = 9"));
    let spawn = |plan: &str| {
        std::process::Command::new(assert_cmd::cargo::cargo_bin("holdfast"))
            .current_dir(fx.dir.path())
            .env("HOLDFAST_LEDGER", fx.path("ledger.sqlite"))
            .args(["run", plan])
            .stdout(std::process::Stdio::null())
            .stderr(std::process::Stdio::piped())
            .spawn()
            .expect("spawn")
    };
    let (a, b) = (spawn("plan.toml"), spawn("plan2.toml"));
    for child in [a, b] {
        let out = child.wait_with_output().expect("wait");
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
    }
    let log = json(&ok(&fx, &["log", "--json"]));
    assert_eq!(log.as_array().map(Vec::len), Some(2));
    ok(&fx, &["verify"]);
}

#[test]
fn head_then_verify_head_proves_history() {
    let fx = Fixture::new();
    fx.write("plan.toml", PENGUINS_PLAN);
    ok(&fx, &["run", "plan.toml"]);
    let head = ok(&fx, &["head"]).trim().to_string();
    assert_eq!(head.len(), 64);
    ok(&fx, &["run", "plan.toml"]);
    let out = ok(&fx, &["verify", "--head", &head]);
    assert!(out.contains("nothing up to it was rewritten"), "{out}");
    let (code, _, _) = run(fx.cmd().args(["verify", "--head", &"0".repeat(64)]));
    assert_eq!(code, 3);
}
