//! The `shrunken-centroid` learner. (Being built: see the learners issue.)

use ndarray::ArrayView2;

use super::{
    LearnError, Learner, Outcome, SettingDefault, SettingKind, SettingSpec, Settings, Task,
    TrainPart,
};

/// The `shrunken-centroid` learner.
#[derive(Clone, Copy, Debug, Default)]
pub struct ShrunkenCentroid;

const SETTINGS: &[SettingSpec] = &[SettingSpec {
    name: "delta",
    kind: SettingKind::Float { min: 0.0 },
    default: SettingDefault::Float(0.0),
    help: "shrinkage threshold applied to the standardised centroid differences",
}];

impl Learner for ShrunkenCentroid {
    fn name(&self) -> &'static str {
        "shrunken-centroid"
    }

    fn settings(&self) -> &'static [SettingSpec] {
        SETTINGS
    }

    fn supports(&self, task: Task) -> bool {
        matches!(task, Task::Classification { .. })
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
                    learner: "shrunken-centroid",
                    message: "not built yet".into(),
                })
            })
            .collect()
    }
}
