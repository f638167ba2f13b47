//! Bad data and impossible resampling get a clear error (file, line or
//! column, what to do) and exit code 2, and nothing else happens. Every
//! case starts from the penguins file and breaks one thing.

use crate::support::{Fixture, PENGUINS_PLAN, run};

fn penguins() -> String {
    std::fs::read_to_string(crate::support::repo_file("tests/data/penguins.csv")).expect("penguins")
}

/// Replace line `n` (1-based, the header is line 1).
fn with_line(text: &str, n: usize, f: impl Fn(&str) -> String) -> String {
    text.lines()
        .enumerate()
        .map(|(i, l)| if i + 1 == n { f(l) } else { l.to_string() })
        .collect::<Vec<_>>()
        .join("\n")
        + "\n"
}

fn expect(fx: &Fixture, data: &str, plan: &str, fragments: &[&str]) {
    fx.write("bad.csv", data);
    let plan = fx.write("plan.toml", &plan.replace("penguins.csv", "bad.csv"));
    let (code, stdout, stderr) = run(fx.cmd().arg("check").arg(&plan));
    assert_eq!(code, 2, "exit code for {fragments:?}; stderr: {stderr}");
    assert!(stdout.is_empty(), "{stdout}");
    for f in fragments {
        assert!(stderr.contains(f), "wanted {f:?} in:\n{stderr}");
    }
    assert!(!fx.path("ledger.sqlite").exists(), "check writes no ledger");
}

#[test]
fn data_file_mistakes() {
    let fx = Fixture::new();
    let good = penguins();
    let adelie: String = good
        .lines()
        .filter(|l| l.starts_with("species") || l.starts_with("Adelie"))
        .collect::<Vec<_>>()
        .join("\n")
        + "\n";
    let cases: Vec<(String, String, Vec<&str>)> = vec![
        (
            String::new(),
            PENGUINS_PLAN.into(),
            vec!["bad.csv", "empty"],
        ),
        (
            good.replacen("sex,year", "island,year", 1),
            PENGUINS_PLAN.into(),
            vec!["bad.csv", "island"],
        ),
        (
            with_line(&good, 10, |l| {
                l.rsplit_once(',')
                    .map(|(a, _)| a.to_string())
                    .unwrap_or_default()
            }),
            PENGUINS_PLAN.into(),
            vec!["bad.csv", "line 10"],
        ),
        (
            with_line(&good, 7, |l| l.replacen("39.3", "inf", 1)),
            PENGUINS_PLAN.into(),
            vec!["bad.csv", "line 7", "inf"],
        ),
        (
            good.clone(),
            PENGUINS_PLAN.replace(
                "features = [\"bill_*\", \"flipper_length_mm\", \"body_mass_g\"]",
                "features = [\"bill_*\", \"sex\"]",
            ),
            vec!["bad.csv", "sex", "categorical"],
        ),
        (
            good.clone(),
            PENGUINS_PLAN.replace("impute = \"mean\"", "impute = \"none\""),
            vec!["bad.csv", "missing", "impute"],
        ),
        (adelie, PENGUINS_PLAN.into(), vec!["bad.csv", "Adelie"]),
    ];
    for (data, plan, fragments) in &cases {
        expect(&fx, data, plan, fragments);
    }
}

#[test]
fn resampling_that_cannot_be_done() {
    let fx = Fixture::new();
    let good = penguins();
    let grouped = PENGUINS_PLAN.replace(
        "target = \"species\"",
        "target = \"species\"\ngroup = \"island\"",
    );
    expect(
        &fx,
        &good,
        &grouped,
        &["plan.toml:", "[resample]", "5 folds but only", "groups"],
    );
    expect(
        &fx,
        &good,
        &PENGUINS_PLAN.replace("folds = 5", "folds = 300"),
        &["[resample]", "300 folds but only"],
    );
    // Keep three Chinstrap rows: fewer than the five stratified folds.
    let mut kept = 0;
    let few: String = good
        .lines()
        .filter(|l| {
            if l.starts_with("Chinstrap") {
                kept += 1;
                kept <= 3
            } else {
                true
            }
        })
        .collect::<Vec<_>>()
        .join("\n")
        + "\n";
    let plan = PENGUINS_PLAN.replace("[resample]", "[seal]\nstratify = false\n\n[resample]");
    expect(
        &fx,
        &few,
        &plan,
        &[
            "class `Chinstrap`",
            "rows in the development partition",
            "fewer than the 5 folds",
        ],
    );
}

#[test]
fn the_job_sheet_of_a_fixed_plan_is_pinned() {
    // A stability pin (not an outside value): the job sheet's bytes for this
    // plan and the committed penguins file. If it changes, every recorded job
    // id changes too; bump the job sheet FORMAT and say why in the commit.
    let fx = Fixture::new();
    let plan = fx.write("plan.toml", PENGUINS_PLAN);
    let (code, _, stderr) = run(fx
        .cmd()
        .arg("compile")
        .arg(&plan)
        .arg("--out")
        .arg(fx.path("sheet.json")));
    assert_eq!(code, 0, "{stderr}");
    let bytes = std::fs::read(fx.path("sheet.json")).expect("sheet");
    let hash = blake3::hash(&bytes).to_hex().to_string();
    assert_eq!(
        hash,
        "b4e60a5381f877e85d93979854533cdffb0330696abf095524965ea8044706e4"
    );
}
