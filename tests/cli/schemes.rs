//! Resampling schemes through the binary: the job sheet records them as
//! explicit row sets, nested plans list outer and inner splits, `check`
//! warns about plans likely to mislead, and impossible schemes are exit 2.

use serde_json::Value;

use crate::support::{Fixture, PENGUINS_PLAN, run};

fn with_resample(table: &str) -> String {
    let start = PENGUINS_PLAN.find("[resample]").unwrap_or(0);
    let end = PENGUINS_PLAN
        .find("[[candidates]]")
        .unwrap_or(PENGUINS_PLAN.len());
    format!(
        "{}{table}\n\n{}",
        &PENGUINS_PLAN[..start],
        &PENGUINS_PLAN[end..]
    )
}

fn sheet(fx: &Fixture, plan: &str) -> Value {
    fx.write("plan.toml", plan);
    let (code, _, stderr) = run(fx
        .cmd()
        .args(["compile", "plan.toml", "--out", "sheet.json"]));
    assert_eq!(code, 0, "{stderr}");
    serde_json::from_str(&std::fs::read_to_string(fx.path("sheet.json")).expect("sheet"))
        .expect("json")
}

fn rows(v: &Value) -> Vec<u64> {
    v.as_array()
        .into_iter()
        .flatten()
        .filter_map(Value::as_u64)
        .collect()
}

#[test]
fn nested_sheets_list_outer_and_inner_splits_inside_their_parents() {
    let fx = Fixture::new();
    let plan = with_resample(
        "[resample]\nscheme = \"nested\"\n\n[resample.outer]\nscheme = \"k-fold\"\nfolds = 4\n\n[resample.inner]\nscheme = \"k-fold\"\nfolds = 3",
    );
    let s = sheet(&fx, &plan);
    let splits = s["splits"].as_array().expect("splits");
    let outer: Vec<&Value> = splits.iter().filter(|x| x["role"] == "outer").collect();
    let nested_inner: Vec<&Value> = splits
        .iter()
        .filter(|x| x["role"] == "inner" && x.get("parent").is_some())
        .collect();
    assert_eq!(outer.len(), 4);
    assert_eq!(nested_inner.len(), 12);
    for inner in &nested_inner {
        let parent = outer
            .iter()
            .find(|o| o["id"] == inner["parent"])
            .expect("parent is an outer split");
        let parent_train = rows(&parent["train"]);
        for r in rows(&inner["train"])
            .into_iter()
            .chain(rows(&inner["validation"]))
        {
            assert!(
                parent_train.binary_search(&r).is_ok(),
                "inner row {r} outside its outer training part"
            );
        }
    }
    // 4 outer x 3 inner x 4 candidates (3 + baseline) + 4 refits + 3 x 4 for the final choice.
    let (code, stdout, stderr) = run(fx.cmd().args(["check", "plan.toml", "--json"]));
    assert_eq!(code, 0, "{stderr}");
    let check: Value = serde_json::from_str(&stdout).expect("json");
    assert_eq!(check["fits"], 4 * 3 * 4 + 4 + 3 * 4);
    assert!(
        check["fits_detail"]
            .as_str()
            .is_some_and(|d| d.contains("4 refits"))
    );
    let (code, stdout, stderr) = run(fx.cmd().args(["run", "plan.toml", "--json"]));
    assert_eq!(code, 0, "{stderr}");
    let sel: Value = serde_json::from_str(&stdout).expect("json");
    assert_eq!(sel["nested"]["outer"].as_array().map(Vec::len), Some(4));
    assert!(
        sel["nested"]["mean"]
            .as_f64()
            .is_some_and(|m| (0.0..=1.0).contains(&m))
    );
}

#[test]
fn every_scheme_compiles_to_explicit_row_sets() {
    let fx = Fixture::new();
    let plain = PENGUINS_PLAN.replace(
        "target = \"species\"",
        "target = \"species\"\ngroup = \"island\"\norder = \"year\"",
    );
    let cases = [
        (
            "[resample]\nscheme = \"monte-carlo\"\nsplits = 7\ntrain = 100\nvalidation = 50",
            7,
        ),
        ("[resample]\nscheme = \"leave-one-group-out\"", 2),
        ("[resample]\nscheme = \"bootstrap\"\nsplits = 6", 6),
    ];
    for (table, want) in cases {
        // Leave-one-group-out needs the group column; the others run on plain rows.
        let text = if table.contains("group-out") {
            plain.clone()
        } else {
            PENGUINS_PLAN.to_string()
        };
        let plan = {
            let start = text.find("[resample]").unwrap_or(0);
            let end = text.find("[[candidates]]").unwrap_or(text.len());
            format!("{}{table}\n\n{}", &text[..start], &text[end..])
        };
        let s = sheet(&fx, &plan);
        let splits = s["splits"].as_array().expect("splits");
        assert_eq!(splits.len(), want, "{table}");
        for sp in splits {
            let (t, v) = (rows(&sp["train"]), rows(&sp["validation"]));
            assert!(!v.is_empty());
            if !table.contains("bootstrap") {
                assert!(
                    v.iter().all(|r| t.binary_search(r).is_err()),
                    "{table}: a row on both sides"
                );
            }
            if table.contains("monte-carlo") {
                assert_eq!((t.len(), v.len()), (100, 50));
            }
        }
    }
}

fn expect_user_error(fx: &Fixture, plan: &str, fragments: &[&str]) {
    fx.write("plan.toml", plan);
    let (code, _, stderr) = run(fx.cmd().args(["check", "plan.toml"]));
    assert_eq!(code, 2, "{fragments:?}: {stderr}");
    for f in fragments {
        assert!(stderr.contains(f), "wanted {f:?} in {stderr}");
    }
}

#[test]
fn impossible_schemes_are_user_errors() {
    let fx = Fixture::new();
    expect_user_error(
        &fx,
        &with_resample(
            "[resample]\nscheme = \"forward-chaining\"\nmin-train = 20\nvalidation = 10",
        ),
        &["order"],
    );
    expect_user_error(
        &fx,
        &with_resample("[resample]\nscheme = \"leave-one-group-out\""),
        &["group"],
    );
    expect_user_error(
        &fx,
        &with_resample("[resample]\nscheme = \"monte-carlo\"\ntrain = 200\nvalidation = 100"),
        &["[resample]", "200", "100"],
    );
    let ordered = PENGUINS_PLAN.replace(
        "target = \"species\"",
        "target = \"species\"\norder = \"year\"",
    );
    let fc = {
        let start = ordered.find("[resample]").unwrap_or(0);
        let end = ordered.find("[[candidates]]").unwrap_or(ordered.len());
        format!(
            "{}[resample]\nscheme = \"forward-chaining\"\nmin-train = 1\nvalidation = 1\ngap = 5\n\n{}",
            &ordered[..start],
            &ordered[end..]
        )
    };
    expect_user_error(&fx, &fc, &["[resample]", "time points"]);
    expect_user_error(
        &fx,
        &with_resample(
            "[resample]\nscheme = \"nested\"\n\n[resample.outer]\nscheme = \"k-fold\"\nfolds = 5\n\n[resample.inner]\nscheme = \"k-fold\"\nfolds = 250",
        ),
        &["inner", "outer"],
    );
    expect_user_error(
        &fx,
        &with_resample("[resample]\nscheme = \"k-fold\"\nsplits = 3"),
        &["splits does not apply to scheme \"k-fold\""],
    );
}

#[test]
fn check_warns_about_plans_likely_to_mislead() {
    let fx = Fixture::new();
    // A unit-like column (island) the plan does not group by, and 3 folds.
    let text = PENGUINS_PLAN.replace("folds = 5", "folds = 3");
    fx.write("plan.toml", &text);
    let (code, _, stderr) = run(fx.cmd().args(["check", "plan.toml"]));
    assert_eq!(code, 0, "{stderr}");
    assert!(stderr.contains("`island` looks like a unit id"), "{stderr}");
    assert!(stderr.contains("3 folds"), "{stderr}");
    // Grouping by it silences the first warning (three islands: seal one,
    // leave each of the other two out in turn).
    let grouped = with_resample("[resample]\nscheme = \"leave-one-group-out\"")
        .replace(
            "target = \"species\"",
            "target = \"species\"\ngroup = \"island\"",
        )
        .replace("[resample]", "[seal]\nfraction = 0.2\n\n[resample]");
    fx.write("plan.toml", &grouped);
    let (code, _, stderr) = run(fx.cmd().args(["check", "plan.toml"]));
    assert_eq!(code, 0, "{stderr}");
    assert!(!stderr.contains("looks like a unit id"), "{stderr}");
}

#[test]
fn leave_one_out_warns_that_a_validation_part_is_smaller_than_the_classes() {
    let fx = Fixture::new();
    fx.write(
        "plan.toml",
        &with_resample("[resample]\nscheme = \"leave-one-out\""),
    );
    let (code, _, stderr) = run(fx.cmd().args(["check", "plan.toml"]));
    assert_eq!(code, 0, "{stderr}");
    assert!(stderr.contains("fewer rows than the 3 classes"), "{stderr}");
}

#[test]
fn sealing_the_last_share_by_order_seals_the_latest_rows() {
    let fx = Fixture::new();
    let text = PENGUINS_PLAN
        .replace(
            "target = \"species\"",
            "target = \"species\"\norder = \"year\"",
        )
        .replace("[resample]", "[seal]\nlast = 0.3\n\n[resample]");
    let s = sheet(&fx, &text);
    let data = std::fs::read_to_string(fx.path("penguins.csv")).expect("data");
    let year = |r: u64| -> u32 {
        let line = data.lines().nth(r as usize + 1).unwrap_or_default();
        line.rsplit(',')
            .next()
            .and_then(|y| y.trim().parse().ok())
            .unwrap_or(0)
    };
    let sealed = rows(&s["sealed"]);
    let development = rows(&s["development"]);
    assert!(!sealed.is_empty());
    // Rows sharing an order value never straddle the cut (common practice).
    let first_sealed = sealed.iter().map(|&r| year(r)).min().unwrap_or(0);
    let last_development = development
        .iter()
        .map(|&r| year(r))
        .max()
        .unwrap_or(u32::MAX);
    assert!(
        last_development < first_sealed,
        "{last_development} vs {first_sealed}"
    );
}
