use ndarray::{Array2, array};
use proptest::prelude::*;

use super::*;

const NAN: f64 = f64::NAN;

fn numeric(name: &str) -> FeatureKind {
    FeatureKind::Numeric {
        column: name.into(),
    }
}

fn indicator(column: &str, level: &str) -> FeatureKind {
    FeatureKind::Indicator {
        column: column.into(),
        level: level.into(),
    }
}

fn spec(scale: Scale, impute: Impute) -> PrepSpec {
    PrepSpec { scale, impute }
}

fn column(values: &[f64]) -> Array2<f64> {
    Array2::from_shape_vec((values.len(), 1), values.to_vec()).expect("a column")
}

/// Same values, NaN equal to NaN.
fn same(a: &[f64], b: &[f64]) -> bool {
    a.len() == b.len()
        && a.iter()
            .zip(b)
            .all(|(x, y)| (x.is_nan() && y.is_nan()) || (x - y).abs() <= 1e-15 * y.abs().max(1.0))
}

/// (what, spec, training column, its output, other rows, their output)
type Case<'a> = (
    &'a str,
    PrepSpec,
    &'a [f64],
    &'a [f64],
    &'a [f64],
    &'a [f64],
);

#[test]
fn statistics_of_one_numeric_column() {
    use Impute as I;
    use Scale as S;
    // Expected values by definition (common practice); the z-scores were
    // worked out with numpy 2.4.6 (x - mean) / std(ddof=1) [ref].
    let cases: &[Case] = &[
        (
            "z-score: mean 2.5, sd sqrt(5/3)",
            spec(S::ZScore, I::None),
            &[1., 2., 3., 4.],
            &[
                -1.161895003862225,
                -0.3872983346207417,
                0.3872983346207417,
                1.161895003862225,
            ],
            &[2.5],
            &[0.0],
        ),
        (
            "min-max: min 2, range 8",
            spec(S::MinMax, I::None),
            &[2., 4., 6., 10.],
            &[0., 0.25, 0.5, 1.],
            &[14., 0.],
            &[1.5, -0.25],
        ),
        (
            "mean imputation: mean of 1, 3, 8 is 4",
            spec(S::None, I::Mean),
            &[1., NAN, 3., 8.],
            &[1., 4., 3., 8.],
            &[NAN],
            &[4.],
        ),
        (
            "median imputation, odd count: median of 1, 3, 8 is 3",
            spec(S::None, I::Median),
            &[8., NAN, 1., 3.],
            &[8., 3., 1., 3.],
            &[NAN],
            &[3.],
        ),
        (
            "median imputation, even count: midpoint of 2 and 3",
            spec(S::None, I::Median),
            &[10., 2., NAN, 1., 3.],
            &[10., 2., 2.5, 1., 3.],
            &[NAN],
            &[2.5],
        ),
        (
            "impute then scale: 1, 4, 3, 8 has mean 4 and sd sqrt(26/3)",
            spec(S::ZScore, I::Mean),
            &[1., NAN, 3., 8.],
            &[
                -1.0190493307301363,
                0.0,
                -0.3396831102433787,
                1.3587324409735149,
            ],
            &[NAN],
            &[0.0],
        ),
        (
            "z-score of a constant column: centred only, divisor 1",
            spec(S::ZScore, I::None),
            &[5., 5., 5.],
            &[0., 0., 0.],
            &[7., 4.],
            &[2., -1.],
        ),
        (
            "min-max of a constant column: always 0",
            spec(S::MinMax, I::Mean),
            &[5., NAN, 5.],
            &[0., 0., 0.],
            &[7., NAN],
            &[0., 0.],
        ),
        (
            "no imputation: NaN is not hidden, statistics use observed cells",
            spec(S::MinMax, I::None),
            &[0., NAN, 4.],
            &[0., NAN, 1.],
            &[NAN, 2.],
            &[NAN, 0.5],
        ),
        (
            "one training row is a constant column",
            spec(S::ZScore, I::Median),
            &[3.],
            &[0.],
            &[NAN, 4.],
            &[0., 1.],
        ),
        (
            "no scaling, no imputation: unchanged",
            spec(S::None, I::None),
            &[-0.5, 1e300],
            &[-0.5, 1e300],
            &[NAN],
            &[NAN],
        ),
    ];
    for &(what, spec, train, train_out, other, other_out) in cases {
        let t = Transform::fit(spec, &[numeric("c")], column(train).view())
            .unwrap_or_else(|e| panic!("{what}: {e}"));
        let got = t.apply(column(train).view()).column(0).to_vec();
        assert!(same(&got, train_out), "{what}: training rows {got:?}");
        let got = t.apply(column(other).view()).column(0).to_vec();
        assert!(same(&got, other_out), "{what}: other rows {got:?}");
    }
}

#[test]
fn indicators_are_never_scaled_and_unseen_levels_are_zeroed() {
    let kinds = [indicator("site", "a"), indicator("site", "b"), numeric("t")];
    let train = array![[1., 0., 10.], [0., 0., 20.], [1., 0., 30.]];
    for s in [Scale::ZScore, Scale::MinMax] {
        let t = Transform::fit(spec(s, Impute::Mean), &kinds, train.view()).expect("fits");
        // Level b never occurs in training: its column is zeroed, so a row
        // with level b has all zeros in the block; level a passes through.
        let other = array![[0., 1., 20.], [1., 0., 20.]];
        let out = t.apply(other.view());
        assert_eq!(out.column(0).to_vec(), vec![0., 1.]);
        assert_eq!(out.column(1).to_vec(), vec![0., 0.]);
        assert_eq!(t.apply(train.view()).column(0).to_vec(), vec![1., 0., 1.]);
    }
}

#[test]
fn a_column_missing_in_all_training_rows_is_an_error_naming_it() {
    let kinds = [numeric("oil_temp"), numeric("vib_x")];
    let train = array![[1., NAN], [2., NAN]];
    for impute in [Impute::Mean, Impute::Median] {
        let err = Transform::fit(spec(Scale::None, impute), &kinds, train.view()).unwrap_err();
        let PrepError::Data(message) = err;
        assert!(
            message.contains("column vib_x") && message.contains("no observed value"),
            "{message}"
        );
    }
    let err = Transform::fit(spec(Scale::ZScore, Impute::None), &kinds, train.view()).unwrap_err();
    assert!(err.to_string().contains("vib_x"));
    // Nothing to compute: passes NaN through.
    let t = Transform::fit(spec(Scale::None, Impute::None), &kinds, train.view()).expect("fits");
    assert!(t.apply(train.view())[[0, 1]].is_nan());
}

#[test]
fn bad_training_parts_are_errors() {
    let kinds = [numeric("a")];
    let cases = [
        ("infinite", array![[1.], [f64::INFINITY]], "infinite"),
        ("empty", Array2::zeros((0, 1)), "empty"),
        ("too wide", array![[-1e308], [1e308]], "too wide"),
    ];
    for (what, x, needle) in cases {
        let err = Transform::fit(spec(Scale::MinMax, Impute::Mean), &kinds, x.view()).unwrap_err();
        assert!(err.to_string().contains(needle), "{what}: {err}");
    }
    let err = Transform::fit(
        spec(Scale::None, Impute::None),
        &kinds,
        array![[1., 2.]].view(),
    )
    .unwrap_err();
    assert!(err.to_string().contains("2 columns but 1 feature kinds"));
}

#[test]
fn tiny_and_huge_spreads_scale_without_underflow() {
    // sd of (1, 2, 3) * 10^k is 10^k exactly in real arithmetic (by definition).
    for k in [-200, -20, 0, 20, 200] {
        let s = 10f64.powi(k);
        let x = column(&[s, 2.0 * s, 3.0 * s]);
        let t = Transform::fit(spec(Scale::ZScore, Impute::None), &[numeric("c")], x.view())
            .expect("fits");
        let out = t.apply(x.view()).column(0).to_vec();
        let close = out
            .iter()
            .zip([-1., 0., 1.])
            .all(|(a, b)| (a - b).abs() < 1e-14);
        assert!(close, "10^{k}: {out:?}");
    }
}

#[test]
fn a_validation_row_cannot_change_how_other_rows_are_transformed() {
    let kinds = [numeric("a"), numeric("b"), indicator("g", "x")];
    let train = array![[1., 10., 1.], [2., NAN, 0.], [4., 30., 1.], [NAN, 25., 0.]];
    let validation = array![[3., 12., 1.], [NAN, 11., 0.], [0.5, NAN, 1.]];
    let extreme = array![[1e9, -1e12, 1.]];
    let with_extreme = ndarray::concatenate![ndarray::Axis(0), validation, extreme];
    for scale in [Scale::ZScore, Scale::MinMax, Scale::None] {
        for impute in [Impute::Mean, Impute::Median] {
            let t = Transform::fit(spec(scale, impute), &kinds, train.view()).expect("fits");
            let alone = t.apply(validation.view());
            let mixed = t.apply(with_extreme.view());
            let bits =
                |m: ndarray::ArrayView2<'_, f64>| m.iter().map(|v| v.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(alone.view()), bits(mixed.slice(ndarray::s![0..3, ..])));
            // Had the extreme row been a training row, the transform would
            // differ (so the check above can fail).
            let leaked = ndarray::concatenate![ndarray::Axis(0), train, extreme];
            let t2 = Transform::fit(spec(scale, impute), &kinds, leaked.view()).expect("fits");
            assert_ne!(bits(t2.apply(validation.view()).view()), bits(alone.view()));
        }
    }
}

proptest! {
    #[test]
    fn imputation_leaves_no_nan(
        cells in proptest::collection::vec(prop_oneof![Just(f64::NAN), -1e6..1e6_f64], 12..40),
        scale in prop_oneof![Just(Scale::ZScore), Just(Scale::MinMax), Just(Scale::None)],
        impute in prop_oneof![Just(Impute::Mean), Just(Impute::Median)],
    ) {
        let rows = cells.len() / 2;
        let x = Array2::from_shape_vec((rows, 2), cells[..rows * 2].to_vec()).expect("a matrix");
        let kinds = [numeric("a"), numeric("b")];
        match Transform::fit(spec(scale, impute), &kinds, x.view()) {
            Ok(t) => prop_assert!(t.apply(x.view()).iter().all(|v| v.is_finite())),
            Err(e) => prop_assert!(e.to_string().contains("no observed value")),
        }
    }
}
