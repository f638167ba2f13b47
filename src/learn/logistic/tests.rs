use std::path::Path;
use std::process::Command;

use ndarray::{Array2, array};

use super::*;
use crate::learn::SettingValue;
use crate::learn::ridge::numeric::testdata::penguins;

fn lambda(l: f64) -> Settings {
    Settings::from([("lambda".to_string(), SettingValue::Float(l))])
}

fn classes_of(o: &Outcome, q: usize) -> (&[u32], &Array2<f64>) {
    match &o.predictions[q] {
        Predictions::Classes {
            labels,
            probabilities,
        } => (labels, probabilities),
        Predictions::Values(_) => panic!("logistic predicts classes"),
    }
}

fn bits(outcomes: &[Result<Outcome, LearnError>]) -> Vec<(Vec<u32>, Vec<u64>, Note)> {
    outcomes
        .iter()
        .map(|o| {
            let o = o.as_ref().expect("fits");
            let (labels, p) = classes_of(o, 0);
            (
                labels.to_vec(),
                p.iter().map(|v| v.to_bits()).collect(),
                o.note.clone(),
            )
        })
        .collect()
}

/// Runs tests/reference/logistic.py. `None` (after printing "skipped: ...")
/// when python3 or its libraries are missing, unless
/// HOLDFAST_REQUIRE_REFERENCE=1, when that is a failure.
fn reference() -> Option<serde_json::Value> {
    let required = std::env::var("HOLDFAST_REQUIRE_REFERENCE").as_deref() == Ok("1");
    let skip = |why: String| {
        assert!(!required, "HOLDFAST_REQUIRE_REFERENCE=1 but {why}");
        println!("skipped: {why}");
        None
    };
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/reference/logistic.py");
    let out = match Command::new("python3").arg(&script).output() {
        Ok(out) => out,
        Err(e) => return skip(format!("python3 could not be run: {e}")),
    };
    let stderr = String::from_utf8_lossy(&out.stderr).trim().to_string();
    if out.status.code() == Some(2) {
        return skip(stderr);
    }
    assert!(
        out.status.success(),
        "tests/reference/logistic.py failed: {stderr}"
    );
    Some(serde_json::from_slice(&out.stdout).expect("the script prints JSON"))
}

fn as_f64s(v: &serde_json::Value) -> Vec<f64> {
    v.as_array()
        .expect("an array")
        .iter()
        .map(|x| x.as_f64().expect("a number"))
        .collect()
}

/// Largest relative difference between our coefficients and statsmodels'.
fn compare(problem: &serde_json::Value) -> f64 {
    let features: Vec<String> = problem["features"]
        .as_array()
        .expect("features")
        .iter()
        .map(|f| f.as_str().expect("a name").to_string())
        .collect();
    let features: Vec<&str> = features.iter().map(String::as_str).collect();
    let target = problem["target"].as_str().expect("a target");
    let (x, y, names) = penguins(target, &features);
    assert_eq!(
        x.nrows() as u64,
        problem["rows"].as_u64().expect("rows"),
        "{target}: rows"
    );
    let want_names: Vec<&str> = problem["classes"]
        .as_array()
        .expect("classes")
        .iter()
        .map(|c| c.as_str().expect("a label"))
        .collect();
    assert_eq!(names, want_names, "{target}: class order");
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let fit = Logistic::fit_coefficients(&train, names.len(), 0.0).expect("fits");
    assert_eq!(fit.note.converged, Some(true), "{target}: {:?}", fit.note);
    let want: Vec<Vec<f64>> = problem["coefficients"]
        .as_array()
        .expect("coefficients")
        .iter()
        .map(as_f64s)
        .collect();
    assert_eq!(fit.classes.len(), want.len(), "{target}: classes fitted");
    let mut worst: f64 = 0.0;
    for ((_, ours), theirs) in fit.classes.iter().zip(&want) {
        for (a, b) in ours.iter().zip(theirs) {
            worst = worst.max((a - b).abs() / b.abs());
        }
    }
    println!(
        "logistic vs statsmodels, {target} ({} classes, {} rows, {} newton iterations): \
         largest relative difference {worst:.3e}",
        names.len(),
        x.nrows(),
        fit.iterations
    );
    worst
}

#[test]
fn agrees_with_statsmodels_on_penguins() {
    // Reference: statsmodels Logit (binary) and MNLogit (multinomial), run live
    // by tests/reference/logistic.py; versions printed below [ref].
    let Some(reference) = reference() else {
        return;
    };
    println!("reference versions: {}", reference["versions"]);
    for problem in ["binary", "multinomial"] {
        let worst = compare(&reference[problem]);
        assert!(
            worst <= 1e-8,
            "{problem}: relative difference {worst:e} above 1e-8"
        );
    }
}

#[test]
fn saturated_binary_model_matches_the_closed_form() {
    // By definition: with one 0/1 feature the MLE reproduces the observed
    // shares, a = logit(1/4) = -ln 3, b = logit(3/4) - logit(1/4) = 2 ln 3.
    let x = array![[0.0], [0.0], [0.0], [0.0], [1.0], [1.0], [1.0], [1.0]];
    let y = [1, 0, 0, 0, 1, 1, 1, 0];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let fit = Logistic::fit_coefficients(&train, 2, 0.0).expect("fits");
    let ln3 = 3.0_f64.ln();
    let (class, coef) = &fit.classes[0];
    assert_eq!(
        (*class, fit.reference, fit.note.converged),
        (1, 0, Some(true))
    );
    assert!(
        (coef[0] + ln3).abs() < 1e-12 && (coef[1] - 2.0 * ln3).abs() < 1e-12,
        "{coef:?}"
    );
}

#[test]
fn penalised_fit_solves_its_score_equations() {
    // Independent check of the penalty convention: at the optimum of
    // -loglik + lambda/2 |b|^2, sum_i (y_ik - p_ik) x_ij = lambda b_kj and
    // sum_i (y_ik - p_ik) = 0 (common practice: first-order conditions).
    let (x, y, _) = penguins("island", &["bill_length_mm", "bill_depth_mm"]);
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let l = 3.0;
    let fit = Logistic::fit_coefficients(&train, 3, l).expect("fits");
    let out = Logistic.evaluate_family(
        Task::Classification { classes: 3 },
        &train,
        &[x.view()],
        &[lambda(l)],
    );
    let (_, p) = classes_of(out[0].as_ref().expect("fits"), 0);
    for (class, coef) in &fit.classes {
        let k = *class as usize;
        let mut score = [0.0; 3];
        for i in 0..x.nrows() {
            let r = f64::from(u8::from(y[i] as usize == k)) - p[[i, k]];
            score[0] += r;
            score[1] += r * x[[i, 0]];
            score[2] += r * x[[i, 1]];
        }
        assert!(score[0].abs() < 1e-8, "intercept score {}", score[0]);
        for j in 0..2 {
            assert!(
                (score[j + 1] - l * coef[j + 1]).abs() < 1e-6,
                "class {k} feature {j}"
            );
        }
    }
}

#[test]
fn family_equals_each_candidate_alone_bit_for_bit() {
    let (x, y, _) = penguins("species", &["bill_length_mm", "flipper_length_mm"]);
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let task = Task::Classification { classes: 3 };
    let family: Vec<Settings> = [0.0, 0.01, 1.0, 50.0].map(lambda).to_vec();
    let together = bits(&Logistic.evaluate_family(task, &train, &[x.view()], &family));
    for (i, s) in family.iter().enumerate() {
        let alone =
            bits(&Logistic.evaluate_family(task, &train, &[x.view()], std::slice::from_ref(s)));
        assert_eq!(alone[0], together[i], "lambda index {i}");
    }
    let again = bits(&Logistic.evaluate_family(task, &train, &[x.view()], &family));
    assert_eq!(again, together, "same inputs, same bits");
}

#[test]
fn separable_classes_are_reported_as_not_converged() {
    let x = array![[0.0], [1.0], [2.0], [3.0], [4.0], [5.0]];
    let y = [0, 0, 0, 1, 1, 1];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let task = Task::Classification { classes: 2 };
    let out = Logistic.evaluate_family(task, &train, &[x.view()], &[lambda(0.0), lambda(1.0)]);
    let free = out[0].as_ref().expect("reported");
    assert_eq!(free.note.converged, Some(false));
    assert!(
        free.note
            .remark
            .as_deref()
            .unwrap_or("")
            .contains("separable")
    );
    let (labels, p) = classes_of(free, 0);
    assert_eq!(labels, &y);
    assert!(p.iter().all(|v| v.is_finite()));
    let penalised = out[1].as_ref().expect("fits");
    assert_eq!(penalised.note.converged, Some(true));
}

#[test]
fn one_class_in_training_predicts_it() {
    let x = array![[0.0, 1.0], [1.0, 3.0], [2.0, 2.0]];
    let y = [2, 2, 2];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let out = Logistic.evaluate_family(
        Task::Classification { classes: 3 },
        &train,
        &[x.view()],
        &[lambda(0.0)],
    );
    let o = out[0].as_ref().expect("fits");
    let (labels, p) = classes_of(o, 0);
    assert_eq!(labels, &[2, 2, 2]);
    assert_eq!(
        p,
        &array![[0.0, 0.0, 1.0], [0.0, 0.0, 1.0], [0.0, 0.0, 1.0]]
    );
    assert_eq!(o.note.converged, Some(true));
    assert!(o.note.remark.as_deref().unwrap_or("").contains("one class"));
}

#[test]
fn degenerate_features_stay_finite() {
    // A constant and a duplicated feature at lambda 0, and a class absent
    // from the training part.
    let x = array![
        [1.0, 5.0, 1.0],
        [2.0, 5.0, 2.0],
        [3.0, 5.0, 3.0],
        [4.0, 5.0, 4.0],
        [2.5, 5.0, 2.5],
        [1.5, 5.0, 1.5]
    ];
    let y = [0, 2, 0, 2, 0, 2];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let out = Logistic.evaluate_family(
        Task::Classification { classes: 3 },
        &train,
        &[x.view()],
        &[lambda(0.0)],
    );
    let o = out[0].as_ref().expect("fits");
    let (labels, p) = classes_of(o, 0);
    assert!(p.iter().all(|v| v.is_finite()));
    assert!(p.column(1).iter().all(|&v| v == 0.0), "absent class gets 0");
    for row in p.rows() {
        assert!((row.sum() - 1.0).abs() < 1e-15);
    }
    assert!(labels.iter().all(|&l| l != 1));
    assert_eq!(o.note.converged, Some(true));
    let remark = o.note.remark.as_deref().unwrap_or("");
    assert!(
        remark.contains("rank-deficient") && remark.contains("absent"),
        "{remark}"
    );
    let fit = Logistic::fit_coefficients(&train, 3, 0.0).expect("fits");
    let coef = &fit.classes[0].1;
    assert_eq!(coef[2], 0.0, "the constant feature's coefficient");
    assert!(
        (coef[1] - coef[3]).abs() < 1e-9,
        "duplicated columns share: {coef:?}"
    );
}

#[test]
fn bad_inputs_are_errors_not_panics() {
    let x = array![[1.0], [2.0]];
    let v = [1.0, 2.0];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Values(&v),
    };
    let out = Logistic.evaluate_family(Task::Regression, &train, &[], &[lambda(1.0)]);
    assert!(matches!(&out[0], Err(LearnError::Task { .. })));
    let y = [0, 5];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let out = Logistic.evaluate_family(
        Task::Classification { classes: 2 },
        &train,
        &[],
        &[lambda(1.0)],
    );
    assert!(matches!(&out[0], Err(LearnError::Data { .. })));
    let empty = Array2::<f64>::zeros((0, 1));
    let train = TrainPart {
        x: empty.view(),
        y: Targets::Classes(&[]),
    };
    let out = Logistic.evaluate_family(
        Task::Classification { classes: 2 },
        &train,
        &[],
        &[lambda(1.0)],
    );
    assert!(matches!(&out[0], Err(LearnError::Data { .. })));
}

#[test]
fn a_larger_lambda_is_simpler() {
    assert!(Logistic.simplicity(&lambda(10.0)) > Logistic.simplicity(&lambda(0.1)));
}

#[test]
fn no_features_gives_the_class_shares() {
    // By definition: the intercept-only MLE reproduces the training shares.
    let x = Array2::<f64>::zeros((6, 0));
    let y = [0, 0, 1, 1, 1, 2];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let q = Array2::<f64>::zeros((1, 0));
    let out = Logistic.evaluate_family(
        Task::Classification { classes: 3 },
        &train,
        &[q.view()],
        &[lambda(0.0)],
    );
    let o = out[0].as_ref().expect("fits");
    let (labels, p) = classes_of(o, 0);
    assert_eq!((labels, o.note.converged), (&[1][..], Some(true)));
    for (got, want) in p.row(0).iter().zip([2.0 / 6.0, 3.0 / 6.0, 1.0 / 6.0]) {
        assert!((got - want).abs() < 1e-14, "{got} vs {want}");
    }
}

#[test]
fn many_rows_converge_past_the_resolution_of_the_objective() {
    // 5000 rows, 10 features, 4 classes: the objective (a sum of 5000 rounded
    // terms) cannot resolve the last Newton steps; the fit must still
    // converge and solve its score equations (first-order conditions).
    let (n, p) = (5000, 10);
    let mut state = 12345_u64;
    let mut uniform = || {
        // Knuth's MMIX linear congruential generator (common practice).
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (state >> 11) as f64 / (1_u64 << 53) as f64
    };
    let x = Array2::from_shape_fn((n, p), |_| uniform());
    let y: Vec<u32> = (0..n)
        .map(|i| ((x[[i, 0]] + x[[i, 1]] + 0.3 * uniform()) * 2.0) as u32 % 4)
        .collect();
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let out = Logistic.evaluate_family(
        Task::Classification { classes: 4 },
        &train,
        &[x.view()],
        &[lambda(1.0)],
    );
    let o = out[0].as_ref().expect("fits");
    assert_eq!(o.note.converged, Some(true), "{:?}", o.note);
    let (_, prob) = classes_of(o, 0);
    for k in 1..4 {
        let score: f64 = (0..n)
            .map(|i| f64::from(u8::from(y[i] == k)) - prob[[i, k as usize]])
            .sum();
        assert!(score.abs() < 1e-8, "class {k}: intercept score {score:e}");
    }
}
