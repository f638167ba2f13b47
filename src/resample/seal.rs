//! The sealed partition: the rows kept away from every learner while models
//! are selected, and the development rows, which are resampled.
//!
//! The sealed target is `s = round(fraction * rows)` rows, halves rounded
//! away from zero (`fraction` strictly between 0 and 1). Each partition must
//! end with at least one row, or sealing is an error. All random choices
//! come from the stream labelled `seal`.
//!
//! - Random, plain: shuffle the rows; the first `s` are sealed (exactly `s`).
//! - Random, stratified: class quotas from `super::apportion` with parts
//!   `[s, rows - s]`, i.e. the largest-remainder method, ties by lower class
//!   code (exactly `s` rows, each class within one row of its share); each
//!   class's rows (ascending, classes in code order) are shuffled and the
//!   first quota sealed.
//! - Random, grouped (whenever the facts carry a group column): whole groups
//!   are sealed, aiming at `s` rows. Groups (code order) are shuffled and
//!   walked in that order; a group is sealed while fewer than `s` rows are
//!   and sealing it leaves the count no farther from `s` (its size is at
//!   most twice the rows still missing), otherwise it stays in development
//!   (`super::place::fill`). The count may miss `s` by up to a group.
//! - Random, grouped and stratified: groups in shuffled order, each to the
//!   partition (sealed weighted `s`, development `rows - s`) where class
//!   counts stay closest to their targets (`super::place::closest_shares`).
//! - Last: the latest rows by the order column. Time points (distinct order
//!   values) are taken from the latest back while fewer than `s` rows are
//!   sealed and taking the next keeps the count no farther from `s`; rows
//!   sharing an order value never straddle the cut. A group column is not
//!   consulted: as in forward-chaining, the cut is by time, so one unit may
//!   have rows on both sides.

use serde::Serialize;

use super::apportion::apportion;
use super::kfold::out_of_range;
use super::place::{closest_shares, fill};
use super::units::{Mix, Times, Units, check_rows, class_index, class_lists};
use super::{ResampleError, RowFacts, Stream};

/// How the sealed partition is drawn.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "by")]
pub enum SealSpec {
    /// A random `fraction` of the rows (met with whole groups, when
    /// grouped), stratified by class when asked.
    Random { fraction: f64, stratify: bool },
    /// The latest `fraction` of the rows by the order column.
    Last { fraction: f64 },
}

/// The sealed rows and the development rows, each sorted, together every row
/// exactly once.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Partition {
    pub sealed: Vec<u32>,
    pub development: Vec<u32>,
}

/// Draw the sealed partition of `rows` file rows (stream label `seal`).
pub fn seal(
    spec: &SealSpec,
    rows: usize,
    facts: RowFacts<'_>,
    seed: u64,
) -> Result<Partition, ResampleError> {
    if rows == 0 {
        return Err(ResampleError::NoData);
    }
    if u32::try_from(rows).is_err() {
        return Err(ResampleError::Impossible(format!(
            "{rows} rows are more than the {} a row index can hold; split the data file",
            u32::MAX
        )));
    }
    let all: Vec<u32> = (0..rows as u32).collect();
    check_rows(&all, facts)?;
    let (SealSpec::Random { fraction, .. } | SealSpec::Last { fraction }) = *spec;
    let target = sealed_target(fraction, rows)?;
    let sealed = match *spec {
        SealSpec::Random { stratify, .. } => {
            let mut mix = Mix::seeded(Stream::new(seed, "seal"));
            random(&all, facts, target, stratify, &mut mix)?
        }
        SealSpec::Last { .. } => last(&all, facts, target)?,
    };
    let (mut part, mut development) = (Vec::with_capacity(target), Vec::new());
    for (row, is_sealed) in all.into_iter().zip(sealed) {
        if is_sealed {
            part.push(row)
        } else {
            development.push(row)
        }
    }
    Ok(Partition {
        sealed: part,
        development,
    })
}

/// `round(fraction * rows)`, which must leave a row on each side.
fn sealed_target(fraction: f64, rows: usize) -> Result<usize, ResampleError> {
    if !(fraction.is_finite() && fraction > 0.0 && fraction < 1.0) {
        return Err(out_of_range(
            "fraction",
            fraction,
            "a fraction between 0 and 1",
        ));
    }
    let got = (fraction * rows as f64).round() as usize;
    let fix = match got {
        0 => "raise it so that at least one row is sealed",
        g if g >= rows => "lower it so that at least one row is left for development",
        _ => return Ok(got),
    };
    Err(ResampleError::SizeRounds {
        key: "fraction",
        value: fraction.to_string(),
        rows,
        got,
        fix,
    })
}

/// Whether each row is sealed, for a random seal.
fn random(
    all: &[u32],
    facts: RowFacts<'_>,
    s: usize,
    stratify: bool,
    mix: &mut Mix,
) -> Result<Vec<bool>, ResampleError> {
    let n = all.len();
    let class = || {
        facts.class.ok_or(ResampleError::NeedsClass {
            what: "a stratified seal",
        })
    };
    let mut sealed = vec![false; n];
    match (facts.group, stratify) {
        (None, false) => {
            let mut order = all.to_vec();
            mix.shuffle(&mut order);
            order[..s].iter().for_each(|&r| sealed[r as usize] = true);
        }
        (None, true) => {
            let lists = class_lists(all, class()?);
            let sizes: Vec<usize> = lists.iter().map(|(_, list)| list.len()).collect();
            let quotas = apportion(&sizes, &[s, n - s])?;
            for ((_, mut list), quota) in lists.into_iter().zip(quotas) {
                mix.shuffle(&mut list);
                list[..quota[0]]
                    .iter()
                    .for_each(|&r| sealed[r as usize] = true);
            }
        }
        (Some(group), false) => {
            let units = Units::new(all, group);
            let unit_part = fill(&units, &units.shuffled(mix), &[s]);
            sealed = by_unit(&units, &unit_part, s)?;
        }
        (Some(group), true) => {
            let (codes, class_of) = class_index(all, class()?);
            let units = Units::new(all, group).with_classes(&class_of);
            let weights = [s as u64, (n - s) as u64];
            let unit_part = closest_shares(&units, &units.shuffled(mix), &weights, codes.len());
            sealed = by_unit(&units, &unit_part, s)?;
        }
    }
    Ok(sealed)
}

/// Rows sealed when their unit's part is 0; both sides must keep a row.
fn by_unit(units: &Units, unit_part: &[u32], s: usize) -> Result<Vec<bool>, ResampleError> {
    let sealed: Vec<bool> = units
        .of
        .iter()
        .map(|&u| unit_part[u as usize] == 0)
        .collect();
    let got = sealed.iter().filter(|&&x| x).count();
    let (part, target, fix) = if got == 0 {
        ("sealed", s, "raise fraction")
    } else if got == sealed.len() {
        ("development", sealed.len() - s, "lower fraction")
    } else {
        return Ok(sealed);
    };
    let (smallest, largest) = units.size_range();
    Err(ResampleError::GroupsTooCoarse {
        part,
        got: 0,
        target,
        smallest,
        largest,
        fix,
    })
}

/// Whether each row is sealed, for the latest rows by order.
fn last(all: &[u32], facts: RowFacts<'_>, s: usize) -> Result<Vec<bool>, ResampleError> {
    let order = facts.order.ok_or(ResampleError::NeedsOrder {
        what: "sealing the last rows",
        instead: "seal a random fraction",
    })?;
    let times = Times::new(all, order)?;
    let (mut got, mut from) = (0, times.len());
    while from > 0 && got < s && times.size(from - 1) <= 2 * (s - got) {
        from -= 1;
        got += times.size(from);
    }
    if got == 0 || got == all.len() {
        return Err(ResampleError::TimePointsTooCoarse {
            got,
            target: s,
            rows: all.len(),
        });
    }
    let mut sealed = vec![false; all.len()];
    times
        .positions(from, times.len())
        .iter()
        .for_each(|&p| sealed[p as usize] = true);
    Ok(sealed)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn facts<'a>(
        class: Option<&'a [u32]>,
        group: Option<&'a [u32]>,
        order: Option<&'a [f64]>,
    ) -> RowFacts<'a> {
        RowFacts {
            class,
            group,
            order,
        }
    }

    fn identity(rows: usize, facts: RowFacts<'_>, s: usize, stratify: bool) -> Vec<u32> {
        let all: Vec<u32> = (0..rows as u32).collect();
        let sealed = random(&all, facts, s, stratify, &mut Mix::Identity).expect("sealable");
        (0..rows as u32).filter(|&r| sealed[r as usize]).collect()
    }

    #[test]
    fn random_seals_without_shuffle_by_hand() {
        // By hand, 10 rows, s = 3.
        // plain: the first 3 rows.
        assert_eq!(identity(10, RowFacts::default(), 3, false), vec![0, 1, 2]);
        // stratified, classes 0 (rows 0..6) and 1 (6..10): shares 1.8 and
        // 1.2, floors 1 and 1, the ceiling to class 0 (remainder 0.8):
        // rows 0, 1 and 6.
        let class = [0, 0, 0, 0, 0, 0, 1, 1, 1, 1];
        assert_eq!(
            identity(10, facts(Some(&class), None, None), 3, true),
            vec![0, 1, 6]
        );
        // grouped: groups {0,1} {2,3,4,5} {6} {7,8,9}; g0 sealed (2 <= 6),
        // g1 not (4 > 2), g2 sealed (1 <= 2): 3 rows, target met.
        let group = [0, 0, 1, 1, 1, 1, 2, 3, 3, 3];
        assert_eq!(
            identity(10, facts(None, Some(&group), None), 3, false),
            vec![0, 1, 6]
        );
    }

    #[test]
    fn last_seals_latest_time_points_by_hand() {
        // By hand: order values by row 5,1,4,4,2,3,5,0; s = round(0.3 * 8)
        // = 2: time 5 (rows 0 and 6) gives 2 rows.
        let order = [5.0, 1.0, 4.0, 4.0, 2.0, 3.0, 5.0, 0.0];
        let got = seal(
            &SealSpec::Last { fraction: 0.3 },
            8,
            facts(None, None, Some(&order)),
            1,
        );
        let want = Partition {
            sealed: vec![0, 6],
            development: vec![1, 2, 3, 4, 5, 7],
        };
        assert_eq!(got, Ok(want));
        // s = round(0.45 * 8) = 4: time 5 (2 rows), time 4 (2 more): 0,2,3,6.
        let got = seal(
            &SealSpec::Last { fraction: 0.45 },
            8,
            facts(None, None, Some(&order)),
            1,
        );
        assert_eq!(got.map(|p| p.sealed), Ok(vec![0, 2, 3, 6]));
    }

    #[test]
    fn bad_seals_are_errors() {
        let order = [1.0, 2.0, 2.0, 2.0];
        let group = [0, 0, 0, 0];
        let random = SealSpec::Random {
            fraction: 0.5,
            stratify: false,
        };
        let cases = [
            (random, 0, RowFacts::default(), ResampleError::NoData),
            (
                SealSpec::Random {
                    fraction: 1.5,
                    stratify: false,
                },
                4,
                RowFacts::default(),
                out_of_range("fraction", 1.5, "a fraction between 0 and 1"),
            ),
            (
                SealSpec::Random {
                    fraction: 0.1,
                    stratify: false,
                },
                4,
                RowFacts::default(),
                ResampleError::SizeRounds {
                    key: "fraction",
                    value: "0.1".into(),
                    rows: 4,
                    got: 0,
                    fix: "raise it so that at least one row is sealed",
                },
            ),
            (
                SealSpec::Random {
                    fraction: 0.5,
                    stratify: true,
                },
                4,
                RowFacts::default(),
                ResampleError::NeedsClass {
                    what: "a stratified seal",
                },
            ),
            (
                SealSpec::Last { fraction: 0.5 },
                4,
                RowFacts::default(),
                ResampleError::NeedsOrder {
                    what: "sealing the last rows",
                    instead: "seal a random fraction",
                },
            ),
            // s = 1, but the latest time point holds 3 rows (3 > 2 * 1).
            (
                SealSpec::Last { fraction: 0.25 },
                4,
                facts(None, None, Some(&order)),
                ResampleError::TimePointsTooCoarse {
                    got: 0,
                    target: 1,
                    rows: 4,
                },
            ),
        ];
        for (spec, rows, facts, want) in cases {
            assert_eq!(seal(&spec, rows, facts, 3), Err(want));
        }
        let one_group = seal(&random, 4, facts(None, Some(&group), None), 3);
        assert!(
            matches!(one_group, Err(ResampleError::GroupsTooCoarse { .. })),
            "{one_group:?}"
        );
    }
}
