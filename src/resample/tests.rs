//! Cross-scheme tests through the public entry points: invariants over many
//! seeds and sizes (proptest), nested cross-validation, the bootstrap's
//! out-of-bag share, independence from everything but facts, scheme and
//! seed, and a timing check on a million rows (ignored by default).

use std::collections::{BTreeMap, BTreeSet};

use proptest::prelude::*;

use super::*;

/// A small data set: class, group and order per file row, and the
/// development rows (a subset, sorted).
#[derive(Clone, Debug)]
struct Data {
    class: Vec<u32>,
    group: Vec<u32>,
    order: Vec<f64>,
    rows: Vec<u32>,
}

impl Data {
    fn facts(&self, classed: bool, grouped: bool, ordered: bool) -> RowFacts<'_> {
        RowFacts {
            class: classed.then_some(&self.class[..]),
            group: grouped.then_some(&self.group[..]),
            order: ordered.then_some(&self.order[..]),
        }
    }

    fn count<T: Ord + Copy>(&self, values: impl Fn(u32) -> T, rows: &[u32]) -> BTreeMap<T, usize> {
        let mut out = BTreeMap::new();
        for &r in rows {
            *out.entry(values(r)).or_insert(0) += 1;
        }
        out
    }

    fn groups(&self) -> usize {
        self.rows
            .iter()
            .map(|&r| self.group[r as usize])
            .collect::<BTreeSet<_>>()
            .len()
    }
}

fn data() -> impl Strategy<Value = Data> {
    (1usize..60, 1u32..4, 1u32..10, 1u32..15).prop_flat_map(|(n, classes, groups, times)| {
        let cols = (
            prop::collection::vec(0..classes, n),
            prop::collection::vec(0..groups, n),
            prop::collection::vec(0..times, n),
            prop::collection::vec(prop::bool::weighted(0.85), n),
        );
        cols.prop_map(|(class, group, order, keep)| {
            let mut rows: Vec<u32> = (0..class.len() as u32)
                .filter(|&r| keep[r as usize])
                .collect();
            if rows.is_empty() {
                rows = (0..class.len() as u32).collect();
            }
            let order = order.into_iter().map(f64::from).collect();
            Data {
                class,
                group,
                order,
                rows,
            }
        })
    })
}

fn sorted_strictly(rows: &[u32]) -> bool {
    rows.windows(2).all(|w| w[0] < w[1])
}

fn disjoint(a: &[u32], b: &[u32]) -> bool {
    let a: BTreeSet<_> = a.iter().collect();
    b.iter().all(|r| !a.contains(r))
}

/// No group with rows on both sides of the split.
fn groups_apart(d: &Data, s: &Split) -> bool {
    let train: BTreeSet<u32> = s.train.iter().map(|&r| d.group[r as usize]).collect();
    s.validation
        .iter()
        .all(|&r| !train.contains(&d.group[r as usize]))
}

/// Every class count of `part` within one row of its share `N_c * size / n`.
fn within_one(d: &Data, part: &[u32]) -> bool {
    let n = d.rows.len();
    let all = d.count(|r| d.class[r as usize], &d.rows);
    let got = d.count(|r| d.class[r as usize], part);
    all.iter().all(|(c, &total)| {
        let x = got.get(c).copied().unwrap_or(0);
        (x * n).abs_diff(total * part.len()) < n
    })
}

/// Each class's count in a fold is within one of its share of the folds,
/// total / folds (the deal gives the floor or the ceiling of it).
fn within_one_of_fold_share(d: &Data, part: &[u32], folds: usize) -> bool {
    let all = d.count(|r| d.class[r as usize], &d.rows);
    let got = d.count(|r| d.class[r as usize], part);
    all.iter().all(|(c, &total)| {
        let x = got.get(c).copied().unwrap_or(0);
        (x * folds).abs_diff(total) < folds
    })
}

fn size() -> impl Strategy<Value = Size> {
    prop_oneof![
        (0.05f64..0.95).prop_map(Size::Fraction),
        (1usize..40).prop_map(Size::Count)
    ]
}

fn rows_of(size: Size, n: usize) -> usize {
    match size {
        Size::Fraction(f) => (f * n as f64).round() as usize,
        Size::Count(c) => c,
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn kfold_invariants(d in data(), folds in 2usize..6, repeats in 1usize..4,
                        stratify: bool, grouped: bool, seed: u64) {
        let facts = d.facts(true, grouped, false);
        let scheme = Scheme::KFold { folds, repeats, stratify };
        let got = splits(&scheme, &d.rows, facts, seed);
        let classes = d.count(|r| d.class[r as usize], &d.rows);
        let feasible = folds <= d.rows.len()
            && (!grouped || folds <= d.groups())
            && (!stratify || classes.values().all(|&c| c >= folds));
        prop_assert_eq!(got.is_ok(), feasible, "{:?}", got.as_ref().err());
        let Ok(got) = got else { return Ok(()) };
        prop_assert_eq!(got.len(), folds * repeats);
        let mut seen = vec![0usize; d.class.len()];
        for (i, s) in got.iter().enumerate() {
            prop_assert_eq!((s.repeat as usize, s.fold as usize), (i / folds, i % folds));
            prop_assert!(sorted_strictly(&s.train) && sorted_strictly(&s.validation));
            prop_assert!(!s.validation.is_empty() && disjoint(&s.train, &s.validation));
            prop_assert_eq!(s.train.len() + s.validation.len(), d.rows.len());
            prop_assert!(!grouped || groups_apart(&d, s));
            prop_assert!(!stratify || grouped || within_one_of_fold_share(&d, &s.validation, folds));
            s.validation.iter().for_each(|&r| seen[r as usize] += 1);
        }
        for &r in &d.rows {
            prop_assert_eq!(seen[r as usize], repeats);
        }
        if !grouped {
            // The deal gives fold sizes within one of each other.
            let sizes: Vec<usize> = got[..folds].iter().map(|s| s.validation.len()).collect();
            let (lo, hi) = (sizes.iter().min(), sizes.iter().max());
            prop_assert!(hi.zip(lo).is_some_and(|(h, l)| h - l <= 1), "{:?}", sizes);
        }
    }

    #[test]
    fn monte_carlo_invariants(d in data(), draws in 1usize..4, train in size(), validation in size(),
                              stratify: bool, grouped: bool, seed: u64) {
        let facts = d.facts(true, grouped, false);
        let scheme = Scheme::MonteCarlo { splits: draws, train, validation, stratify };
        let n = d.rows.len();
        let (t, v) = (rows_of(train, n), rows_of(validation, n));
        let got = splits(&scheme, &d.rows, facts, seed);
        if !grouped {
            prop_assert_eq!(got.is_ok(), t >= 1 && v >= 1 && t + v <= n, "{:?}", got.as_ref().err());
        }
        let Ok(got) = got else { return Ok(()) };
        prop_assert_eq!(got.len(), draws);
        for s in &got {
            prop_assert!(sorted_strictly(&s.train) && sorted_strictly(&s.validation));
            prop_assert!(!s.train.is_empty() && !s.validation.is_empty());
            prop_assert!(disjoint(&s.train, &s.validation));
            if grouped {
                prop_assert!(groups_apart(&d, s));
            } else {
                prop_assert_eq!((s.train.len(), s.validation.len()), (t, v));
            }
            prop_assert!(!stratify || grouped || (within_one(&d, &s.train) && within_one(&d, &s.validation)));
        }
    }

    #[test]
    fn leave_out_counts(d in data(), grouped: bool) {
        let facts = d.facts(false, grouped, false);
        if let Ok(got) = splits(&Scheme::OneRowOut, &d.rows, facts, 1) {
            prop_assert_eq!(got.len(), d.rows.len());
            prop_assert!(got.iter().all(|s| s.validation.len() == 1 && s.train.len() + 1 == d.rows.len()));
            prop_assert!(!grouped || got.iter().all(|s| groups_apart(&d, s)));
        } else {
            prop_assert!(d.rows.len() < 2 || (grouped && d.groups() < d.rows.len()));
        }
        let got = splits(&Scheme::OneGroupOut, &d.rows, d.facts(false, true, false), 1);
        prop_assert_eq!(got.is_ok(), d.groups() >= 2);
        for (u, s) in got.unwrap_or_default().iter().enumerate() {
            prop_assert_eq!(s.fold as usize, u);
            prop_assert!(groups_apart(&d, s) && s.train.len() + s.validation.len() == d.rows.len());
            let codes: BTreeSet<u32> = s.validation.iter().map(|&r| d.group[r as usize]).collect();
            prop_assert_eq!(codes.len(), 1);
        }
    }

    #[test]
    fn forward_chaining_validates_only_later_points(d in data(), min_train in 1usize..4,
            validation in 1usize..3, gap in 0usize..3, step in 1usize..3,
            sliding: bool, keep in prop::option::of(1usize..4), grouped: bool) {
        let window = if sliding { Window::Sliding } else { Window::Expanding };
        let scheme = Scheme::ForwardChaining { splits: keep, window, min_train, validation, gap, step };
        let got = splits(&scheme, &d.rows, d.facts(false, grouped, true), 1);
        let points: Vec<f64> = {
            let set: BTreeSet<u64> = d.rows.iter().map(|&r| d.order[r as usize] as u64).collect();
            set.into_iter().map(|p| p as f64).collect()
        };
        let index = |r: u32| points.partition_point(|&p| p < d.order[r as usize]);
        prop_assert_eq!(got.is_ok(), min_train + gap + validation <= points.len());
        let got = got.unwrap_or_default();
        prop_assert!(keep.is_none_or(|k| got.len() <= k));
        for s in &got {
            prop_assert!(sorted_strictly(&s.train) && sorted_strictly(&s.validation));
            let last_train = s.train.iter().map(|&r| index(r)).max().unwrap_or(0);
            prop_assert!(s.validation.iter().all(|&r| index(r) > last_train + gap));
            let train_points: BTreeSet<usize> = s.train.iter().map(|&r| index(r)).collect();
            let val_points: BTreeSet<usize> = s.validation.iter().map(|&r| index(r)).collect();
            prop_assert!(train_points.len() >= min_train && val_points.len() == validation);
        }
    }

    #[test]
    fn bootstrap_keeps_out_of_bag_rows_out_of_training(d in data(), draws in 1usize..4,
                                                       stratify: bool, grouped: bool, seed: u64) {
        let scheme = Scheme::Bootstrap { splits: draws, stratify };
        let Ok(got) = splits(&scheme, &d.rows, d.facts(true, grouped, false), seed) else { return Ok(()) };
        for s in &got {
            prop_assert!(s.train.windows(2).all(|w| w[0] <= w[1]) && sorted_strictly(&s.validation));
            prop_assert!(!s.validation.is_empty() && disjoint(&s.train, &s.validation));
            prop_assert!(!grouped || groups_apart(&d, s));
            if !grouped {
                prop_assert_eq!(s.train.len(), d.rows.len());
                let in_bag: BTreeSet<u32> = s.train.iter().copied().collect();
                prop_assert_eq!(in_bag.len() + s.validation.len(), d.rows.len());
            }
            if stratify && !grouped {
                prop_assert_eq!(d.count(|r| d.class[r as usize], &s.train), d.count(|r| d.class[r as usize], &d.rows));
            }
        }
    }

    #[test]
    fn seal_invariants(d in data(), fraction in 0.05f64..0.95, stratify: bool, grouped: bool,
                       by_order: bool, seed: u64) {
        let rows = d.class.len();
        let spec = if by_order { SealSpec::Last { fraction } } else { SealSpec::Random { fraction, stratify } };
        let Ok(p) = seal(&spec, rows, d.facts(true, grouped, true), seed) else { return Ok(()) };
        prop_assert!(sorted_strictly(&p.sealed) && sorted_strictly(&p.development));
        prop_assert!(!p.sealed.is_empty() && !p.development.is_empty());
        let mut all: Vec<u32> = p.sealed.iter().chain(&p.development).copied().collect();
        all.sort_unstable();
        prop_assert_eq!(all, (0..rows as u32).collect::<Vec<_>>());
        let s = (fraction * rows as f64).round() as usize;
        let whole = Data { rows: (0..rows as u32).collect(), ..d.clone() };
        if by_order {
            let latest_dev = p.development.iter().map(|&r| d.order[r as usize]).fold(f64::MIN, f64::max);
            prop_assert!(p.sealed.iter().all(|&r| d.order[r as usize] > latest_dev));
        } else if grouped {
            let split = Split { role: Role::Outer, parent: None, repeat: 0, fold: 0,
                                train: p.development.clone(), validation: p.sealed.clone() };
            prop_assert!(groups_apart(&whole, &split));
        } else {
            prop_assert_eq!(p.sealed.len(), s);
            prop_assert!(!stratify || within_one(&whole, &p.sealed));
        }
    }

    #[test]
    fn splits_ignore_facts_of_other_rows(d in data(), seed: u64, pick in 0usize..4) {
        let schemes = [
            Scheme::KFold { folds: 2, repeats: 2, stratify: false },
            Scheme::MonteCarlo { splits: 2, train: Size::Fraction(0.5), validation: Size::Count(1), stratify: true },
            Scheme::Bootstrap { splits: 2, stratify: false },
            Scheme::KFold { folds: 2, repeats: 1, stratify: true },
        ];
        let scheme = &schemes[pick];
        let first = splits(scheme, &d.rows, d.facts(true, true, true), seed);
        let again = splits(scheme, &d.rows, d.facts(true, true, true), seed);
        prop_assert_eq!(&first, &again);
        let mut other = d.clone();
        let kept: BTreeSet<u32> = d.rows.iter().copied().collect();
        for r in 0..other.class.len() {
            if !kept.contains(&(r as u32)) {
                other.class[r] = 9;
                other.group[r] = 99;
                other.order[r] = -5.0;
            }
        }
        prop_assert_eq!(first, splits(scheme, &d.rows, other.facts(true, true, true), seed));
    }

    #[test]
    fn nested_inner_splits_lie_inside_their_outer_training_part(d in data(), seed: u64, pick in 0usize..3) {
        let outer = [
            Scheme::KFold { folds: 2, repeats: 1, stratify: false },
            Scheme::MonteCarlo { splits: 2, train: Size::Fraction(0.6), validation: Size::Fraction(0.3), stratify: false },
            Scheme::OneGroupOut,
        ];
        let inner = Scheme::Bootstrap { splits: 2, stratify: false };
        let scheme = Scheme::Nested { outer: Box::new(outer[pick].clone()), inner: Box::new(inner) };
        let Ok(got) = splits(&scheme, &d.rows, d.facts(false, true, false), seed) else { return Ok(()) };
        let mut current = None;
        for (i, s) in got.iter().enumerate() {
            match s.role {
                Role::Outer => {
                    prop_assert_eq!(s.parent, None);
                    current = Some(i);
                }
                Role::Inner => {
                    prop_assert_eq!(s.parent, current);
                    let parent: BTreeSet<u32> = got[current.unwrap_or(0)].train.iter().copied().collect();
                    prop_assert!(s.train.iter().chain(&s.validation).all(|r| parent.contains(r)));
                    prop_assert!(groups_apart(&d, s));
                }
            }
        }
    }
}

#[test]
fn nested_leave_one_out_by_hand() {
    // By hand: rows 4, 7, 9; outer and inner leave-one-out. Outer split 0
    // trains on 7, 9 and its inner splits are (9 | 7) and (7 | 9); and so on.
    let scheme = Scheme::Nested {
        outer: Box::new(Scheme::OneRowOut),
        inner: Box::new(Scheme::OneRowOut),
    };
    let got = splits(&scheme, &[4, 7, 9], RowFacts::default(), 0).expect("nested splits");
    type Brief = (Role, Option<usize>, Vec<u32>, Vec<u32>);
    let brief: Vec<Brief> = got
        .into_iter()
        .map(|s| (s.role, s.parent, s.train, s.validation))
        .collect();
    let (o, i) = (Role::Outer, Role::Inner);
    let want = vec![
        (o, None, vec![7, 9], vec![4]),
        (i, Some(0), vec![9], vec![7]),
        (i, Some(0), vec![7], vec![9]),
        (o, None, vec![4, 9], vec![7]),
        (i, Some(3), vec![9], vec![4]),
        (i, Some(3), vec![4], vec![9]),
        (o, None, vec![4, 7], vec![9]),
        (i, Some(6), vec![7], vec![4]),
        (i, Some(6), vec![4], vec![7]),
    ];
    assert_eq!(brief, want);
}

#[test]
fn nested_outer_equals_the_scheme_alone_and_inner_streams_differ() {
    let rows: Vec<u32> = (0..40).collect();
    let kfold = Scheme::KFold {
        folds: 4,
        repeats: 1,
        stratify: false,
    };
    let nested = Scheme::Nested {
        outer: Box::new(kfold.clone()),
        inner: Box::new(kfold.clone()),
    };
    let alone = splits(&kfold, &rows, RowFacts::default(), 5).expect("k-fold");
    let got = splits(&nested, &rows, RowFacts::default(), 5).expect("nested");
    let outers: Vec<&Split> = got.iter().filter(|s| s.role == Role::Outer).collect();
    assert_eq!(outers, alone.iter().collect::<Vec<_>>());
    assert_eq!(got.len(), 4 + 4 * 4);
    // Inner splits of outer 0 and outer 1 come from different streams: the
    // first inner validation parts are not both the same shift of the same
    // deal (a weak but failing-capable check: equal only by coincidence).
    assert_ne!(got[1].validation, got[6].validation);
}

#[test]
fn nested_errors() {
    let rows: Vec<u32> = (0..6).collect();
    let kfold = |folds| Scheme::KFold {
        folds,
        repeats: 1,
        stratify: false,
    };
    let nest = |outer: Scheme, inner: Scheme| Scheme::Nested {
        outer: Box::new(outer),
        inner: Box::new(inner),
    };
    let run = |scheme: &Scheme| splits(scheme, &rows, RowFacts::default(), 0).err();
    // Two outer folds of 6 rows train on 3 rows each: 4 inner folds cannot fit.
    let want = ResampleError::Inner {
        outer: 0,
        rows: 3,
        smallest: 3,
        source: Box::new(ResampleError::MoreFoldsThanRows { folds: 4, rows: 3 }),
    };
    assert_eq!(run(&nest(kfold(2), kfold(4))), Some(want));
    let boot = Scheme::Bootstrap {
        splits: 2,
        stratify: false,
    };
    assert_eq!(
        run(&nest(boot, kfold(2))),
        Some(ResampleError::NestedOuter {
            scheme: "bootstrap"
        })
    );
    assert_eq!(
        run(&nest(kfold(2), nest(kfold(2), kfold(2)))),
        Some(ResampleError::NestedInner)
    );
    let message = run(&nest(kfold(2), kfold(4))).map(|e| e.to_string());
    assert_eq!(
        message.as_deref(),
        Some(
            "the inner scheme cannot be carried out inside the training part of outer split 0 \
             (3 rows; the smallest outer training part has 3): 4 folds but only 3 rows in the \
             development partition; use at most 3 folds or leave-one-out"
        )
    );
}

#[test]
fn bootstrap_out_of_bag_share_approaches_one_over_e() {
    // The out-of-bag share of one draw of n from n tends to 1/e = 0.3679
    // (Efron and Tibshirani 1993, An Introduction to the Bootstrap); for
    // n = 1000 its mean is (1 - 1/n)^n = 0.36770. Tolerance: the number of
    // out-of-bag rows of one draw has variance n(n-1)(1-2/n)^n + n(1-1/n)^n
    // - n^2(1-1/n)^(2n) (classical occupancy result, from memory; evaluated
    // in Python: 97.2 for n = 1000), so the share has sd 0.0099 per draw
    // and 0.0007 over 200 draws. 0.005 is seven sd wide plus the 0.0002 gap
    // between (1 - 1/n)^n and 1/e.
    let rows: Vec<u32> = (0..1000).collect();
    let scheme = Scheme::Bootstrap {
        splits: 200,
        stratify: false,
    };
    let got = splits(&scheme, &rows, RowFacts::default(), 2024).expect("bootstrap");
    let total: usize = got.iter().map(|s| s.validation.len()).sum();
    let share = total as f64 / (200.0 * 1000.0);
    assert!(
        (share - (-1.0f64).exp()).abs() < 0.005,
        "out-of-bag share {share}"
    );
}

#[test]
fn more_repeats_or_draws_keep_the_earlier_ones() {
    let rows: Vec<u32> = (0..30).collect();
    let kfold = |repeats| Scheme::KFold {
        folds: 3,
        repeats,
        stratify: false,
    };
    let two = splits(&kfold(2), &rows, RowFacts::default(), 9).expect("k-fold");
    let three = splits(&kfold(3), &rows, RowFacts::default(), 9).expect("k-fold");
    assert_eq!(two[..], three[..6]);
    assert_ne!(three[0].validation, three[3].validation);
    let boot = |draws| Scheme::Bootstrap {
        splits: draws,
        stratify: false,
    };
    let one = splits(&boot(1), &rows, RowFacts::default(), 9).expect("bootstrap");
    let four = splits(&boot(4), &rows, RowFacts::default(), 9).expect("bootstrap");
    assert_eq!(one[..], four[..1]);
    let other_seed = splits(&boot(1), &rows, RowFacts::default(), 10).expect("bootstrap");
    assert_ne!(one, other_seed);
}

#[test]
fn a_missing_order_value_matters_only_where_order_is_used() {
    let order = [1.0, f64::NAN, 2.0, 3.0];
    let facts = RowFacts {
        order: Some(&order),
        ..RowFacts::default()
    };
    let rows = [0, 1, 2, 3];
    let kfold = Scheme::KFold {
        folds: 2,
        repeats: 1,
        stratify: false,
    };
    assert!(splits(&kfold, &rows, facts, 0).is_ok());
    let random = SealSpec::Random {
        fraction: 0.5,
        stratify: false,
    };
    assert!(seal(&random, 4, facts, 0).is_ok());
    let chain = Scheme::ForwardChaining {
        splits: None,
        window: Window::Expanding,
        min_train: 1,
        validation: 1,
        gap: 0,
        step: 1,
    };
    let want = Some(ResampleError::OrderNotANumber { row: 1 });
    assert_eq!(splits(&chain, &rows, facts, 0).err(), want);
    assert_eq!(
        seal(&SealSpec::Last { fraction: 0.5 }, 4, facts, 0).err(),
        want
    );
}

#[test]
fn stratified_kfold_error_names_the_class_code() {
    let class = [3, 3, 3, 5, 5, 3];
    let facts = RowFacts {
        class: Some(&class),
        ..RowFacts::default()
    };
    let scheme = Scheme::KFold {
        folds: 3,
        repeats: 1,
        stratify: true,
    };
    let got = splits(&scheme, &[0, 1, 2, 3, 4, 5], facts, 0).err();
    assert_eq!(
        got.map(|e| e.to_string()).as_deref(),
        Some(
            "class code 5 has only 2 rows in the development partition, fewer than the 3 folds; \
             use at most 2 folds or set stratify = false"
        )
    );
}
