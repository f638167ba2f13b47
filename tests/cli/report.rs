//! `report`: the HTML page of a selection (or of an opening, through its
//! selection). The SVG of each plot is parsed and its data points counted
//! against the numbers of candidates and splits the plan has; a headless
//! browser renders the page when one is installed.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use serde_json::Value;

use crate::support::{Fixture, run};

/// Three learners on the penguins: 5 k x 2 votes, 4 depths, 5 deltas; 5
/// folds, so 5 x (19 + the baseline) = 100 jobs.
const PLAN: &str = r#"
[plan]
name = "penguins-report"
seed = 3

[data]
path = "penguins.csv"
target = "species"
features = ["bill_*", "flipper_length_mm", "body_mass_g"]

[prep]
impute = "mean"
scale = "z-score"

[resample]
folds = 5

[[candidates]]
learner = "nearest-neighbors"
k = [1, 3, 5, 9, 15]
vote = ["equal", "inverse-distance"]

[[candidates]]
learner = "tree"
depth = [1, 2, 3, 4]

[[candidates]]
learner = "shrunken-centroid"
delta = { from = 0.0, to = 2.0, steps = 5 }

[select]
metric = "accuracy"
rule = "one-standard-error"
"#;

const SPLITS: usize = 5;

fn json(text: &str) -> Value {
    serde_json::from_str(text).unwrap_or_else(|e| panic!("not JSON ({e}): {text}"))
}

fn ok(fx: &Fixture, args: &[&str]) -> String {
    let (code, stdout, stderr) = run(fx.cmd().args(args));
    assert_eq!(code, 0, "holdfast {args:?}: {stderr}");
    stdout
}

/// The fixture with the plan run once; returns the run's JSON.
fn ran() -> (Fixture, Value) {
    let fx = Fixture::new();
    fx.write("plan.toml", PLAN);
    let run = json(&ok(&fx, &["run", "plan.toml", "--json"]));
    (fx, run)
}

fn report(fx: &Fixture, entry: &str) -> (Value, String) {
    let out = fx.path("report.html");
    let summary = json(&ok(
        fx,
        &[
            "report",
            entry,
            "--out",
            out.to_str().unwrap_or_default(),
            "--json",
        ],
    ));
    let html = std::fs::read_to_string(&out).expect("report written");
    (summary, html)
}

/// Every `<svg ...>...</svg>` of the page (the page is HTML, each plot is
/// well-formed XML).
fn svgs(html: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut rest = html;
    while let Some(start) = rest.find("<svg ") {
        let end = rest[start..].find("</svg>").expect("closed svg") + start + 6;
        out.push(rest[start..end].to_string());
        rest = &rest[end..];
    }
    out
}

/// (plot id, classes of its `g` elements) for every plot.
fn plots(html: &str) -> Vec<(String, Vec<String>)> {
    svgs(html)
        .iter()
        .map(|svg| {
            let doc = roxmltree::Document::parse(svg).unwrap_or_else(|e| panic!("bad svg ({e})"));
            let id = doc
                .root_element()
                .attribute("id")
                .unwrap_or_default()
                .to_string();
            let classes = doc
                .descendants()
                .filter(|n| n.has_tag_name("g"))
                .filter_map(|n| n.attribute("class").map(str::to_string))
                .collect();
            (id, classes)
        })
        .collect()
}

fn count(plots: &[(String, Vec<String>)], id: &str, class: &str) -> usize {
    let (_, classes) = plots
        .iter()
        .find(|(i, _)| i == id)
        .unwrap_or_else(|| panic!("no plot {id}"));
    classes.iter().filter(|c| *c == class).count()
}

/// Rows of the per-split plot: the best 5 eligible candidates by mean, the
/// chosen one if it is not among them, and the baseline (read from the
/// run's own JSON).
fn split_rows(run: &Value) -> usize {
    let cands = run["candidates"].as_array().expect("candidates");
    let mut eligible: Vec<&Value> = cands.iter().filter(|c| c["eligible"] == true).collect();
    eligible.sort_by(|a, b| {
        let m = |c: &Value| c["mean"].as_f64().unwrap_or(0.0);
        m(b).total_cmp(&m(a))
    });
    let top: Vec<&str> = eligible
        .iter()
        .take(5)
        .filter_map(|c| c["id"].as_str())
        .collect();
    let chosen_in_top = top.contains(&run["chosen"].as_str().unwrap_or_default());
    5 + usize::from(!chosen_in_top) + 1
}

#[test]
fn every_plot_has_one_point_per_candidate_and_split() {
    let (fx, run) = ran();
    let (summary, html) = report(&fx, "latest");
    assert_eq!(
        summary["plots"],
        serde_json::json!([
            "curve-nearest-neighbors",
            "curve-tree",
            "curve-shrunken-centroid",
            "split-scores",
            "fold-map"
        ])
    );
    let p = plots(&html);
    assert_eq!(p.len(), 5, "one svg per plot");
    for (id, points) in [
        ("plot-curve-nearest-neighbors", 10),
        ("plot-curve-tree", 4),
        ("plot-curve-shrunken-centroid", 5),
    ] {
        assert_eq!(count(&p, id, "point validation"), points, "{id}");
        assert_eq!(count(&p, id, "point training"), points, "{id}");
        // Two nearest-neighbour curves (one per vote), one line each.
        let lines = if id.ends_with("neighbors") { 2 } else { 1 };
        assert_eq!(count(&p, id, "line validation"), lines, "{id}");
        assert_eq!(count(&p, id, "band one-se"), 1, "{id}");
    }
    let chosen: usize = p
        .iter()
        .map(|(_, c)| c.iter().filter(|c| *c == "marker chosen").count())
        .sum();
    // A ring and its label.
    assert_eq!(chosen, 2);
    // The baseline (about 0.44 on the penguins, the majority share, while
    // the top candidates score above 0.9) is named but left off the scale.
    assert_eq!(
        count(&p, "plot-split-scores", "point split-score"),
        (split_rows(&run) - 1) * SPLITS
    );
    assert!(html.contains("off the scale]"));
    assert!(count(&p, "plot-fold-map", "cell validation") >= SPLITS);
    assert!(count(&p, "plot-fold-map", "cell sealed") >= 1);
    for fold in 1..=SPLITS {
        assert!(
            html.contains(&format!(">\nfold {fold}\n</text>")),
            "fold {fold} label"
        );
    }
    let label = run["chosen_label"].as_str().expect("label");
    assert!(html.contains(&format!("chose <b class=\"chosen-name\">{label}</b>")));
    assert!(html.contains("Tibshirani and Tibshirani 2009"));
    assert!(html.contains("<span class=\"ok\">verified</span>: 1 entries"));
    assert!(html.contains("The sealed partition has not been opened"));
}

#[test]
fn the_comparison_table_has_every_other_candidate_and_the_baseline() {
    let (fx, run) = ran();
    let (_, html) = report(&fx, "latest");
    let eligible = run["candidates"]
        .as_array()
        .into_iter()
        .flatten()
        .filter(|c| c["eligible"] == true)
        .count();
    let table = &html[html.find("<table class=\"comparisons\">").expect("table")..];
    let table = &table[..table.find("</table>").expect("end")];
    // Every other eligible candidate, then the baseline.
    assert_eq!(table.matches("<tr class=").count(), eligible - 1 + 1);
    assert_eq!(
        table.matches("<tr class=\"indistinct").count()
            + table.matches("<tr class=\"distinct").count()
            + table.matches("<tr class=\"undefined").count(),
        eligible
    );
    assert!(table.contains("<span class=\"tag\">baseline</span>"));
}

#[test]
fn an_opening_is_reported_through_its_selection_and_marked() {
    let (fx, _) = ran();
    ok(&fx, &["unseal", "plan.toml", "--reason", "first look"]);
    ok(
        &fx,
        &["unseal", "plan.toml", "--again", "--reason", "asked twice"],
    );
    let (summary, html) = report(&fx, "3");
    assert_eq!(
        (summary["entry"].as_u64(), summary["selection"].as_u64()),
        (Some(3), Some(1))
    );
    assert!(html.contains("<b>opening entry 3</b>"), "opening notice");
    let table = &html[html
        .find("<table class=\"openings\">")
        .expect("openings table")..];
    let table = &table[..table.find("</table>").expect("end")];
    assert_eq!(
        table.matches("<tr").count() - 1,
        2,
        "two openings, one header"
    );
    assert!(table.contains("first look") && table.contains("asked twice"));
    // m = 2: the Bonferroni level 1 - 0.05/2 = 97.5% (METHODS.md).
    assert!(table.contains("(level 97.5%)"));
    assert_eq!(table.matches("this report").count(), 1);
    assert!(html.contains("opening entry</dt>"));
}

#[test]
fn a_changed_data_file_leaves_out_only_the_fold_map() {
    let (fx, _) = ran();
    let data = fx.path("penguins.csv");
    let text = std::fs::read_to_string(&data).expect("data");
    std::fs::write(&data, text.replacen("39.1", "39.2", 1)).expect("edit");
    let (summary, html) = report(&fx, "latest");
    let plots = summary["plots"].as_array().expect("plots");
    assert!(!plots.iter().any(|p| p == "fold-map"));
    assert_eq!(plots.len(), 4);
    let why = summary["fold_map_omitted"].as_str().expect("reason");
    assert!(why.contains("fingerprint"), "{why}");
    assert!(html.contains("The fold map is left out"));
    std::fs::remove_file(&data).expect("remove");
    let (summary, _) = report(&fx, "latest");
    assert!(
        summary["fold_map_omitted"]
            .as_str()
            .is_some_and(|w| w.contains("failed to read data file"))
    );
}

#[test]
fn unknown_entries_and_unwritable_targets_are_user_errors() {
    let (fx, _) = ran();
    let (code, _, stderr) = run(fx.cmd().args(["report", "9", "--out", "r.html"]));
    assert_eq!(code, 2, "{stderr}");
    let (code, _, stderr) =
        run(fx
            .cmd()
            .args(["report", "latest", "--out", "no/such/folder/r.html"]));
    assert_eq!(code, 2, "{stderr}");
    assert!(stderr.contains("failed to write the report"), "{stderr}");
}

#[test]
fn the_page_loads_nothing_from_outside() {
    let (fx, _) = ran();
    let (_, html) = report(&fx, "latest");
    for needle in [
        "<script", "<link", "<img", "http://", "https://", "@import", "url(",
    ] {
        let allowed = needle == "http://"
            && html.matches(needle).count() == html.matches("http://www.w3.org/2000/svg").count();
        assert!(
            allowed || !html.contains(needle),
            "the page contains {needle}"
        );
    }
}

#[test]
fn a_bootstrap_selection_has_632_estimates_per_candidate() {
    let fx = Fixture::new();
    let plan = PLAN
        .replace("folds = 5", "scheme = \"bootstrap\"\nsplits = 8")
        .replace("rule = \"one-standard-error\"", "rule = \"best\"");
    fx.write("plan.toml", &plan);
    let run = json(&ok(&fx, &["run", "plan.toml", "--json"]));
    let (_, html) = report(&fx, "latest");
    let section = &html[html
        .find("<section id=\"bootstrap\">")
        .expect("bootstrap section")..];
    let section = &section[..section.find("</section>").expect("end")];
    // One row per eligible candidate and one for the baseline.
    let eligible = run["candidates"]
        .as_array()
        .into_iter()
        .flatten()
        .filter(|c| c["eligible"] == true)
        .count();
    assert_eq!(section.matches("<tr").count() - 1, eligible + 1);
    assert!(section.contains("resubstitution error on the bootstrap samples"));
    assert!(section.contains("The .632+ estimate needs the no-information error rate"));
    // No one-standard-error band under the best rule.
    assert!(!html.contains("class=\"band one-se\""));
    // With the data at hand, the exact estimates from refits: one row per
    // candidate; .632+ is never below .632 when the out-of-bag error lies
    // between the apparent error and gamma (then Err1' = Err1 and R >= 0, so
    // w >= 0.632: Efron and Tibshirani 1997).
    let exact = &html[html
        .find("<section id=\"bootstrap-exact\">")
        .expect("exact section")..];
    let exact = &exact[..exact.find("</section>").expect("end")];
    let rows: Vec<Vec<f64>> = exact
        .split("<tr")
        .skip(2)
        .map(|row| {
            row.split("<td>")
                .skip(2)
                .filter_map(|cell| cell.split("</td>").next().and_then(|v| v.parse().ok()))
                .collect()
        })
        .collect();
    assert_eq!(rows.len(), eligible + 1, "{exact}");
    let mut checked = 0;
    for r in &rows {
        let (apparent, oob, gamma, e632, plus) = (r[0], r[1], r[2], r[3], r[4]);
        if oob > apparent && oob <= gamma {
            assert!(plus >= e632 - 0.0015, "{r:?}");
            checked += 1;
        }
    }
    assert!(checked > 0, "some candidate over-fits: {rows:?}");
}

// --- the browser check -------------------------------------------------

/// The chromium binary, if one is installed.
fn chromium() -> Option<PathBuf> {
    ["chromium", "chromium-browser"].iter().find_map(|name| {
        let ok = Command::new(name)
            .arg("--version")
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .status();
        ok.ok().filter(|s| s.success()).map(|_| PathBuf::from(name))
    })
}

/// Run chromium headless on `page` with `extra` arguments, a fresh profile
/// and no network services; (stdout, stderr). Killed after two minutes.
fn headless(browser: &Path, page: &Path, extra: &[String]) -> (String, String) {
    let profile = tempfile::tempdir().expect("profile dir");
    let mut args: Vec<String> = [
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    args.push(format!("--user-data-dir={}", profile.path().display()));
    args.extend(extra.iter().cloned());
    args.push(format!("file://{}", page.display()));
    let out_dir = tempfile::tempdir().expect("out dir");
    let (stdout, stderr) = (out_dir.path().join("stdout"), out_dir.path().join("stderr"));
    let mut child = Command::new(browser)
        .args(&args)
        .stdin(Stdio::null())
        .stdout(std::fs::File::create(&stdout).expect("stdout file"))
        .stderr(std::fs::File::create(&stderr).expect("stderr file"))
        .spawn()
        .expect("start chromium");
    let started = Instant::now();
    while child.try_wait().expect("wait").is_none() {
        if started.elapsed() > Duration::from_secs(120) {
            let _ = child.kill();
            panic!("chromium did not finish within two minutes: {args:?}");
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    let read = |p: &Path| std::fs::read_to_string(p).unwrap_or_default();
    (read(&stdout), read(&stderr))
}

/// The width and height of a PNG, from its IHDR chunk (PNG specification,
/// ISO/IEC 15948: signature, then IHDR with big-endian width and height).
fn png_size(bytes: &[u8]) -> Option<(u32, u32)> {
    let signature = [0x89, b'P', b'N', b'G', 0x0d, 0x0a, 0x1a, 0x0a];
    if bytes.len() < 24 || bytes[..8] != signature || &bytes[12..16] != b"IHDR" {
        return None;
    }
    let be = |i: usize| u32::from_be_bytes([bytes[i], bytes[i + 1], bytes[i + 2], bytes[i + 3]]);
    Some((be(16), be(20)))
}

#[test]
fn a_headless_browser_renders_the_page_without_errors() {
    let Some(browser) = chromium() else {
        if std::env::var("HOLDFAST_REQUIRE_BROWSER").as_deref() == Ok("1") {
            panic!("HOLDFAST_REQUIRE_BROWSER=1 but no chromium is installed");
        }
        println!(
            "skipped: no chromium on PATH; install it (apt-get install chromium) to render the report"
        );
        return;
    };
    let (fx, _) = ran();
    let (_, html) = report(&fx, "latest");
    let page = fx.path("report.html");
    let png = fx.path("report.png");
    let (_, stderr) = headless(
        &browser,
        &page,
        &[
            format!("--screenshot={}", png.display()),
            "--window-size=1200,3000".into(),
            "--enable-logging=stderr".into(),
            "--v=0".into(),
        ],
    );
    let bytes = std::fs::read(&png).unwrap_or_else(|e| panic!("no screenshot ({e}): {stderr}"));
    assert_eq!(png_size(&bytes), Some((1200, 3000)), "a 1200 x 3000 PNG");
    // A blank page of that size compresses to a few kilobytes; plots,
    // text and tables to far more.
    assert!(
        bytes.len() > 100_000,
        "the screenshot is nearly empty: {} bytes",
        bytes.len()
    );
    for line in stderr.lines() {
        let console = line.contains("CONSOLE") || line.contains("Uncaught");
        let fetch = line.contains("Failed to load resource") || line.contains("net::ERR");
        assert!(!console && !fetch, "the page logged an error: {line}");
    }
    let (dom, _) = headless(&browser, &page, &["--dump-dom".into()]);
    assert_eq!(
        dom.matches("<svg ").count(),
        5,
        "every plot is in the loaded page"
    );
    let points = |text: &str| text.matches("class=\"point validation\"").count();
    assert_eq!(points(&dom), points(&html));
    assert_eq!(points(&dom), 10 + 4 + 5);
}
