//! The `baseline` learner. (Being built: see the learners issue.)

use ndarray::ArrayView2;

use super::{
    LearnError, Learner, Outcome, SettingDefault, SettingKind, SettingSpec, Settings, Task,
    TrainPart,
};

/// The `baseline` learner.
#[derive(Clone, Copy, Debug, Default)]
pub struct Baseline;

const SETTINGS: &[SettingSpec] = &[];

impl Learner for Baseline {
    fn name(&self) -> &'static str {
        "baseline"
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
                    learner: "baseline",
                    message: "not built yet".into(),
                })
            })
            .collect()
    }
}
