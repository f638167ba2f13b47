//! The `baseline` learner: predicts without looking at the features. For
//! classification, the majority class of the training part (ties by class
//! order) with the training class shares as probabilities; for regression,
//! the training mean. It is the yardstick every other candidate should beat.
//!
//! Invariants: it takes no settings, so every candidate of a family gets
//! the same outcome; its simplicity key is empty (there is nothing to order);
//! a part with one class predicts that class, with a remark.

#[path = "fit_common.rs"]
pub(crate) mod fit_common;

use ndarray::{Array2, ArrayView2};

use self::fit_common::{check_matrices, class_part, data_error, same_for_all, value_part};
use super::{
    LearnError, Learner, Note, Outcome, Predictions, SettingSpec, Settings, Task, TrainPart,
};

/// The `baseline` learner.
#[derive(Clone, Copy, Debug, Default)]
pub struct Baseline;

const NAME: &str = "baseline";

const SETTINGS: &[SettingSpec] = &[];

impl Learner for Baseline {
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

    /// Empty: the baseline has no settings, so all its candidates are
    /// equally simple.
    fn simplicity(&self, _settings: &Settings) -> Vec<f64> {
        Vec::new()
    }

    fn evaluate_family(
        &self,
        task: Task,
        train: &TrainPart<'_>,
        queries: &[ArrayView2<'_, f64>],
        family: &[Settings],
    ) -> Vec<Result<Outcome, LearnError>> {
        same_for_all(NAME, SETTINGS, family, fit(task, train, queries))
    }
}

/// The one outcome every baseline candidate shares.
fn fit(
    task: Task,
    train: &TrainPart<'_>,
    queries: &[ArrayView2<'_, f64>],
) -> Result<Outcome, LearnError> {
    check_matrices(NAME, train, queries)?;
    match task {
        Task::Classification { .. } => classify(task, train, queries),
        Task::Regression => regress(train, queries),
    }
}

fn classify(
    task: Task,
    train: &TrainPart<'_>,
    queries: &[ArrayView2<'_, f64>],
) -> Result<Outcome, LearnError> {
    let part = class_part(NAME, task, train)?;
    let n = part.y.len() as f64;
    let shares: Vec<f64> = part.counts.iter().map(|&c| c as f64 / n).collect();
    // The first class with the largest count: ties go to the lower code.
    let mut majority = 0;
    for (c, &count) in part.counts.iter().enumerate() {
        if count > part.counts[majority] {
            majority = c;
        }
    }
    let predictions = queries
        .iter()
        .map(|q| {
            let mut probabilities = Array2::zeros((q.nrows(), part.classes));
            for mut row in probabilities.rows_mut() {
                row.assign(&ndarray::ArrayView1::from(&shares));
            }
            Predictions::Classes {
                labels: vec![majority as u32; q.nrows()],
                probabilities,
            }
        })
        .collect();
    let note = Note {
        remark: part.remark("their probability is 0"),
        ..Note::default()
    };
    Ok(Outcome { predictions, note })
}

fn regress(train: &TrainPart<'_>, queries: &[ArrayView2<'_, f64>]) -> Result<Outcome, LearnError> {
    let y = value_part(NAME, train)?;
    let mean = y.iter().sum::<f64>() / y.len() as f64;
    if !mean.is_finite() {
        return Err(data_error(
            NAME,
            "the training mean overflows; rescale the target",
        ));
    }
    let predictions = queries
        .iter()
        .map(|q| Predictions::Values(vec![mean; q.nrows()]))
        .collect();
    Ok(Outcome {
        predictions,
        note: Note::default(),
    })
}

#[cfg(test)]
mod tests {
    use ndarray::array;

    use super::*;
    use crate::learn::Targets;

    fn run(task: Task, train: &TrainPart<'_>, family: usize) -> Vec<Result<Outcome, LearnError>> {
        let q = array![[0.0, 0.0], [5.0, 5.0]];
        Baseline.evaluate_family(task, train, &[q.view()], &vec![Settings::new(); family])
    }

    fn classes(outcome: &Outcome) -> (&[u32], &Array2<f64>) {
        match &outcome.predictions[0] {
            Predictions::Classes {
                labels,
                probabilities,
            } => (labels, probabilities),
            Predictions::Values(_) => panic!("expected classes"),
        }
    }

    #[test]
    fn majority_and_shares_with_ties_by_class_order() {
        let x = array![[1.0, 2.0], [3.0, 4.0], [5.0, 6.0], [7.0, 8.0], [9.0, 0.0]];
        // Classes 1 and 2 tie with two rows each: the lower code wins.
        let y = [2, 1, 2, 1, 0];
        let train = TrainPart {
            x: x.view(),
            y: Targets::Classes(&y),
        };
        let out = run(Task::Classification { classes: 4 }, &train, 1);
        let outcome = out[0].as_ref().unwrap();
        let (labels, p) = classes(outcome);
        assert_eq!(labels, &[1, 1]);
        assert_eq!(p.row(1).to_vec(), vec![0.2, 0.4, 0.4, 0.0]);
        assert!(
            outcome
                .note
                .remark
                .as_deref()
                .unwrap()
                .contains("class codes 3")
        );
    }

    #[test]
    fn regression_predicts_the_training_mean() {
        let x = array![[1.0, 2.0], [3.0, 4.0], [5.0, 6.0], [7.0, 8.0]];
        let y = [1.0, 2.0, 4.0, 9.0];
        let train = TrainPart {
            x: x.view(),
            y: Targets::Values(&y),
        };
        let out = run(Task::Regression, &train, 1);
        assert_eq!(
            out[0].as_ref().unwrap().predictions[0],
            Predictions::Values(vec![4.0, 4.0])
        );
    }

    #[test]
    fn family_equals_each_candidate_alone_and_runs_repeat() {
        let x = array![[1.0, 2.0], [3.0, 4.0], [5.0, 6.0]];
        let y = [0, 1, 1];
        let train = TrainPart {
            x: x.view(),
            y: Targets::Classes(&y),
        };
        let task = Task::Classification { classes: 2 };
        let family = run(task, &train, 3);
        for slot in &family {
            let alone = run(task, &train, 1);
            assert_eq!(bits(slot), bits(&alone[0]));
        }
        assert_eq!(bits(&run(task, &train, 1)[0]), bits(&family[0]));
    }

    fn bits(result: &Result<Outcome, LearnError>) -> (Vec<u32>, Vec<u64>) {
        let (labels, p) = classes(result.as_ref().unwrap());
        (labels.to_vec(), p.iter().map(|v| v.to_bits()).collect())
    }

    #[test]
    fn one_class_and_constant_features_give_a_remark_not_a_panic() {
        let x = array![[1.0, 1.0], [1.0, 1.0]];
        let y = [1, 1];
        let train = TrainPart {
            x: x.view(),
            y: Targets::Classes(&y),
        };
        let out = run(Task::Classification { classes: 2 }, &train, 1);
        let outcome = out[0].as_ref().unwrap();
        assert_eq!(classes(outcome).0, &[1, 1]);
        assert!(
            outcome
                .note
                .remark
                .as_deref()
                .unwrap()
                .contains("one class")
        );
    }

    #[test]
    fn bad_inputs_are_errors() {
        let x = array![[1.0, 2.0]];
        let y = [3];
        let train = TrainPart {
            x: x.view(),
            y: Targets::Classes(&y),
        };
        let out = run(Task::Classification { classes: 2 }, &train, 2);
        assert!(matches!(out[1], Err(LearnError::Data { .. })));
        let empty = Array2::<f64>::zeros((0, 2));
        let train = TrainPart {
            x: empty.view(),
            y: Targets::Values(&[]),
        };
        assert!(matches!(
            run(Task::Regression, &train, 1)[0],
            Err(LearnError::Data { .. })
        ));
        let mut s = Settings::new();
        s.insert("k".into(), crate::learn::SettingValue::Int(3));
        let x = array![[1.0, 2.0]];
        let train = TrainPart {
            x: x.view(),
            y: Targets::Values(&[1.0]),
        };
        let out = Baseline.evaluate_family(Task::Regression, &train, &[], &[s]);
        assert!(matches!(out[0], Err(LearnError::Setting { .. })));
    }
}
