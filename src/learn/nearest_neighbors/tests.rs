//! Tests of the `nearest-neighbors` learner: hand-worked votes, the family
//! and determinism guarantees, degenerate parts, and checks against values
//! from outside the project (METHODS.md, scipy live).

use ndarray::{Array2, array};
use rand_chacha::ChaCha8Rng;
use rand_core::{Rng, SeedableRng};

use super::neighbor_search::Method;
use super::*;
use crate::learn::{SettingValue, Targets};

// Also included by `score::metric` tests: each lives in a private module,
// so neither can reach the other's copy.
#[allow(clippy::duplicate_mod)]
#[path = "../../score/reference_script.rs"]
mod reference_script;

fn cand(k: i64, vote: &str, distance: &str) -> Settings {
    let mut s = Settings::new();
    s.insert("k".into(), SettingValue::Int(k));
    s.insert("vote".into(), SettingValue::Text(vote.into()));
    s.insert("distance".into(), SettingValue::Text(distance.into()));
    s
}

fn run(
    task: Task,
    x: &Array2<f64>,
    y: Targets<'_>,
    q: &Array2<f64>,
    family: &[Settings],
) -> Vec<Result<Outcome, LearnError>> {
    let train = TrainPart { x: x.view(), y };
    NearestNeighbors.evaluate_family(task, &train, &[q.view()], family)
}

fn classes(r: &Result<Outcome, LearnError>) -> (Vec<u32>, Array2<f64>) {
    match &r.as_ref().unwrap().predictions[0] {
        Predictions::Classes {
            labels,
            probabilities,
        } => (labels.clone(), probabilities.clone()),
        Predictions::Values(_) => panic!("expected classes"),
    }
}

fn values(r: &Result<Outcome, LearnError>) -> Vec<f64> {
    match &r.as_ref().unwrap().predictions[0] {
        Predictions::Values(v) => v.clone(),
        Predictions::Classes { .. } => panic!("expected values"),
    }
}

/// Every number of an outcome as bits, plus its note.
fn bits(r: &Result<Outcome, LearnError>) -> (Vec<u64>, Note) {
    let o = r.as_ref().unwrap();
    let mut out = Vec::new();
    for p in &o.predictions {
        match p {
            Predictions::Classes {
                labels,
                probabilities,
            } => {
                out.extend(labels.iter().map(|&l| u64::from(l)));
                out.extend(probabilities.iter().map(|v| v.to_bits()));
            }
            Predictions::Values(v) => out.extend(v.iter().map(|v| v.to_bits())),
        }
    }
    (out, o.note.clone())
}

const THREE: Task = Task::Classification { classes: 3 };

/// One feature: rows at 0, 1, 3, 4, 10 with classes 0, 1, 1, 0, 2 and
/// targets 10, 20, 30, 40, 50.
fn line() -> (Array2<f64>, [u32; 5], [f64; 5]) {
    let x = array![[0.0], [1.0], [3.0], [4.0], [10.0]];
    (x, [0, 1, 1, 0, 2], [10.0, 20.0, 30.0, 40.0, 50.0])
}

#[test]
fn hand_worked_votes() {
    // Query 2: distances 2, 1, 1, 2, 8, so the order is rows 1, 2, 0, 3, 4.
    // Query 3: row 2 is at distance 0. All worked by hand.
    let (x, y, _) = line();
    let q = array![[2.0], [3.0]];
    let family = [
        cand(1, "equal", "euclidean"),
        cand(3, "equal", "euclidean"),
        cand(4, "equal", "euclidean"),
        cand(4, "inverse-distance", "euclidean"),
        cand(5, "inverse-distance", "manhattan"),
        cand(3, "inverse-distance", "euclidean"),
    ];
    let out = run(THREE, &x, Targets::Classes(&y), &q, &family);
    let row = |i: usize, r: usize| {
        let (l, p) = classes(&out[i]);
        (l[r], p.row(r).to_vec())
    };
    assert_eq!(row(0, 0), (1, vec![0.0, 1.0, 0.0]));
    assert_eq!(row(1, 0), (1, vec![1.0 / 3.0, 2.0 / 3.0, 0.0]));
    // Two votes each for classes 0 and 1: class 1 has the nearer neighbour.
    assert_eq!(row(2, 0), (1, vec![0.5, 0.5, 0.0]));
    // Weights 1, 1, 1/2, 1/2: class 1 has 2 of 3.
    assert_eq!(row(3, 0), (1, vec![1.0 / 3.0, 2.0 / 3.0, 0.0]));
    // Adding 1/8 for class 2: total 3.125, shares 0.32, 0.64, 0.04.
    let (l, p) = row(4, 0);
    assert_eq!(l, 1);
    for (got, want) in p.iter().zip([0.32, 0.64, 0.04]) {
        assert!((got - want).abs() < 1e-15, "{p:?}");
    }
    // Query 3 with inverse-distance: only the zero-distance row votes.
    assert_eq!(row(5, 1), (1, vec![0.0, 1.0, 0.0]));
    // Query 3 with equal votes: rows 2, 3, 1 have classes 1, 0, 1.
    assert_eq!(row(1, 1), (1, vec![1.0 / 3.0, 2.0 / 3.0, 0.0]));
}

#[test]
fn vote_ties_at_equal_distance_go_to_the_lower_class() {
    // Row 0 (class 1) and row 1 (class 0) are both at distance 1 from the
    // query: the list starts with row 0, but the nearest tied neighbours are
    // equally near, so class order decides: class 0.
    let x = array![[1.0], [-1.0]];
    let y = [1, 0];
    let out = run(
        THREE,
        &x,
        Targets::Classes(&y),
        &array![[0.0]],
        &[cand(2, "equal", "euclidean")],
    );
    assert_eq!(classes(&out[0]).0, vec![0]);
}

#[test]
fn hand_worked_regression() {
    let (x, _, y) = line();
    let q = array![[2.0], [3.0]];
    let family = [
        cand(3, "equal", "euclidean"),
        cand(4, "inverse-distance", "euclidean"),
        cand(2, "inverse-distance", "manhattan"),
    ];
    let out = run(Task::Regression, &x, Targets::Values(&y), &q, &family);
    // (20 + 30 + 10) / 3 = 20; (20 + 30 + 10/2 + 40/2) / 3 = 25; query 3 is
    // at distance 0 from row 2 only: 30. By hand.
    assert_eq!(values(&out[0])[0], 20.0);
    assert_eq!(values(&out[1])[0], 25.0);
    assert_eq!(values(&out[2])[1], 30.0);
}

#[test]
fn k_beyond_the_training_part_uses_every_row_with_a_remark() {
    let (x, y, _) = line();
    let out = run(
        THREE,
        &x,
        Targets::Classes(&y),
        &array![[2.0]],
        &[cand(10, "equal", "euclidean")],
    );
    let (labels, p) = classes(&out[0]);
    // Classes 0, 1, 1, 0, 2 over all five rows: 2/5, 2/5, 1/5; the tie
    // between 0 and 1 goes to class 1 (nearest neighbour at distance 1).
    assert_eq!((labels, p.row(0).to_vec()), (vec![1], vec![0.4, 0.4, 0.2]));
    let remark = out[0].as_ref().unwrap().note.remark.clone().unwrap();
    assert!(
        remark.contains("k = 10 is more than the 5 training rows"),
        "{remark}"
    );
}

fn tied_data(rows: usize, dims: usize, seed: u64) -> (Array2<f64>, Vec<u32>, Vec<f64>) {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let x = Array2::from_shape_fn((rows, dims), |_| (rng.next_u64() % 5) as f64);
    let y: Vec<u32> = (0..rows).map(|_| (rng.next_u64() % 3) as u32).collect();
    let v: Vec<f64> = (0..rows)
        .map(|_| (rng.next_u64() % 1000) as f64 / 7.0)
        .collect();
    (x, y, v)
}

fn wide_family() -> Vec<Settings> {
    let mut family = Vec::new();
    for distance in ["euclidean", "manhattan"] {
        for k in [1, 2, 5, 9, 25, 60, 5000] {
            for vote in ["equal", "inverse-distance"] {
                family.push(cand(k, vote, distance));
            }
        }
    }
    family
}

#[test]
fn family_is_bitwise_each_candidate_alone_and_repeatable() {
    // 600 rows: the family (k up to 5000) searches by brute force while a
    // lone small k uses the k-d tree, so this also crosses the two paths.
    // 1500 rows: both use the tree up to k = 60.
    for (rows, dims) in [(600, 3), (1500, 2)] {
        let (x, y, v) = tied_data(rows, dims, rows as u64);
        let (q, _, _) = tied_data(60, dims, 7);
        let family = wide_family();
        for (task, targets) in [
            (THREE, Targets::Classes(&y)),
            (Task::Regression, Targets::Values(&v)),
        ] {
            let together = run(task, &x, targets, &q, &family);
            let again = run(task, &x, targets, &q, &family);
            for (i, c) in family.iter().enumerate() {
                let alone = run(task, &x, targets, &q, std::slice::from_ref(c));
                assert_eq!(bits(&together[i]), bits(&alone[0]), "candidate {i}");
                assert_eq!(bits(&together[i]), bits(&again[i]));
            }
        }
    }
}

#[test]
fn degenerate_parts_are_remarked_or_refused() {
    // One class in training: that class, probability 1, a remark.
    let x = array![[1.0, 5.0], [2.0, 5.0], [3.0, 5.0]];
    let out = run(
        THREE,
        &x,
        Targets::Classes(&[2, 2, 2]),
        &array![[0.0, 0.0]],
        &[cand(2, "inverse-distance", "euclidean")],
    );
    let (labels, p) = classes(&out[0]);
    assert_eq!((labels, p.row(0).to_vec()), (vec![2], vec![0.0, 0.0, 1.0]));
    let remark = out[0].as_ref().unwrap().note.remark.clone().unwrap();
    assert!(
        remark.contains("one class") && remark.contains("class codes 0, 1"),
        "{remark}"
    );
    // Constant features and k beyond the part: finite, remarked.
    let x = Array2::from_elem((4, 2), 7.0);
    let y = [0.0, 1.0, 2.0, 3.0];
    let out = run(
        Task::Regression,
        &x,
        Targets::Values(&y),
        &array![[7.0, 7.0], [1.0, 1.0]],
        &[cand(9, "inverse-distance", "manhattan")],
    );
    assert_eq!(values(&out[0]), vec![1.5, 1.5]);
    assert!(out[0].as_ref().unwrap().note.remark.is_some());
    // Bad settings fail their own slot only.
    let family = [
        cand(0, "equal", "euclidean"),
        cand(1, "majority", "euclidean"),
        cand(1, "equal", "cosine"),
        cand(1, "equal", "euclidean"),
    ];
    let out = run(
        Task::Regression,
        &x,
        Targets::Values(&y),
        &array![[7.0, 7.0]],
        &family,
    );
    assert!(
        out[..3]
            .iter()
            .all(|r| matches!(r, Err(LearnError::Setting { .. })))
    );
    assert_eq!(values(&out[3]), vec![0.0]);
    // Mismatched widths and non-finite queries are data errors.
    let out = run(
        Task::Regression,
        &x,
        Targets::Values(&y),
        &array![[1.0]],
        &family,
    );
    assert!(
        out.iter()
            .all(|r| matches!(r, Err(LearnError::Data { .. })))
    );
    let out = run(
        Task::Regression,
        &x,
        Targets::Values(&y),
        &array![[f64::NAN, 1.0]],
        &family,
    );
    assert!(
        out.iter()
            .all(|r| matches!(r, Err(LearnError::Data { .. })))
    );
}

#[test]
fn simplicity_grows_with_k() {
    let l = NearestNeighbors;
    assert_eq!(l.simplicity(&cand(7, "equal", "euclidean")), vec![7.0]);
    assert!(
        l.simplicity(&cand(9, "equal", "euclidean"))
            > l.simplicity(&cand(3, "inverse-distance", "manhattan"))
    );
}

/// The 342 penguin rows with all four measurements, in file order: features
/// (bill length, bill depth, flipper length, body mass) and species codes
/// in sorted order of the names.
fn penguins() -> (Array2<f64>, Vec<u32>) {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/penguins.csv");
    let text = std::fs::read_to_string(&path).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let wanted = [
        "bill_length_mm",
        "bill_depth_mm",
        "flipper_length_mm",
        "body_mass_g",
    ]
    .map(col);
    let species = col("species");
    let mut rows = Vec::new();
    let mut names = Vec::new();
    for line in lines {
        let cells: Vec<&str> = line.split(',').collect();
        if wanted.iter().any(|&c| cells[c] == "NA") {
            continue;
        }
        rows.push(wanted.map(|c| cells[c].parse::<f64>().unwrap()));
        names.push(cells[species].to_string());
    }
    let mut sorted = names.clone();
    sorted.sort();
    sorted.dedup();
    let y = names
        .iter()
        .map(|n| sorted.iter().position(|s| s == n).unwrap() as u32)
        .collect();
    let x = Array2::from_shape_fn((rows.len(), 4), |(r, c)| rows[r][c]);
    (x, y)
}

/// Leave-one-out 1-NN correct count: each row predicted from the other rows.
fn leave_one_out_correct(x: &Array2<f64>, y: &[u32]) -> usize {
    let n = x.nrows();
    (0..n)
        .filter(|&i| {
            let keep: Vec<usize> = (0..n).filter(|&r| r != i).collect();
            let xt = x.select(ndarray::Axis(0), &keep);
            let yt: Vec<u32> = keep.iter().map(|&r| y[r]).collect();
            let q = x.select(ndarray::Axis(0), &[i]);
            let out = run(
                THREE,
                &xt,
                Targets::Classes(&yt),
                &q,
                &[cand(1, "equal", "euclidean")],
            );
            classes(&out[0]).0[0] == y[i]
        })
        .count()
}

#[test]
fn penguins_leave_one_out_matches_methods() {
    let (x, y) = penguins();
    assert_eq!(x.nrows(), 342);
    // METHODS.md, data check values [ref: numpy; not published]: 1-NN
    // leave-one-out on raw units, Euclidean: 298 of 342 correct.
    assert_eq!(leave_one_out_correct(&x, &y), 298);
    // Same source: on z-scored features (global mean, sample sd): 336 of 342.
    let mut z = x.clone();
    for mut column in z.columns_mut() {
        let n = column.len() as f64;
        let mean = column.sum() / n;
        let sd = (column.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / (n - 1.0)).sqrt();
        column.mapv_inplace(|v| (v - mean) / sd);
    }
    assert_eq!(leave_one_out_correct(&z, &y), 336);
}

#[test]
fn matches_scipy_on_a_penguin_split() {
    // tests/reference/knn_auc.py: scipy.spatial.cKDTree neighbour lists and
    // distances (versions printed below), and the vote rules restated in
    // numpy; training rows are the even positions, queries the odd ones.
    let Some(reference) = reference_script::reference_output() else {
        return;
    };
    let (x, y) = penguins();
    let even: Vec<usize> = (0..x.nrows()).step_by(2).collect();
    let odd: Vec<usize> = (1..x.nrows()).step_by(2).collect();
    let (xt, q) = (
        x.select(ndarray::Axis(0), &even),
        x.select(ndarray::Axis(0), &odd),
    );
    let yt: Vec<u32> = even.iter().map(|&r| y[r]).collect();
    let mass: Vec<f64> = even.iter().map(|&r| x[[r, 3]]).collect();
    let (xt3, q3) = (
        xt.slice(s![.., ..3]).to_owned(),
        q.slice(s![.., ..3]).to_owned(),
    );
    for (name, metric) in [
        ("euclidean", Distance::Euclidean),
        ("manhattan", Distance::Manhattan),
    ] {
        let want = &reference["knn"][name];
        for method in [Method::Brute, Method::KdTree] {
            let index = Index::build(xt.view(), metric, method);
            for (r, list) in index.query_rows(q.view(), 7).iter().enumerate() {
                let rows: Vec<u32> = list.iter().map(|n| n.row).collect();
                assert_eq!(
                    rows,
                    reference_script::codes(&want["neighbours"][r]),
                    "{name} {method:?} row {r}"
                );
                for (n, d) in list
                    .iter()
                    .zip(reference_script::floats(&want["distances"][r]))
                {
                    assert!(
                        reference_script::close(n.distance, d, 1e-12),
                        "{name} row {r}: {} vs {d}",
                        n.distance
                    );
                }
            }
        }
        for k in [1, 3, 7] {
            for vote in ["equal", "inverse-distance"] {
                let c = cand(k, vote, name);
                let key = format!("{k}/{vote}");
                let expected = &want["predictions"][&key];
                let (labels, p) = classes(
                    &run(
                        THREE,
                        &xt,
                        Targets::Classes(&yt),
                        &q,
                        std::slice::from_ref(&c),
                    )[0],
                );
                assert_eq!(
                    labels,
                    reference_script::codes(&expected["labels"]),
                    "{name} {key}"
                );
                for (r, row) in p.rows().into_iter().enumerate() {
                    let want_row = reference_script::floats(&expected["probabilities"][r]);
                    for (got, w) in row.iter().zip(want_row) {
                        assert!(
                            reference_script::close(*got, w, 1e-12),
                            "{name} {key} row {r}"
                        );
                    }
                }
                let got =
                    values(&run(Task::Regression, &xt3, Targets::Values(&mass), &q3, &[c])[0]);
                for (g, w) in got
                    .iter()
                    .zip(reference_script::floats(&expected["body_mass"]))
                {
                    assert!(
                        reference_script::close(*g, w, 1e-12),
                        "{name} {key} body mass {g} vs {w}"
                    );
                }
            }
        }
    }
}
