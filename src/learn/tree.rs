//! The `tree` learner. (Being built: see the learners issue.)

use ndarray::ArrayView2;

use super::{
    LearnError, Learner, Outcome, SettingDefault, SettingKind, SettingSpec, Settings, Task,
    TrainPart,
};

/// The `tree` learner.
#[derive(Clone, Copy, Debug, Default)]
pub struct Tree;

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

impl Learner for Tree {
    fn name(&self) -> &'static str {
        "tree"
    }

    fn settings(&self) -> &'static [SettingSpec] {
        SETTINGS
    }

    fn supports(&self, task: Task) -> bool {
        let _ = task;
        true
    }

    fn simplicity(&self, _settings: &Settings) -> Vec<f64> {
        Vec::new()
    }

    fn evaluate_family(
        &self,
        _task: Task,
        _train: &TrainPart<'_>,
        _queries: &[ArrayView2<'_, f64>],
        family: &[Settings],
    ) -> Vec<Result<Outcome, LearnError>> {
        let _ = (SettingDefault::Int(0), SettingKind::Int { min: 0 });
        family
            .iter()
            .map(|_| {
                Err(LearnError::Data {
                    learner: "tree",
                    message: "not built yet".into(),
                })
            })
            .collect()
    }
}
