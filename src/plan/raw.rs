//! The plan as written: the TOML file read into typed tables, with every key,
//! type and range checked and every problem collected. Nothing here looks at
//! the data file; defaults are filled in later, by [`super::resolve`].

use std::path::Path;

use toml_edit::{Document, Item, TableLike, Value};

use super::problem::{Place, PlanError, Problem};
use super::reader::{Reader, item_span, join, number_of};

/// A scalar as written in a candidate block.
#[derive(Clone, Debug, PartialEq)]
pub enum Scalar {
    Int(i64),
    Float(f64),
    Text(String),
}

/// A setting's value as written: one value, a list, or a range.
#[derive(Clone, Debug, PartialEq)]
pub enum SettingInput {
    One(Scalar),
    List(Vec<Scalar>),
    Range {
        from: f64,
        to: f64,
        steps: usize,
        log: bool,
    },
}

/// One `[[candidates]]` block.
#[derive(Clone, Debug, PartialEq)]
pub struct RawCandidates {
    pub learner: String,
    pub place: Option<Place>,
    /// Settings in the order written, with the place of each value.
    pub settings: Vec<(String, SettingInput, Option<Place>)>,
}

/// A part size as written: a fraction in (0, 1) or a count.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum RawSize {
    Fraction(f64),
    Count(usize),
}

/// `[resample]` (or `[resample.outer]`, `[resample.inner]`) as written.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct RawResample {
    /// Dotted table path, for messages (`resample`, `resample.outer`).
    pub path: String,
    pub scheme: Option<String>,
    pub folds: Option<usize>,
    pub repeats: Option<usize>,
    pub stratify: Option<bool>,
    pub splits: Option<usize>,
    pub train: Option<RawSize>,
    pub validation: Option<RawSize>,
    pub window: Option<String>,
    pub min_train: Option<usize>,
    pub gap: Option<usize>,
    pub step: Option<usize>,
    pub outer: Option<Box<RawResample>>,
    pub inner: Option<Box<RawResample>>,
}

/// The whole plan as written.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct RawPlan {
    pub name: Option<String>,
    pub seed: Option<u64>,
    pub data_path: Option<String>,
    pub target: Option<String>,
    pub task: Option<String>,
    pub group: Option<String>,
    pub order: Option<String>,
    pub features: Option<Vec<String>>,
    pub exclude: Option<Vec<String>>,
    pub categorical: Option<Vec<String>>,
    pub seal_fraction: Option<f64>,
    pub seal_last: Option<f64>,
    pub seal_stratify: Option<bool>,
    pub resample: RawResample,
    pub scale: Option<String>,
    pub impute: Option<String>,
    pub candidates: Vec<RawCandidates>,
    pub metric: Option<String>,
    pub rule: Option<String>,
    pub training_scores: Option<bool>,
}

/// The tables a plan may have.
pub const TABLES: &[&str] = &[
    "plan",
    "data",
    "seal",
    "resample",
    "prep",
    "candidates",
    "select",
];
/// Resampling schemes.
pub const SCHEMES: &[&str] = &[
    "k-fold",
    "monte-carlo",
    "leave-one-out",
    "leave-one-group-out",
    "forward-chaining",
    "bootstrap",
    "nested",
];
const RESAMPLE_KEYS: &[&str] = &[
    "scheme",
    "folds",
    "repeats",
    "stratify",
    "splits",
    "train",
    "validation",
    "window",
    "min-train",
    "gap",
    "step",
    "outer",
    "inner",
];

/// A plan file read and checked, with the places of its keys for later
/// messages.
pub struct ParsedPlan {
    pub raw: RawPlan,
    pub places: std::collections::BTreeMap<String, Place>,
}

/// Parse plan text (from `path`, used in messages). Reports every problem.
pub fn parse(path: &Path, text: &str) -> Result<ParsedPlan, PlanError> {
    let fail = |problems| PlanError {
        path: path.to_path_buf(),
        problems,
    };
    let doc = Document::parse(text).map_err(|e| {
        let place = e.span().map(|s| Place::of_offset(text, s.start));
        fail(vec![Problem::at(
            place,
            format!("not valid TOML: {}", e.message().trim()),
        )])
    })?;
    let mut r = Reader::new(text);
    let root = doc.as_table();
    r.check_keys(root, "", TABLES);
    let mut raw = RawPlan::default();
    read_plan(&mut r, root, &mut raw);
    read_data(&mut r, root, &mut raw);
    read_seal(&mut r, root, &mut raw);
    if let Some(t) = table(&mut r, root, "resample") {
        raw.resample = read_resample(&mut r, t, "resample");
    } else {
        raw.resample.path = "resample".into();
    }
    read_prep(&mut r, root, &mut raw);
    read_candidates(&mut r, root, &mut raw);
    read_select(&mut r, root, &mut raw);
    if r.problems.is_empty() {
        Ok(ParsedPlan {
            raw,
            places: r.places,
        })
    } else {
        let mut problems = r.problems;
        problems.sort();
        Err(fail(problems))
    }
}

fn table<'a>(r: &mut Reader<'_>, root: &'a dyn TableLike, name: &str) -> Option<&'a dyn TableLike> {
    let item = r.item(root, "", name)?;
    match item.as_table_like() {
        Some(t) => Some(t),
        None => {
            let place = r.place(item_span(item));
            r.problem(place, format!("`{name}` must be a table, written [{name}]"));
            None
        }
    }
}

fn read_plan(r: &mut Reader<'_>, root: &dyn TableLike, raw: &mut RawPlan) {
    let Some(t) = table(r, root, "plan") else {
        return;
    };
    r.check_keys(t, "plan", &["name", "seed"]);
    raw.name = r.string(t, "plan", "name");
    raw.seed = r.count(t, "plan", "seed", 0).map(|s| s as u64);
}

fn read_data(r: &mut Reader<'_>, root: &dyn TableLike, raw: &mut RawPlan) {
    let Some(t) = table(r, root, "data") else {
        r.problem(
            None,
            "the plan has no [data] table; add one with at least `path` and `target`",
        );
        return;
    };
    let keys = [
        "path",
        "target",
        "task",
        "group",
        "order",
        "features",
        "exclude",
        "categorical",
    ];
    r.check_keys(t, "data", &keys);
    raw.data_path = r.string(t, "data", "path");
    raw.target = r.string(t, "data", "target");
    raw.task = r.choice(t, "data", "task", &["classification", "regression"]);
    raw.group = r.string(t, "data", "group");
    raw.order = r.string(t, "data", "order");
    raw.features = r.strings(t, "data", "features");
    raw.exclude = r.strings(t, "data", "exclude");
    raw.categorical = r.strings(t, "data", "categorical");
    let place = r.place(
        t.get_key_value("path")
            .map(|(k, _)| k)
            .and_then(|k| k.span()),
    );
    if raw.data_path.is_none() && !t.contains_key("path") {
        r.problem(
            place,
            "[data] needs `path`, the data file (relative to the plan's folder)",
        );
    }
    if raw.target.is_none() && !t.contains_key("target") {
        r.problem(None, "[data] needs `target`, the column to predict");
    }
}

fn read_seal(r: &mut Reader<'_>, root: &dyn TableLike, raw: &mut RawPlan) {
    let Some(t) = table(r, root, "seal") else {
        return;
    };
    r.check_keys(t, "seal", &["fraction", "last", "stratify"]);
    raw.seal_fraction = fraction(r, t, "seal", "fraction");
    raw.seal_last = fraction(r, t, "seal", "last");
    raw.seal_stratify = r.boolean(t, "seal", "stratify");
    if raw.seal_fraction.is_some() && raw.seal_last.is_some() {
        let place = r.place_of("seal.last");
        r.problem(place, "[seal] takes `fraction` (a random share) or `last` (the latest share by order), not both");
    }
}

fn fraction(r: &mut Reader<'_>, t: &dyn TableLike, path: &str, key: &str) -> Option<f64> {
    let value = r.number(t, path, key)?;
    if value > 0.0 && value < 1.0 {
        return Some(value);
    }
    let place = r.place_of(&join(path, key));
    r.problem(
        place,
        format!("[{path}] {key} must be a fraction between 0 and 1 (exclusive), found {value}"),
    );
    None
}

fn size(r: &mut Reader<'_>, t: &dyn TableLike, path: &str, key: &str) -> Option<RawSize> {
    let item = r.item(t, path, key)?;
    let place = r.place_of(&join(path, key));
    match item.as_value() {
        Some(Value::Integer(i)) if *i.value() >= 1 => Some(RawSize::Count(*i.value() as usize)),
        Some(Value::Float(f)) if *f.value() > 0.0 && *f.value() < 1.0 => {
            Some(RawSize::Fraction(*f.value()))
        }
        _ => {
            r.problem(
                place,
                format!("[{path}] {key} must be a fraction between 0 and 1 (like 0.2) or a row count (like 50)"),
            );
            None
        }
    }
}

fn read_resample(r: &mut Reader<'_>, t: &dyn TableLike, path: &str) -> RawResample {
    r.check_keys(t, path, RESAMPLE_KEYS);
    let mut s = RawResample {
        path: path.to_string(),
        scheme: r.choice(t, path, "scheme", SCHEMES),
        folds: r.count(t, path, "folds", 2),
        repeats: r.count(t, path, "repeats", 1),
        stratify: r.boolean(t, path, "stratify"),
        splits: r.count(t, path, "splits", 1),
        train: size(r, t, path, "train"),
        validation: size(r, t, path, "validation"),
        window: r.choice(t, path, "window", &["expanding", "sliding"]),
        min_train: r.count(t, path, "min-train", 1),
        gap: r.count(t, path, "gap", 0),
        step: r.count(t, path, "step", 1),
        outer: None,
        inner: None,
    };
    for side in ["outer", "inner"] {
        let sub = join(path, side);
        let Some(item) = r.item(t, path, side) else {
            continue;
        };
        let Some(inner_table) = item.as_table_like() else {
            let place = r.place_of(&sub);
            r.problem(place, format!("`{sub}` must be a table, written [{sub}]"));
            continue;
        };
        let read = Box::new(read_resample(r, inner_table, &sub));
        if side == "outer" {
            s.outer = Some(read);
        } else {
            s.inner = Some(read);
        }
    }
    s
}

fn read_prep(r: &mut Reader<'_>, root: &dyn TableLike, raw: &mut RawPlan) {
    let Some(t) = table(r, root, "prep") else {
        return;
    };
    r.check_keys(t, "prep", &["scale", "impute"]);
    raw.scale = r.choice(t, "prep", "scale", &["z-score", "min-max", "none"]);
    raw.impute = r.choice(t, "prep", "impute", &["mean", "median", "none"]);
}

fn read_select(r: &mut Reader<'_>, root: &dyn TableLike, raw: &mut RawPlan) {
    let Some(t) = table(r, root, "select") else {
        return;
    };
    r.check_keys(t, "select", &["metric", "rule", "training-scores"]);
    let metrics: Vec<&str> = crate::score::Metric::all().map(|m| m.name()).collect();
    raw.metric = r.choice(t, "select", "metric", &metrics);
    raw.rule = r.choice(t, "select", "rule", &["best", "one-standard-error"]);
    raw.training_scores = r.boolean(t, "select", "training-scores");
}

fn read_candidates(r: &mut Reader<'_>, root: &dyn TableLike, raw: &mut RawPlan) {
    let Some(item) = r.item(root, "", "candidates") else {
        r.problem(
            None,
            "the plan has no [[candidates]]; add at least one block with a `learner`",
        );
        return;
    };
    let blocks: Vec<&dyn TableLike> = match item {
        Item::ArrayOfTables(a) => a.iter().map(|t| t as &dyn TableLike).collect(),
        _ => {
            let place = r.place(item_span(item));
            r.problem(
                place,
                "`candidates` must be written as one or more [[candidates]] blocks",
            );
            return;
        }
    };
    if blocks.is_empty() {
        r.problem(
            None,
            "the candidate list is empty; add at least one [[candidates]] block with a `learner`",
        );
    }
    for (i, block) in blocks.into_iter().enumerate() {
        if let Some(c) = read_block(r, block, i) {
            raw.candidates.push(c);
        }
    }
}

fn read_block(r: &mut Reader<'_>, t: &dyn TableLike, index: usize) -> Option<RawCandidates> {
    let path = format!("candidates.{index}");
    let names: Vec<&str> = crate::learn::all().iter().map(|l| l.name()).collect();
    let Some(learner) = r.choice(t, &path, "learner", &names) else {
        if !t.contains_key("learner") {
            let place = r.place(
                t.iter()
                    .next()
                    .and_then(|(k, _)| t.get_key_value(k))
                    .and_then(|(k, _)| k.span()),
            );
            r.problem(
                place,
                format!(
                    "[[candidates]] block {} needs `learner` (one of {})",
                    index + 1,
                    names.join(", ")
                ),
            );
        }
        return None;
    };
    let place = r.place_of(&join(&path, "learner"));
    let spec = crate::learn::by_name(&learner)?;
    let valid: Vec<&str> = std::iter::once("learner")
        .chain(spec.settings().iter().map(|s| s.name))
        .collect();
    r.check_keys(t, &format!("[candidates] {learner}"), &valid);
    let mut settings = Vec::new();
    for s in spec.settings() {
        let Some(item) = r.item(t, &path, s.name) else {
            continue;
        };
        let at = r.place_of(&join(&path, s.name));
        match setting_input(item) {
            Ok(input) => settings.push((s.name.to_string(), input, at)),
            Err(msg) => r.problem(at, format!("[candidates] {learner}: {} {msg}", s.name)),
        }
    }
    Some(RawCandidates {
        learner,
        place,
        settings,
    })
}

fn scalar(value: &Value) -> Option<Scalar> {
    match value {
        Value::Integer(i) => Some(Scalar::Int(*i.value())),
        Value::Float(f) => Some(Scalar::Float(*f.value())),
        Value::String(s) => Some(Scalar::Text(s.value().clone())),
        _ => None,
    }
}

const SHAPES: &str =
    "must be a value, a list like [1, 3, 5], or a range like { from = 0.0, to = 4.0, steps = 17 }";

fn setting_input(item: &Item) -> Result<SettingInput, String> {
    let value = item.as_value().ok_or_else(|| SHAPES.to_string())?;
    if let Some(one) = scalar(value) {
        return Ok(SettingInput::One(one));
    }
    if let Some(list) = value.as_array() {
        let items: Option<Vec<Scalar>> = list.iter().map(scalar).collect();
        return match items {
            Some(v) if !v.is_empty() => Ok(SettingInput::List(v)),
            Some(_) => Err("is an empty list; give at least one value".into()),
            None => Err(SHAPES.into()),
        };
    }
    match value.as_inline_table() {
        Some(t) => range(t),
        None => Err(SHAPES.into()),
    }
}

fn range(t: &toml_edit::InlineTable) -> Result<SettingInput, String> {
    for (key, _) in t.iter() {
        if !["from", "to", "steps", "scale"].contains(&key) {
            return Err(format!(
                "range has unknown key `{key}` (valid: from, to, steps, scale)"
            ));
        }
    }
    let num = |k: &str| t.get(k).and_then(number_of).filter(|f| f.is_finite());
    let (Some(from), Some(to)) = (num("from"), num("to")) else {
        return Err("range needs numbers `from` and `to`".into());
    };
    let steps = match t.get("steps").and_then(Value::as_integer) {
        Some(s) if s >= 1 => s as usize,
        Some(s) => return Err(format!("range has steps = {s}; steps must be at least 1")),
        None => {
            return Err(
                "range needs a whole number `steps` (how many values from `from` to `to`)".into(),
            );
        }
    };
    let log = match t.get("scale").map(|v| v.as_str()) {
        None => false,
        Some(Some("linear")) => false,
        Some(Some("log")) => true,
        Some(_) => return Err("range scale must be \"linear\" or \"log\"".into()),
    };
    if log && (from <= 0.0 || to <= 0.0) {
        return Err("a log-scale range needs `from` and `to` above 0".into());
    }
    Ok(SettingInput::Range {
        from,
        to,
        steps,
        log,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const GOOD: &str = r#"
[plan]
name = "t"
seed = 7

[data]
path = "d.csv"
target = "y"

[[candidates]]
learner = "nearest-neighbors"
k = [1, 3]
"#;

    fn problems(text: &str) -> Vec<String> {
        match parse(Path::new("p.toml"), text) {
            Ok(parsed) => parsed
                .raw
                .candidates
                .iter()
                .filter_map(|b| {
                    crate::learn::by_name(&b.learner).map(|l| super::super::grid::expand(l, b))
                })
                .filter_map(Result::err)
                .flatten()
                .map(|p| p.message)
                .collect(),
            Err(e) => e
                .problems
                .iter()
                .map(|p| {
                    let at = p
                        .place
                        .map(|a| format!("{}:{}: ", a.line, a.column))
                        .unwrap_or_default();
                    format!("{at}{}", p.message)
                })
                .collect(),
        }
    }

    #[test]
    fn a_good_plan_parses() {
        let parsed = parse(Path::new("p.toml"), GOOD).unwrap();
        assert_eq!(parsed.raw.seed, Some(7));
        assert_eq!(parsed.raw.candidates.len(), 1);
        assert_eq!(parsed.raw.candidates[0].settings[0].0, "k");
    }

    #[test]
    fn each_mistake_is_reported_with_its_place() {
        // (edit applied to GOOD, expected fragment of the one problem)
        let cases = [
            (
                ("seed = 7", "sead = 7"),
                "4:1: unknown key `sead` in [plan]; did you mean `seed`?",
            ),
            (
                ("seed = 7", "seed = \"seven\""),
                "4:8: [plan] seed must be a whole number, found string",
            ),
            (
                ("k = [1, 3]", "k = { from = 1, to = 9, steps = 0 }"),
                "steps = 0; steps must be at least 1",
            ),
            (
                ("k = [1, 3]", "kk = 3"),
                "unknown key `kk` in [[candidates] nearest-neighbors]; did you mean `k`?",
            ),
            (("k = [1, 3]", "vote = \"equals\""), "did you mean `equal`?"),
            (
                ("[data]", "[seal]\nfraction = 1.5\n[data]"),
                "[seal] fraction must be a fraction between 0 and 1",
            ),
            (
                ("[data]", "[seal]\nfraction = 0.0\n[data]"),
                "[seal] fraction must be a fraction between 0 and 1",
            ),
            (
                (
                    "learner = \"nearest-neighbors\"",
                    "learner = \"nearest-neighbours\"",
                ),
                "did you mean `nearest-neighbors`?",
            ),
            (
                ("[plan]", "[plans]"),
                "unknown table `plans`; did you mean `plan`?",
            ),
        ];
        for ((from, to), want) in cases {
            let text = GOOD.replace(from, to);
            let got = problems(&text);
            assert!(
                got.iter().any(|p| p.contains(want)),
                "edit {to:?}: wanted {want:?} in {got:?}"
            );
        }
    }

    #[test]
    fn every_problem_is_reported_at_once() {
        let text = GOOD
            .replace("seed = 7", "sead = 7\nname2 = 1")
            .replace("k = [1, 3]", "k = \"x\"");
        assert_eq!(problems(&text).len(), 2, "{:?}", problems(&text));
    }

    #[test]
    fn an_empty_candidate_list_is_an_error() {
        let text = GOOD
            .split("[[candidates]]")
            .next()
            .unwrap_or_default()
            .to_string();
        let got = problems(&text);
        assert!(
            got.iter().any(|p| p.contains("no [[candidates]]")),
            "{got:?}"
        );
    }

    #[test]
    fn invalid_toml_names_the_place() {
        let got = problems("[plan\nname = 1");
        assert!(got[0].starts_with("1:"), "{got:?}");
        assert!(got[0].contains("not valid TOML"), "{got:?}");
    }
}
