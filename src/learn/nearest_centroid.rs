//! The `nearest-centroid` learner (classification): each class present in
//! the training part is represented by the mean of its rows; a query row
//! goes to the class whose centroid is nearest in Euclidean distance, ties
//! by class order.
//!
//! Probabilities are `softmax(-d_k^2 / 2)` over the classes with a
//! centroid, with the largest exponent subtracted before `exp` so that
//! nothing overflows (common practice). This is the class posterior under
//! equal priors when every class is a Gaussian with identity covariance;
//! it depends on the scale of the features, so scale them first.
//!
//! Invariants: a class absent from the training part gets no centroid, is
//! never predicted and has probability 0 (with a remark); a part with one
//! class predicts that class (with a remark); the learner has no settings,
//! so every candidate of a family gets the same outcome, and its simplicity
//! key is empty. Centroids are shifted means in row order, so a constant
//! feature has exactly its constant as centroid value.

use ndarray::{ArrayView1, ArrayView2};

use super::baseline::fit_common::{
    ClassPart, argmin, check_matrices, class_part, data_error, probability_matrix, same_for_all,
    shifted_mean, softmax,
};
use super::{
    LearnError, Learner, Note, Outcome, Predictions, SettingSpec, Settings, Task, TrainPart,
};

/// The `nearest-centroid` learner.
#[derive(Clone, Copy, Debug, Default)]
pub struct MeanCentroid;

const NAME: &str = "nearest-centroid";

const SETTINGS: &[SettingSpec] = &[];

impl Learner for MeanCentroid {
    fn name(&self) -> &'static str {
        NAME
    }

    fn settings(&self) -> &'static [SettingSpec] {
        SETTINGS
    }

    fn supports(&self, task: Task) -> bool {
        matches!(task, Task::Classification { .. })
    }

    /// Empty: the learner has no settings, so its candidates are equally
    /// simple.
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

fn fit(
    task: Task,
    train: &TrainPart<'_>,
    queries: &[ArrayView2<'_, f64>],
) -> Result<Outcome, LearnError> {
    let part = class_part(NAME, task, train)?;
    check_matrices(NAME, train, queries)?;
    let centroids = class_means(train.x, &part);
    let predictions = queries
        .iter()
        .map(|q| predict(&centroids, *q, part.classes))
        .collect::<Result<Vec<_>, _>>()?;
    let note = Note {
        remark: part.remark("they get no centroid and probability 0"),
        ..Note::default()
    };
    Ok(Outcome { predictions, note })
}

/// The mean row of each class, `None` for a class without training rows.
pub(crate) fn class_means(x: ArrayView2<'_, f64>, part: &ClassPart<'_>) -> Vec<Option<Vec<f64>>> {
    (0..part.classes)
        .map(|c| {
            if part.counts[c] == 0 {
                return None;
            }
            let rows: Vec<usize> = (0..part.y.len())
                .filter(|&r| part.y[r] as usize == c)
                .collect();
            let mean = (0..x.ncols())
                .map(|j| shifted_mean(rows.iter().map(|&r| x[[r, j]])))
                .collect();
            Some(mean)
        })
        .collect()
}

/// Squared Euclidean distance, summed in feature order.
fn squared_distance(a: ArrayView1<'_, f64>, b: &[f64]) -> f64 {
    let mut s = 0.0;
    for (x, c) in a.iter().zip(b) {
        let t = x - c;
        s += t * t;
    }
    s
}

fn predict(
    centroids: &[Option<Vec<f64>>],
    q: ArrayView2<'_, f64>,
    classes: usize,
) -> Result<Predictions, LearnError> {
    let mut labels = Vec::with_capacity(q.nrows());
    let mut rows = Vec::with_capacity(q.nrows());
    for row in q.rows() {
        let d2: Vec<Option<f64>> = centroids
            .iter()
            .map(|c| c.as_ref().map(|c| squared_distance(row, c)))
            .collect();
        if d2.iter().flatten().any(|d| !d.is_finite()) {
            return Err(data_error(
                NAME,
                "a squared distance to a centroid overflows; scale the features",
            ));
        }
        let Some(best) = argmin(&d2) else {
            return Err(data_error(NAME, "no class has training rows"));
        };
        labels.push(best as u32);
        let scores: Vec<Option<f64>> = d2.iter().map(|d| d.map(|d| -d / 2.0)).collect();
        rows.push(softmax(&scores));
    }
    Ok(Predictions::Classes {
        labels,
        probabilities: probability_matrix(rows, classes),
    })
}

#[cfg(test)]
mod tests {
    use ndarray::{Array2, array};

    use super::*;
    use crate::learn::Targets;

    fn run(
        x: &Array2<f64>,
        y: &[u32],
        classes: usize,
        q: &Array2<f64>,
        family: usize,
    ) -> Vec<Result<Outcome, LearnError>> {
        let train = TrainPart {
            x: x.view(),
            y: Targets::Classes(y),
        };
        let task = Task::Classification { classes };
        MeanCentroid.evaluate_family(task, &train, &[q.view()], &vec![Settings::new(); family])
    }

    fn unpack(r: &Result<Outcome, LearnError>) -> (Vec<u32>, Array2<f64>, Note) {
        let o = r.as_ref().unwrap();
        match &o.predictions[0] {
            Predictions::Classes {
                labels,
                probabilities,
            } => (labels.clone(), probabilities.clone(), o.note.clone()),
            Predictions::Values(_) => panic!("expected classes"),
        }
    }

    #[test]
    fn hand_worked_centroids_distances_and_probabilities() {
        // Class 0 rows (0,0),(2,0): centroid (1,0). Class 1 rows (4,4),(6,4),
        // (5,7): centroid (5,5). Query (1,1): d0^2 = 1, d1^2 = 16+16 = 32,
        // p0 = 1 / (1 + exp(-(32-1)/2)) = 1 / (1 + exp(-15.5)), worked by hand.
        let x = array![[0.0, 0.0], [2.0, 0.0], [4.0, 4.0], [6.0, 4.0], [5.0, 7.0]];
        let y = [0, 0, 1, 1, 1];
        // Query (3,2.5) is equidistant: d0^2 = 4 + 6.25 = d1^2 = 4 + 6.25; the
        // tie goes to class 0 and both get probability 1/2.
        let q = array![[1.0, 1.0], [3.0, 2.5], [6.0, 6.0]];
        let (labels, p, note) = unpack(&run(&x, &y, 2, &q, 1)[0]);
        assert_eq!(labels, vec![0, 0, 1]);
        let p0 = 1.0 / (1.0 + (-15.5f64).exp());
        assert!((p[[0, 0]] - p0).abs() < 1e-15 && (p[[0, 1]] - (1.0 - p0)).abs() < 1e-15);
        assert_eq!((p[[1, 0]], p[[1, 1]]), (0.5, 0.5));
        assert_eq!(note.remark, None);
    }

    #[test]
    fn absent_class_is_never_predicted_and_one_class_is_remarked() {
        let x = array![[0.0], [1.0], [10.0]];
        let y = [0, 0, 2];
        let q = array![[5.6], [100.0]];
        let (labels, p, note) = unpack(&run(&x, &y, 3, &q, 1)[0]);
        assert_eq!(labels, vec![2, 2]);
        assert_eq!(p.column(1).to_vec(), vec![0.0, 0.0]);
        assert!(
            note.remark
                .unwrap()
                .contains("class codes 1 have no training rows")
        );
        let (labels, p, note) = unpack(&run(&x, &[1, 1, 1], 3, &q, 1)[0]);
        assert_eq!(labels, vec![1, 1]);
        assert_eq!(p.row(0).to_vec(), vec![0.0, 1.0, 0.0]);
        assert!(note.remark.unwrap().contains("one class"));
    }

    #[test]
    fn family_is_bitwise_each_alone_and_repeatable() {
        let x = array![[0.3, 1.0], [0.1, 1.0], [0.7, 1.0], [0.9, 1.0]];
        let y = [0, 0, 1, 1];
        let q = array![[0.45, 1.0], [0.55, 2.0]];
        let fam = run(&x, &y, 2, &q, 3);
        let alone = run(&x, &y, 2, &q, 1);
        for slot in &fam {
            let (l, p, _) = unpack(slot);
            let (la, pa, _) = unpack(&alone[0]);
            assert_eq!(l, la);
            let bits = |m: &Array2<f64>| m.iter().map(|v| v.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(&p), bits(&pa));
            assert!(p.iter().all(|v| v.is_finite()));
        }
    }

    #[test]
    fn regression_and_huge_values_are_errors() {
        let x = array![[0.0], [1.0]];
        let train = TrainPart {
            x: x.view(),
            y: Targets::Values(&[1.0, 2.0]),
        };
        let out = MeanCentroid.evaluate_family(Task::Regression, &train, &[], &[Settings::new()]);
        assert!(matches!(out[0], Err(LearnError::Task { .. })));
        let x = array![[-1e300], [1e300]];
        let q = array![[1e300]];
        assert!(matches!(
            run(&x, &[0, 1], 2, &q, 1)[0],
            Err(LearnError::Data { .. })
        ));
    }
}
