use ndarray::{Array2, array};

use super::grow::{Grown, NodeValue, Response, Split};
use super::*;
use crate::learn::SettingValue;
use crate::learn::ridge::numeric::testdata::penguins;

fn shape(depth: i64, min_leaf: i64) -> Settings {
    Settings::from([
        ("depth".to_string(), SettingValue::Int(depth)),
        ("min-leaf".to_string(), SettingValue::Int(min_leaf)),
    ])
}

fn root_split(tree: &Grown) -> (usize, f64) {
    let s = tree.nodes[0].split.as_ref().expect("the root splits");
    (s.feature, s.threshold)
}

fn child(tree: &Grown, right: bool) -> &super::grow::Node {
    let s: &Split = tree.nodes[0].split.as_ref().expect("the root splits");
    &tree.nodes[if right { s.right } else { s.left }]
}

/// Six rows, classes A = 0 and B = 1.
///
/// | row | x0 | x1 | y |
/// |-----|----|----|---|
/// | 0   | 1  | 5  | A |
/// | 1   | 2  | 3  | A |
/// | 2   | 3  | 4  | B |
/// | 3   | 4  | 1  | B |
/// | 4   | 5  | 2  | B |
/// | 5   | 6  | 6  | A |
fn table() -> (Array2<f64>, Vec<u32>) {
    let x = array![[1., 5.], [2., 3.], [3., 4.], [4., 1.], [5., 2.], [6., 6.]];
    (x, vec![0, 0, 1, 1, 1, 0])
}

#[test]
fn hand_worked_gini_split() {
    // Worked by hand (Gini impurity G = 1 - sum p_k^2; CART, Breiman et al.
    // 1984). Root: 3 A, 3 B, G = 0.5, weighted 6 * 0.5 = 3.0.
    // x0 thresholds, weighted child impurity n_L G_L + n_R G_R:
    //   1.5: {A} 0 + {A,B,B,B,A} 5 * (1 - 4/25 - 9/25) = 2.4
    //   2.5: {A,A} 0 + {B,B,B,A} 4 * (1 - 9/16 - 1/16) = 1.5   <- best
    //   3.5: {A,A,B} 3 * 4/9 + {B,B,A} 3 * 4/9 = 8/3
    //   4.5: {A,A,B,B} 4 * 0.5 + {B,A} 2 * 0.5 = 3.0
    //   5.5: {A,A,B,B,B} 2.4 + {A} 0 = 2.4
    // x1 sorted: 1 B, 2 B, 3 A, 4 B, 5 A, 6 A:
    //   1.5: 2.4; 2.5: {B,B} 0 + {A,B,A,A} 1.5 (tie); 3.5: 8/3;
    //   4.5: {B,B,A,B} 1.5 + {A,A} 0 (tie); 5.5: 2.4.
    // Three splits tie at 1.5; the rule picks the lower feature: x0 <= 2.5.
    let (x, y) = table();
    let tree = Grown::new(x.view(), Response::Classes { y: &y, classes: 2 }, 1, 1);
    assert_eq!(root_split(&tree), (0, 2.5));
    assert_eq!(
        child(&tree, false).value,
        NodeValue::Classes {
            label: 0,
            shares: vec![1.0, 0.0]
        }
    );
    assert_eq!(
        child(&tree, true).value,
        NodeValue::Classes {
            label: 1,
            shares: vec![0.25, 0.75]
        }
    );
    // Through the learner: x0 = 2.5 goes left (x <= threshold), 2.6 right.
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let q = array![[2.5, 0.0], [2.6, 0.0]];
    let out = Tree.evaluate_family(
        Task::Classification { classes: 2 },
        &train,
        &[q.view()],
        &[shape(1, 1)],
    );
    match &out[0].as_ref().expect("fits").predictions[0] {
        Predictions::Classes {
            labels,
            probabilities,
        } => {
            assert_eq!(labels, &[0, 1]);
            assert_eq!(probabilities, &array![[1.0, 0.0], [0.25, 0.75]]);
        }
        Predictions::Values(_) => panic!("classes expected"),
    }
}

#[test]
fn ties_on_one_feature_go_to_the_lower_threshold() {
    // x1 alone (from the table above): 2.5 and 4.5 both give 1.5; take 2.5.
    let (x, y) = table();
    let x1 = x.slice(ndarray::s![.., 1..]).to_owned();
    let tree = Grown::new(x1.view(), Response::Classes { y: &y, classes: 2 }, 1, 1);
    assert_eq!(root_split(&tree), (0, 2.5));
}

#[test]
fn second_level_and_min_leaf_follow_the_hand_working() {
    let (x, y) = table();
    let r = Response::Classes { y: &y, classes: 2 };
    // Right child {rows 2..5} = B, B, B, A: x0 <= 5.5 and x1 <= 5 (midpoint of
    // 4 and 6) both split it purely (impurity 0); the lower feature wins.
    let tree = Grown::new(x.view(), r, 2, 1);
    let right = child(&tree, true).split.as_ref().expect("splits");
    assert_eq!((right.feature, right.threshold), (0, 5.5));
    // min-leaf 3 leaves only the 3 | 3 cut on each feature (8/3 < 3 on both);
    // the lower feature wins: x0 <= 3.5.
    let tree = Grown::new(x.view(), r, 1, 3);
    assert_eq!(root_split(&tree), (0, 3.5));
    // min-leaf 4 needs 8 rows: the root stays a leaf, majority A by class order.
    let tree = Grown::new(x.view(), r, 3, 4);
    assert!(tree.nodes.len() == 1 && tree.nodes[0].split.is_none());
    assert_eq!(
        tree.nodes[0].value,
        NodeValue::Classes {
            label: 0,
            shares: vec![0.5, 0.5]
        }
    );
}

#[test]
fn hand_worked_regression_split() {
    // y = 1, 2, 6, 7 at x = 1..4. Squared error of the children, by hand:
    // 1.5: 0 + SSE{2,6,7} = 14; 2.5: 0.5 + 0.5 = 1 (best); 3.5: SSE{1,2,6} 14 + 0.
    // Leaf means 1.5 and 6.5.
    let x = array![[1.0], [2.0], [3.0], [4.0]];
    let y = [1.0, 2.0, 6.0, 7.0];
    let tree = Grown::new(x.view(), Response::Values(&y), 1, 1);
    assert_eq!(root_split(&tree), (0, 2.5));
    assert_eq!(child(&tree, false).value, NodeValue::Mean(1.5));
    assert_eq!(child(&tree, true).value, NodeValue::Mean(6.5));
}

#[test]
fn a_midpoint_that_rounds_up_falls_back_to_the_lower_value() {
    // lo = 1 + 2^-52, hi = 1 + 2^-51: the exact midpoint is halfway between
    // two doubles and rounds to even, which is hi (IEEE 754 round to nearest).
    let lo = 1.0 + f64::EPSILON;
    let hi = 1.0 + 2.0 * f64::EPSILON;
    assert_eq!(lo.midpoint(hi), hi);
    let x = array![[lo], [hi]];
    let y = [0, 1];
    let tree = Grown::new(x.view(), Response::Classes { y: &y, classes: 2 }, 1, 1);
    assert_eq!(root_split(&tree), (0, lo));
    assert_eq!(
        child(&tree, false).value,
        NodeValue::Classes {
            label: 0,
            shares: vec![1.0, 0.0]
        }
    );
}

fn bits(outcomes: &[Result<Outcome, LearnError>]) -> Vec<Vec<u64>> {
    outcomes
        .iter()
        .map(|o| {
            let o = o.as_ref().expect("fits");
            o.predictions
                .iter()
                .flat_map(|p| match p {
                    Predictions::Classes {
                        labels,
                        probabilities,
                    } => labels
                        .iter()
                        .map(|&l| u64::from(l))
                        .chain(probabilities.iter().map(|v| v.to_bits()))
                        .collect::<Vec<_>>(),
                    Predictions::Values(v) => v.iter().map(|v| v.to_bits()).collect(),
                })
                .collect()
        })
        .collect()
}

fn grid() -> Vec<Settings> {
    let mut family = Vec::new();
    for min_leaf in [1, 3, 10] {
        for depth in [1, 2, 3, 4, 8, 30] {
            family.push(shape(depth, min_leaf));
        }
    }
    family
}

fn family_equals_alone(task: Task, train: &TrainPart<'_>, q: ArrayView2<'_, f64>) {
    let family = grid();
    let together = Tree.evaluate_family(task, train, &[q], &family);
    let again = Tree.evaluate_family(task, train, &[q], &family);
    assert_eq!(bits(&together), bits(&again), "same inputs, same bits");
    for (i, s) in family.iter().enumerate() {
        let alone = Tree.evaluate_family(task, train, &[q], std::slice::from_ref(s));
        assert_eq!(bits(&alone)[0], bits(&together)[i], "candidate {s:?}");
    }
    // The grid really differs across depths (the test could fail).
    assert_ne!(bits(&together)[0], bits(&together)[2]);
}

#[test]
fn family_equals_each_candidate_alone_for_classification() {
    let features = [
        "bill_length_mm",
        "bill_depth_mm",
        "flipper_length_mm",
        "body_mass_g",
    ];
    let (x, y, _) = penguins("island", &features);
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    family_equals_alone(Task::Classification { classes: 3 }, &train, x.view());
}

#[test]
fn family_equals_each_candidate_alone_for_regression() {
    let (x, _, _) = penguins(
        "species",
        &[
            "bill_length_mm",
            "bill_depth_mm",
            "flipper_length_mm",
            "body_mass_g",
        ],
    );
    let y: Vec<f64> = x.column(3).to_vec();
    let x3 = x.slice(ndarray::s![.., 0..3]).to_owned();
    let train = TrainPart {
        x: x3.view(),
        y: Targets::Values(&y),
    };
    family_equals_alone(Task::Regression, &train, x3.view());
}

#[test]
fn degenerate_training_parts_give_one_leaf() {
    let x = array![[1.0, 7.0], [2.0, 7.0], [3.0, 7.0]];
    let one_class = [1, 1, 1];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&one_class),
    };
    let out = Tree.evaluate_family(
        Task::Classification { classes: 3 },
        &train,
        &[x.view()],
        &[shape(3, 1)],
    );
    let o = out[0].as_ref().expect("fits");
    assert!(
        o.note
            .remark
            .as_deref()
            .unwrap_or("")
            .contains("single leaf")
    );
    match &o.predictions[0] {
        Predictions::Classes {
            labels,
            probabilities,
        } => {
            assert_eq!(labels, &[1, 1, 1]);
            assert!(
                probabilities
                    .rows()
                    .into_iter()
                    .all(|r| r.to_vec() == vec![0.0, 1.0, 0.0])
            );
        }
        Predictions::Values(_) => panic!("classes expected"),
    }
    // Constant features: nothing to split on; predict the mean.
    let c = array![[7.0], [7.0], [7.0]];
    let y = [1.0, 2.0, 6.0];
    let train = TrainPart {
        x: c.view(),
        y: Targets::Values(&y),
    };
    let out = Tree.evaluate_family(Task::Regression, &train, &[c.view()], &[shape(2, 1)]);
    let o = out[0].as_ref().expect("fits");
    assert_eq!(o.predictions[0], Predictions::Values(vec![3.0, 3.0, 3.0]));
    assert!(o.note.remark.is_some());
}

#[test]
fn bad_inputs_are_errors_not_panics() {
    let x = array![[1.0], [f64::INFINITY]];
    let y = [0, 1];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let out = Tree.evaluate_family(
        Task::Classification { classes: 2 },
        &train,
        &[],
        &[shape(2, 1)],
    );
    assert!(matches!(&out[0], Err(LearnError::Data { .. })));
    let x = array![[1.0], [2.0]];
    let train = TrainPart {
        x: x.view(),
        y: Targets::Classes(&y),
    };
    let out = Tree.evaluate_family(
        Task::Classification { classes: 2 },
        &train,
        &[],
        &[shape(0, 1), shape(2, 1)],
    );
    assert!(matches!(&out[0], Err(LearnError::Setting { .. })));
    assert!(out[1].is_ok(), "a bad sibling does not fail the others");
    let out = Tree.evaluate_family(Task::Regression, &train, &[], &[shape(2, 1)]);
    assert!(matches!(&out[0], Err(LearnError::Data { .. })));
}

#[test]
fn shallower_then_larger_leaves_is_simpler() {
    let key = |d, m| Tree.simplicity(&shape(d, m));
    assert!(key(2, 1) > key(3, 1));
    assert!(key(2, 5) > key(2, 1));
    assert!(key(2, 1) > key(3, 50));
}

/// Rows of small integer values (many ties and duplicate rows) and a
/// response of a few levels, from a seeded stream.
fn tied_data(rows: usize, seed: u64) -> (Array2<f64>, Vec<u32>, Vec<f64>) {
    use rand_chacha::ChaCha8Rng;
    use rand_core::{Rng, SeedableRng};
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let x = Array2::from_shape_fn((rows, 4), |(_, j)| {
        (rng.next_u64() % (3 + 4 * j as u64)) as f64
    });
    let classes: Vec<u32> = (0..rows).map(|_| (rng.next_u64() % 3) as u32).collect();
    let values: Vec<f64> = (0..rows)
        .map(|i| x[[i, 0]] * 0.5 - x[[i, 2]] + (rng.next_u64() % 5) as f64 * 0.1)
        .collect();
    (x, classes, values)
}

#[test]
fn presorted_growing_equals_sorting_every_node() {
    // 20,000 rows so that the parallel path (nodes of 2^14 rows or more)
    // runs at the root; small sizes for the serial path.
    let shapes: &[(usize, usize)] = &[(1, 1), (4, 1), (12, 1), (12, 7)];
    for (rows, seed, shapes) in [
        (20_000, 1, &shapes[1..2]),
        (300, 2, shapes),
        (57, 3, shapes),
    ] {
        let (x, classes, values) = tied_data(rows, seed);
        for &(depth, min_leaf) in shapes {
            for y in [
                Response::Classes {
                    y: &classes,
                    classes: 3,
                },
                Response::Values(&values),
            ] {
                let want = super::grow::grown_by_sorting(x.view(), y, depth, min_leaf);
                let got = Grown::new(x.view(), y, depth, min_leaf);
                assert!(want.nodes.len() > 1, "the reference tree splits");
                assert_eq!(got, want, "rows {rows} depth {depth} min-leaf {min_leaf}");
            }
        }
    }
}
