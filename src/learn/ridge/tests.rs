use std::path::Path;

use ndarray::{Array2, ArrayView2, array};

use super::*;
use crate::learn::SettingValue;

fn lambda(l: f64) -> Settings {
    Settings::from([("lambda".to_string(), SettingValue::Float(l))])
}

fn values(o: &Outcome, q: usize) -> &[f64] {
    match &o.predictions[q] {
        Predictions::Values(v) => v,
        Predictions::Classes { .. } => panic!("ridge predicts values"),
    }
}

fn bits(outcomes: &[Result<Outcome, LearnError>]) -> Vec<Vec<u64>> {
    outcomes
        .iter()
        .map(|o| {
            let o = o.as_ref().expect("fits");
            (0..o.predictions.len())
                .flat_map(|q| values(o, q).iter().map(|v| v.to_bits()))
                .collect()
        })
        .collect()
}

fn read_longley() -> (Array2<f64>, Vec<f64>) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/longley.csv");
    let mut reader = csv::Reader::from_path(path).expect("tests/data/longley.csv is readable");
    let mut x = Vec::new();
    let mut y = Vec::new();
    for record in reader.records() {
        let record = record.expect("a csv record");
        let row: Vec<f64> = record
            .iter()
            .map(|c| c.parse().expect("a number"))
            .collect();
        y.push(row[0]);
        x.extend_from_slice(&row[1..]);
    }
    let n = y.len();
    (Array2::from_shape_vec((n, 6), x).expect("16 x 6"), y)
}

/// LRE = -log10(|computed - certified| / |certified|), capped at 15 (NIST
/// StRD convention, as in the reference README).
fn lre(computed: f64, certified: f64) -> f64 {
    let rel = (computed - certified).abs() / certified.abs();
    if rel == 0.0 {
        15.0
    } else {
        (-rel.log10()).min(15.0)
    }
}

#[test]
fn longley_reproduces_the_nist_certified_coefficients() {
    // NIST StRD, linear regression, "Longley" (higher difficulty): certified
    // values as listed in shared/reference/README.md [pub].
    let certified = [
        ("intercept", -3482258.63459582),
        ("gnp_deflator", 15.0618722713733),
        ("gnp", -0.358191792925910E-01),
        ("unemployed", -2.02022980381683),
        ("armed_forces", -1.03322686717359),
        ("population", -0.511041056535807E-01),
        ("year", 1829.15146461355),
    ];
    let (x, y) = read_longley();
    let train = TrainPart {
        x: x.view(),
        y: Targets::Values(&y),
    };
    let fit = Ridge::fit_coefficients(&train, 0.0).expect("fits");
    assert_eq!(fit.rank, 6);
    let computed: Vec<f64> = std::iter::once(fit.intercept)
        .chain(fit.coefficients)
        .collect();
    for ((name, cert), got) in certified.iter().zip(&computed) {
        let l = lre(*got, *cert);
        println!("longley {name}: computed {got:e}, certified {cert:e}, LRE {l:.2}");
        assert!(l >= 7.0, "{name}: LRE {l:.2} below 7");
    }
}

#[test]
fn one_feature_matches_the_closed_form() {
    // By definition (common practice): one feature, b = Sxy / (Sxx + lambda).
    // x = 1..4, y = 2,3,5,6: means 2.5 and 4, Sxx = 5, Sxy = 7; lambda 2 gives
    // b = 1, b0 = 1.5, so x = 10 predicts 11.5; lambda 0 gives b = 1.4, b0 = 0.5.
    let x = array![[1.0], [2.0], [3.0], [4.0]];
    let y = [2.0, 3.0, 5.0, 6.0];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Values(&y),
    };
    let q = array![[10.0]];
    let out = Ridge.evaluate_family(
        Task::Regression,
        &train,
        &[q.view()],
        &[lambda(2.0), lambda(0.0)],
    );
    let got: Vec<f64> = out
        .iter()
        .map(|o| values(o.as_ref().expect("fits"), 0)[0])
        .collect();
    for (g, want) in got.iter().zip([11.5, 14.5]) {
        assert!((g - want).abs() < 1e-12, "{g} vs {want}");
    }
    let fit = Ridge::fit_coefficients(&train, 2.0).expect("fits");
    assert!((fit.intercept - 1.5).abs() < 1e-12 && (fit.coefficients[0] - 1.0).abs() < 1e-12);
}

#[test]
fn two_features_match_the_normal_equations() {
    // Independent check: (Xc'Xc + lambda I) b = Xc'yc solved by Cramer's rule.
    let x = array![[1.0, 0.5], [2.0, -1.0], [0.0, 2.0], [3.0, 1.5], [1.5, 0.0]];
    let y = [1.0, 2.5, -0.5, 4.0, 1.0];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Values(&y),
    };
    for l in [0.0, 0.3, 7.0] {
        let fit = Ridge::fit_coefficients(&train, l).expect("fits");
        let (mx, my) = (
            [x.column(0).mean().unwrap(), x.column(1).mean().unwrap()],
            y.iter().sum::<f64>() / 5.0,
        );
        let mut g = [[0.0; 2]; 2];
        let mut r = [0.0; 2];
        for i in 0..5 {
            let c = [x[[i, 0]] - mx[0], x[[i, 1]] - mx[1]];
            for a in 0..2 {
                r[a] += c[a] * (y[i] - my);
                for b in 0..2 {
                    g[a][b] += c[a] * c[b];
                }
            }
        }
        g[0][0] += l;
        g[1][1] += l;
        let det = g[0][0] * g[1][1] - g[0][1] * g[1][0];
        let want = [
            (r[0] * g[1][1] - g[0][1] * r[1]) / det,
            (g[0][0] * r[1] - r[0] * g[1][0]) / det,
        ];
        for (got, want) in fit.coefficients.iter().zip(want) {
            assert!((got - want).abs() < 1e-12, "lambda {l}: {got} vs {want}");
        }
    }
}

#[test]
fn family_equals_each_candidate_alone_bit_for_bit() {
    let (x, y) = read_longley();
    let train = TrainPart {
        x: x.view(),
        y: Targets::Values(&y),
    };
    let q: ArrayView2<'_, f64> = x.slice(ndarray::s![3..9, ..]);
    let family: Vec<Settings> = [0.0, 1e-3, 0.5, 10.0, 1e6].map(lambda).to_vec();
    let together = bits(&Ridge.evaluate_family(Task::Regression, &train, &[q, x.view()], &family));
    for (i, s) in family.iter().enumerate() {
        let alone = bits(&Ridge.evaluate_family(
            Task::Regression,
            &train,
            &[q, x.view()],
            std::slice::from_ref(s),
        ));
        assert_eq!(alone[0], together[i], "lambda index {i}");
    }
}

#[test]
fn same_inputs_give_the_same_bits() {
    let (x, y) = read_longley();
    let train = TrainPart {
        x: x.view(),
        y: Targets::Values(&y),
    };
    let family = [lambda(0.0), lambda(2.5)];
    let a = bits(&Ridge.evaluate_family(Task::Regression, &train, &[x.view()], &family));
    let b = bits(&Ridge.evaluate_family(Task::Regression, &train, &[x.view()], &family));
    assert_eq!(a, b);
}

#[test]
fn duplicated_column_at_lambda_zero_gives_the_minimum_norm_solution() {
    // y = 2x exactly with the column twice: every b1 + b2 = 2 fits, the
    // minimum-norm one is b1 = b2 = 1 (by definition).
    let x = array![[1.0, 1.0], [2.0, 2.0], [4.0, 4.0], [7.0, 7.0]];
    let y = [2.0, 4.0, 8.0, 14.0];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Values(&y),
    };
    let fit = Ridge::fit_coefficients(&train, 0.0).expect("fits");
    assert_eq!(fit.rank, 1);
    for b in &fit.coefficients {
        assert!((b - 1.0).abs() < 1e-12, "{b}");
    }
    let out = Ridge.evaluate_family(Task::Regression, &train, &[x.view()], &[lambda(0.0)]);
    let o = out[0].as_ref().expect("fits");
    assert!(
        o.note
            .remark
            .as_deref()
            .unwrap_or("")
            .contains("rank 1 of 2")
    );
    assert!(
        values(o, 0)
            .iter()
            .zip(&y)
            .all(|(p, t)| (p - t).abs() < 1e-12)
    );
}

#[test]
fn degenerate_designs_stay_finite() {
    let cases: Vec<(&str, Array2<f64>, Vec<f64>)> = vec![
        (
            "more features than rows",
            array![[1.0, 2.0, 3.0], [0.0, 1.0, 5.0]],
            vec![1.0, 2.0],
        ),
        ("one row", array![[1.0, 2.0]], vec![3.0]),
        (
            "constant feature",
            array![[1.0, 5.0], [2.0, 5.0], [3.0, 5.0]],
            vec![1.0, 2.0, 4.0],
        ),
        ("no features", Array2::zeros((3, 0)), vec![1.0, 2.0, 6.0]),
    ];
    for (what, x, y) in cases {
        let train = TrainPart {
            x: x.view(),
            y: Targets::Values(&y),
        };
        let out = Ridge.evaluate_family(
            Task::Regression,
            &train,
            &[x.view()],
            &[lambda(0.0), lambda(1.0)],
        );
        for o in &out {
            let o = o.as_ref().unwrap_or_else(|e| panic!("{what}: {e}"));
            assert!(values(o, 0).iter().all(|v| v.is_finite()), "{what}");
        }
    }
    // One row: nothing to fit but the mean (by definition).
    let x = array![[1.0, 2.0]];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Values(&[3.0]),
    };
    let fit = Ridge::fit_coefficients(&train, 0.0).expect("fits");
    assert_eq!(
        (fit.rank, fit.intercept, fit.coefficients),
        (0, 3.0, vec![0.0, 0.0])
    );
    // A constant feature gets coefficient 0 (its centred column is zero).
    let x = array![[1.0, 5.0], [2.0, 5.0], [3.0, 5.0]];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Values(&[1.0, 2.0, 4.0]),
    };
    let fit = Ridge::fit_coefficients(&train, 0.0).expect("fits");
    assert_eq!(fit.coefficients[1], 0.0);
    assert!((fit.coefficients[0] - 1.5).abs() < 1e-12); // Sxy/Sxx = 3/2
}

#[test]
fn bad_inputs_are_errors_not_panics() {
    let x = array![[1.0], [f64::NAN]];
    let y = [1.0, 2.0];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Values(&y),
    };
    let out = Ridge.evaluate_family(Task::Regression, &train, &[], &[lambda(1.0)]);
    assert!(
        matches!(&out[0], Err(LearnError::Data { message, .. }) if message.contains("non-finite"))
    );
    let x = array![[1.0], [2.0]];
    let classes = [0_u32, 1];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&classes),
    };
    let out = Ridge.evaluate_family(
        Task::Classification { classes: 2 },
        &train,
        &[],
        &[lambda(1.0)],
    );
    assert!(matches!(&out[0], Err(LearnError::Task { .. })));
    let train = TrainPart {
        x: x.view(),
        y: Targets::Values(&y),
    };
    let out = Ridge.evaluate_family(Task::Regression, &train, &[], &[lambda(-1.0)]);
    assert!(matches!(&out[0], Err(LearnError::Setting { .. })));
}

#[test]
fn a_larger_lambda_is_simpler() {
    assert!(Ridge.simplicity(&lambda(10.0)) > Ridge.simplicity(&lambda(0.1)));
}
