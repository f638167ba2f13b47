//! The `tree` learner: a CART decision tree (Breiman, Friedman, Olshen and
//! Stone 1984), Gini impurity for classification, squared error for
//! regression, settings `depth` (a stump has depth 1) and `min-leaf`.
//!
//! Predictions: a leaf's class shares are the probabilities and its majority
//! class the label (ties to the lower class); for regression the leaf mean.
//!
//! Family: one tree per distinct `min-leaf`, grown once to the largest depth
//! any candidate with that `min-leaf` asks for; each candidate reads it off
//! truncated at its own depth. [`grow`] says why that equals growing each
//! depth alone, and the tests check it bit for bit. The split rules, tie
//! breaks and thresholds are documented there too.
//!
//! Simplicity key `[-depth, min-leaf]`: a shallower tree is simpler, then one
//! with larger leaves.

mod grow;

use ndarray::{Array2, ArrayView2};

use grow::{Grown, NodeValue, Response};

use super::ridge::numeric::check_inputs;
use super::{
    LearnError, Learner, Note, Outcome, Predictions, SettingDefault, SettingKind, SettingSpec,
    Settings, Targets, Task, TrainPart,
};

/// The `tree` learner.
#[derive(Clone, Copy, Debug, Default)]
pub struct Tree;

const NAME: &str = "tree";

/// Exact split comparisons multiply up to five row counts in `u128`.
const MAX_ROWS: usize = 10_000_000;

const SETTINGS: &[SettingSpec] = &[
    SettingSpec {
        name: "depth",
        kind: SettingKind::Int { min: 1 },
        default: SettingDefault::Int(5),
        help: "maximum depth of the tree (a stump has depth 1)",
    },
    SettingSpec {
        name: "min-leaf",
        kind: SettingKind::Int { min: 1 },
        default: SettingDefault::Int(1),
        help: "fewest training rows a leaf may hold",
    },
];

/// One candidate's settings, checked.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Shape {
    depth: usize,
    min_leaf: usize,
}

fn read_shape(settings: &Settings) -> Result<Shape, LearnError> {
    let read = |name: &str| -> Result<usize, LearnError> {
        let fail = |message: &str| LearnError::Setting {
            learner: NAME,
            setting: name.to_string(),
            message: message.to_string(),
        };
        let value = settings
            .get(name)
            .ok_or_else(|| fail("missing; give a whole number at least 1"))?;
        match value.as_i64() {
            Some(v) if v >= 1 => Ok(usize::try_from(v).unwrap_or(usize::MAX)),
            _ => Err(fail("must be a whole number at least 1")),
        }
    };
    Ok(Shape {
        depth: read("depth")?,
        min_leaf: read("min-leaf")?,
    })
}

fn response<'a>(task: Task, train: &TrainPart<'a>) -> Result<Response<'a>, LearnError> {
    match (task, train.y) {
        (Task::Classification { classes }, Targets::Classes(y)) => {
            if let Some(bad) = y.iter().find(|&&c| c as usize >= classes) {
                return Err(data_error(format!(
                    "class code {bad} is not below the class count {classes}"
                )));
            }
            Ok(Response::Classes { y, classes })
        }
        (Task::Regression, Targets::Values(y)) => {
            if y.iter().any(|v| !v.is_finite()) {
                return Err(data_error(
                    "a training target is missing or not finite".into(),
                ));
            }
            Ok(Response::Values(y))
        }
        _ => Err(data_error("the targets do not match the task".into())),
    }
}

fn data_error(message: String) -> LearnError {
    LearnError::Data {
        learner: NAME,
        message,
    }
}

fn prepare<'a>(
    task: Task,
    train: &TrainPart<'a>,
    queries: &[ArrayView2<'_, f64>],
) -> Result<Response<'a>, LearnError> {
    let targets = match train.y {
        Targets::Classes(y) => y.len(),
        Targets::Values(y) => y.len(),
    };
    check_inputs(NAME, train.x, targets, queries)?;
    if train.x.nrows() > MAX_ROWS {
        return Err(data_error(format!(
            "the training part has {} rows; the tree takes at most {MAX_ROWS}",
            train.x.nrows()
        )));
    }
    response(task, train)
}

fn predict(tree: &Grown, depth: usize, task: Task, q: ArrayView2<'_, f64>) -> Predictions {
    match task {
        Task::Classification { classes } => {
            let mut labels = Vec::with_capacity(q.nrows());
            let mut probabilities = Array2::zeros((q.nrows(), classes));
            for (i, row) in q.rows().into_iter().enumerate() {
                if let NodeValue::Classes { label, shares } = tree.walk(row, depth) {
                    labels.push(*label);
                    probabilities
                        .row_mut(i)
                        .assign(&ndarray::ArrayView1::from(shares));
                }
            }
            Predictions::Classes {
                labels,
                probabilities,
            }
        }
        Task::Regression => Predictions::Values(
            q.rows()
                .into_iter()
                .map(|row| match tree.walk(row, depth) {
                    NodeValue::Mean(m) => *m,
                    NodeValue::Classes { .. } => 0.0,
                })
                .collect(),
        ),
    }
}

fn note(tree: &Grown) -> Note {
    let remark = tree.nodes[0].split.is_none().then(|| {
        "no split improves on the whole training part (one class, a constant target, constant \
         features or too few rows for min-leaf); the tree is a single leaf"
            .to_string()
    });
    Note {
        remark,
        ..Note::default()
    }
}

impl Learner for Tree {
    fn name(&self) -> &'static str {
        NAME
    }

    fn settings(&self) -> &'static [SettingSpec] {
        SETTINGS
    }

    fn supports(&self, task: Task) -> bool {
        let _ = task;
        true
    }

    /// `[-depth, min-leaf]`: shallower is simpler, then larger leaves.
    fn simplicity(&self, settings: &Settings) -> Vec<f64> {
        let get = |name: &str, default: i64| {
            settings
                .get(name)
                .and_then(|v| v.as_i64())
                .unwrap_or(default) as f64
        };
        vec![-get("depth", 5), get("min-leaf", 1)]
    }

    fn evaluate_family(
        &self,
        task: Task,
        train: &TrainPart<'_>,
        queries: &[ArrayView2<'_, f64>],
        family: &[Settings],
    ) -> Vec<Result<Outcome, LearnError>> {
        let y = match prepare(task, train, queries) {
            Ok(y) => y,
            Err(e) => return family.iter().map(|_| Err(e.clone())).collect(),
        };
        let shapes: Vec<Result<Shape, LearnError>> = family.iter().map(read_shape).collect();
        let mut deepest = std::collections::BTreeMap::<usize, usize>::new();
        for s in shapes.iter().flatten() {
            let d = deepest.entry(s.min_leaf).or_insert(0);
            *d = (*d).max(s.depth);
        }
        let trees: std::collections::BTreeMap<usize, Grown> = deepest
            .into_iter()
            .map(|(min_leaf, depth)| (min_leaf, Grown::new(train.x, y, depth, min_leaf)))
            .collect();
        shapes
            .into_iter()
            .map(|shape| {
                let shape = shape?;
                let tree = trees
                    .get(&shape.min_leaf)
                    .ok_or_else(|| data_error("internal: no tree for this min-leaf".into()))?;
                Ok(Outcome {
                    predictions: queries
                        .iter()
                        .map(|q| predict(tree, shape.depth, task, *q))
                        .collect(),
                    note: note(tree),
                })
            })
            .collect()
    }
}

#[cfg(test)]
mod tests;
