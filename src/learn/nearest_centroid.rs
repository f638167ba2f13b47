//! The `nearest-centroid` learner. (Being built: see the learners issue.)

use ndarray::ArrayView2;

use super::{
    LearnError, Learner, Outcome, SettingDefault, SettingKind, SettingSpec, Settings, Task,
    TrainPart,
};

/// The `nearest-centroid` learner.
#[derive(Clone, Copy, Debug, Default)]
pub struct NearestCentroid;

const SETTINGS: &[SettingSpec] = &[];

impl Learner for NearestCentroid {
    fn name(&self) -> &'static str {
        "nearest-centroid"
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
                    learner: "nearest-centroid",
                    message: "not built yet".into(),
                })
            })
            .collect()
    }
}
