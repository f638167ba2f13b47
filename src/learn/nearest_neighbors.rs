//! The `nearest-neighbors` learner. (Being built: see the learners issue.)

use ndarray::ArrayView2;

use super::{
    LearnError, Learner, Outcome, SettingDefault, SettingKind, SettingSpec, Settings, Task,
    TrainPart,
};

/// The `nearest-neighbors` learner.
#[derive(Clone, Copy, Debug, Default)]
pub struct NearestNeighbors;

const SETTINGS: &[SettingSpec] = &[
    SettingSpec {
        name: "k",
        kind: SettingKind::Int { min: 1 },
        default: SettingDefault::Int(5),
        help: "number of neighbours that vote",
    },
    SettingSpec {
        name: "vote",
        kind: SettingKind::Choice(&["equal", "inverse-distance"]),
        default: SettingDefault::Text("equal"),
        help: "how neighbours are weighted: equal, or by 1/distance",
    },
    SettingSpec {
        name: "distance",
        kind: SettingKind::Choice(&["euclidean", "manhattan"]),
        default: SettingDefault::Text("euclidean"),
        help: "the distance between rows",
    },
];

impl Learner for NearestNeighbors {
    fn name(&self) -> &'static str {
        "nearest-neighbors"
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
                    learner: "nearest-neighbors",
                    message: "not built yet".into(),
                })
            })
            .collect()
    }
}
