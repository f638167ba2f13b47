//! Inputs shared by the benchmarks: generated data files and plans in a
//! temporary folder, resolved and compiled the way `holdfast run` does.
//!
//! Everything is seeded (`holdfast bench-data`'s generator), so every run of
//! a benchmark measures the same work.

#![allow(dead_code)]

use std::fs::{self, File};
use std::path::{Path, PathBuf};

use holdfast::compile::{self, JobSheet};
use holdfast::exec::{FitInput, evaluate_candidates};
use holdfast::learn::Settings;
use holdfast::plan::{self, Resolved};

/// A temporary folder holding one data file and its plans.
pub struct Bed {
    pub dir: tempfile::TempDir,
    pub data: PathBuf,
}

impl Bed {
    /// `rows` rows of `features` features in `groups` groups (2 classes).
    pub fn new(rows: usize, features: usize, groups: usize) -> Bed {
        let dir = tempfile::tempdir().expect("a temporary folder");
        let data = dir.path().join("data.csv");
        let mut file = File::create(&data).expect("a data file");
        holdfast::demo::write_bench(&mut file, 1, rows, groups, features, 2).expect("data written");
        Bed { dir, data }
    }

    /// Writes `plan` (TOML; its `[data]` names `data.csv`) as `name` and
    /// returns its path.
    pub fn plan(&self, name: &str, plan: &str) -> PathBuf {
        let path = self.dir.path().join(name);
        fs::write(&path, plan).expect("a plan file");
        path
    }
}

/// A classification plan over `data.csv` with `candidates` (TOML blocks).
pub fn classification_plan(folds: usize, repeats: usize, candidates: &str) -> String {
    format!(
        "[plan]\nname = \"bench\"\nseed = 1\n\n\
         [data]\npath = \"data.csv\"\ntarget = \"label\"\ngroup = \"unit\"\nexclude = [\"t\"]\n\n\
         [resample]\nscheme = \"k-fold\"\nfolds = {folds}\nrepeats = {repeats}\n\n\
         [prep]\nscale = \"z-score\"\n\n{candidates}\n"
    )
}

/// A regression plan: the target is `f01`, the other features predict it.
pub fn regression_plan(folds: usize, candidates: &str) -> String {
    format!(
        "[plan]\nname = \"bench-regression\"\nseed = 1\n\n\
         [data]\npath = \"data.csv\"\ntarget = \"f01\"\ntask = \"regression\"\ngroup = \"unit\"\n\
         exclude = [\"t\", \"label\"]\n\n\
         [resample]\nscheme = \"k-fold\"\nfolds = {folds}\n\n\
         [prep]\nscale = \"z-score\"\n\n{candidates}\n"
    )
}

/// The plan resolved (data loaded and fingerprinted) and compiled.
pub fn compiled(plan_path: &Path) -> (Resolved, JobSheet) {
    let r = plan::resolve_file(plan_path).expect("the plan resolves");
    let sheet = compile::compile(&r).expect("the plan compiles");
    (r, sheet)
}

/// The (learner, settings) of every candidate of `learner` in the sheet.
pub fn candidates_of<'a>(sheet: &'a JobSheet, learner: &str) -> Vec<(&'a str, &'a Settings)> {
    sheet
        .candidates
        .iter()
        .filter(|c| c.learner == learner)
        .map(|c| (c.learner.as_str(), &c.settings))
        .collect()
}

/// Fit and score `candidates` on the first split, as a run does (training
/// scores as the plan says); returns a number that depends on the result.
pub fn evaluate_on_first_split(
    r: &Resolved,
    sheet: &JobSheet,
    candidates: &[(&str, &Settings)],
) -> usize {
    let split = &sheet.splits[0];
    let input = FitInput {
        data: &r.data,
        task: r.plan.task(),
        prep: r.plan.prep,
        train: &split.train,
        evaluate: &split.validation,
        training_scores: r.plan.select.training_scores,
    };
    let scored = evaluate_candidates(&input, candidates);
    assert!(
        scored.iter().all(|s| s.failed.is_none()),
        "every candidate fits"
    );
    scored.iter().map(|s| s.scores.len()).sum()
}
