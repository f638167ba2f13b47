//! Seeded bootstrap percentile intervals of a statistic over rows, and the
//! cluster bootstrap that resamples whole groups.
//!
//! Invariants: the only randomness is the caller's [`Stream`], read through
//! `next_u64` and turned into row (or group) positions by an unbiased
//! bounded draw, so the same stream state gives the same interval bit for
//! bit. Draws run in order 0..draws; within a draw positions are drawn in
//! order; groups are numbered in ascending group code. The statistic sees
//! positions `0..rows` into the caller's own row list (not file rows), in
//! draw order, repeats included.

use std::collections::BTreeMap;

use crate::resample::Stream;

use super::draw::below;
use super::error::{StatsError, check_level};
use super::interval::{Interval, IntervalMethod};

/// The sample quantile of `sorted` (ascending, finite) at probability `p`
/// in [0, 1], Hyndman and Fan (1996) definition 7, The American
/// Statistician 50:361-365 (linear interpolation between order statistics:
/// h = (B - 1) p, x[floor h] + (h - floor h)(x[floor h + 1] - x[floor h]),
/// 0-based); the default of R's `quantile` and numpy's `quantile`.
pub fn quantile(sorted: &[f64], p: f64) -> Result<f64, StatsError> {
    if sorted.is_empty() {
        return Err(StatsError::TooFew {
            what: "a quantile",
            needed: 1,
            got: 0,
        });
    }
    if !(0.0..=1.0).contains(&p) {
        return Err(StatsError::Invalid(format!(
            "a quantile needs a probability in [0, 1], got {p}"
        )));
    }
    if !sorted.windows(2).all(|w| w[0] <= w[1]) || !sorted.iter().all(|v| v.is_finite()) {
        return Err(StatsError::Invalid(
            "a quantile needs finite values sorted ascending".into(),
        ));
    }
    let h = (sorted.len() - 1) as f64 * p;
    let k = h.floor() as usize;
    if k + 1 >= sorted.len() {
        return Ok(sorted[sorted.len() - 1]);
    }
    let (a, b) = (sorted[k], sorted[k + 1]);
    Ok((a + (h - k as f64) * (b - a)).clamp(a, b))
}

/// The percentile bootstrap interval (Efron and Tibshirani 1993, An
/// Introduction to the Bootstrap, ch. 13) of `statistic` over `rows`
/// independent rows: `draws` times, draw `rows` positions uniformly with
/// replacement, evaluate the statistic, and take the [`quantile`]s at
/// (1 - level)/2 and (1 + level)/2 of the values. 2000 draws is common
/// practice for a 95% interval. A statistic that is undefined on some draw
/// (returns `None` or a non-finite value) makes the whole interval an
/// [`StatsError::Undefined`] naming the draw: dropping such draws would
/// bias the interval silently.
pub fn bootstrap_percentile<F>(
    rows: usize,
    draws: usize,
    level: f64,
    stream: &mut Stream,
    statistic: F,
) -> Result<Interval, StatsError>
where
    F: FnMut(&[usize]) -> Option<f64>,
{
    rows_interval(rows, draws, level, &mut || stream.next_u64(), statistic)
}

/// The cluster (block-of-units) bootstrap percentile interval for rows that
/// are not independent: `groups[i]` is the group code of row position `i`.
/// Each draw picks as many groups as there are, uniformly with replacement,
/// and passes the positions of all their rows (each group's rows ascending,
/// groups in draw order) to `statistic`; the interval is then as in
/// [`bootstrap_percentile`]. Resampling the top-level units is the
/// recommendation of Davison and Hinkley (1997), Bootstrap Methods and their
/// Application, section 3.8 [mem]. Needs at least two groups.
pub fn cluster_bootstrap_percentile<F>(
    groups: &[u32],
    draws: usize,
    level: f64,
    stream: &mut Stream,
    statistic: F,
) -> Result<Interval, StatsError>
where
    F: FnMut(&[usize]) -> Option<f64>,
{
    cluster_interval(groups, draws, level, &mut || stream.next_u64(), statistic)
}

fn at_least(what: &'static str, needed: usize, got: usize) -> Result<(), StatsError> {
    if got < needed {
        return Err(StatsError::TooFew { what, needed, got });
    }
    Ok(())
}

pub(super) fn rows_interval<F>(
    rows: usize,
    draws: usize,
    level: f64,
    bits: &mut impl FnMut() -> u64,
    statistic: F,
) -> Result<Interval, StatsError>
where
    F: FnMut(&[usize]) -> Option<f64>,
{
    at_least("a bootstrap over rows (rows)", 2, rows)?;
    let resample = |indices: &mut Vec<usize>| {
        indices.extend((0..rows).map(|_| below(bits, rows as u64) as usize));
    };
    let method = IntervalMethod::BootstrapPercentile;
    percentile_interval(draws, level, method, resample, statistic)
}

/// Row positions of each group, groups in ascending code order.
fn members(groups: &[u32]) -> Vec<Vec<usize>> {
    let mut by_code: BTreeMap<u32, Vec<usize>> = BTreeMap::new();
    for (position, &code) in groups.iter().enumerate() {
        by_code.entry(code).or_default().push(position);
    }
    by_code.into_values().collect()
}

pub(super) fn cluster_interval<F>(
    groups: &[u32],
    draws: usize,
    level: f64,
    bits: &mut impl FnMut() -> u64,
    statistic: F,
) -> Result<Interval, StatsError>
where
    F: FnMut(&[usize]) -> Option<f64>,
{
    let members = members(groups);
    at_least("a cluster bootstrap (distinct groups)", 2, members.len())?;
    let count = members.len() as u64;
    let resample = |indices: &mut Vec<usize>| {
        for _ in 0..count {
            indices.extend_from_slice(&members[below(bits, count) as usize]);
        }
    };
    let method = IntervalMethod::ClusterBootstrapPercentile;
    percentile_interval(draws, level, method, resample, statistic)
}

fn percentile_interval<R, F>(
    draws: usize,
    level: f64,
    method: IntervalMethod,
    mut resample: R,
    mut statistic: F,
) -> Result<Interval, StatsError>
where
    R: FnMut(&mut Vec<usize>),
    F: FnMut(&[usize]) -> Option<f64>,
{
    check_level(level)?;
    at_least("a bootstrap interval (draws)", 2, draws)?;
    let mut values = Vec::with_capacity(draws);
    let mut indices = Vec::new();
    for draw in 0..draws {
        indices.clear();
        resample(&mut indices);
        match statistic(&indices) {
            Some(v) if v.is_finite() => values.push(v),
            _ => return Err(undefined_on(draw, draws)),
        }
    }
    values.sort_by(f64::total_cmp);
    Ok(Interval {
        low: quantile(&values, (1.0 - level) / 2.0)?,
        high: quantile(&values, (1.0 + level) / 2.0)?,
        level,
        method,
    })
}

fn undefined_on(draw: usize, draws: usize) -> StatsError {
    StatsError::Undefined(format!(
        "the statistic is undefined on bootstrap draw {draw} of {draws} \
         (for example a class missing from the resample); use a statistic \
         defined on every resample or more rows"
    ))
}

#[cfg(test)]
mod tests {
    use super::super::draw::tests::splitmix;
    use super::super::interval::wilson;
    use super::*;

    /// 0/1 outcomes with `ones` ones among `n` rows.
    fn outcomes(ones: usize, n: usize) -> Vec<f64> {
        (0..n).map(|i| if i < ones { 1.0 } else { 0.0 }).collect()
    }

    fn mean_of(values: &[f64]) -> impl FnMut(&[usize]) -> Option<f64> + '_ {
        |idx: &[usize]| Some(idx.iter().map(|&i| values[i]).sum::<f64>() / idx.len() as f64)
    }

    #[test]
    fn quantile_matches_numpy() {
        // [ref] numpy 2.4.6 np.quantile (default method "linear", = Hyndman
        // and Fan type 7) of the unsorted values 3,1,4,1,5,9,2,6.
        let sorted = [1.0, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 9.0];
        let cases = [
            (0.0, 1.0),
            (0.025, 1.0),
            (0.25, 1.75),
            (0.5, 3.5),
            (0.975, 8.475000000000001),
            (1.0, 9.0),
        ];
        for (p, want) in cases {
            assert!(
                (quantile(&sorted, p).unwrap() - want).abs() < 1e-12,
                "p {p}"
            );
        }
        assert!(quantile(&[2.0, 1.0], 0.5).is_err());
        assert!(quantile(&[], 0.5).is_err());
    }

    #[test]
    fn bootstrap_of_a_proportion_is_close_to_wilson() {
        // 600 of 2000 rows; Wilson 95% is (0.280315, 0.320451) [ref:
        // statsmodels 0.15.0 proportion_confint(600, 2000, method="wilson")]
        // and our wilson() is checked against it in interval.rs. The
        // percentile interval is a Monte Carlo estimate of the same limits:
        // with 2000 draws its endpoints have a standard error near 0.0006
        // (sqrt(0.025*0.975/2000) / density of the bootstrap distribution at
        // its 2.5% point), so a tolerance of 0.003 (about five standard
        // errors, 15% of the half-width 0.020) is stated for this test.
        let values = outcomes(600, 2000);
        let w = wilson(600, 2000, 0.95).unwrap();
        let b = rows_interval(2000, 2000, 0.95, &mut splitmix(7), mean_of(&values)).unwrap();
        assert!((b.low - w.low).abs() < 0.003, "{b:?} vs {w:?}");
        assert!((b.high - w.high).abs() < 0.003, "{b:?} vs {w:?}");
        assert_eq!(b.method, IntervalMethod::BootstrapPercentile);
    }

    #[test]
    fn bootstrap_with_the_real_stream_is_close_to_wilson() {
        // Same check and tolerance as above, through the public API.
        let values = outcomes(600, 2000);
        let w = wilson(600, 2000, 0.95).unwrap();
        let mut stream = Stream::new(7, "stats/test");
        let b = bootstrap_percentile(2000, 2000, 0.95, &mut stream, mean_of(&values)).unwrap();
        assert!((b.low - w.low).abs() < 0.003, "{b:?} vs {w:?}");
        assert!((b.high - w.high).abs() < 0.003, "{b:?} vs {w:?}");
    }

    #[test]
    fn same_seed_gives_the_same_bits() {
        // Continuous values, so that different draws give different limits.
        let values: Vec<f64> = (0..100).map(|i| f64::from(i).sqrt()).collect();
        let run = || {
            let mut stream = Stream::new(11, "stats/test");
            bootstrap_percentile(100, 500, 0.95, &mut stream, mean_of(&values)).unwrap()
        };
        let (a, b) = (run(), run());
        assert_eq!(a.low.to_bits(), b.low.to_bits());
        assert_eq!(a.high.to_bits(), b.high.to_bits());
        let local = |seed| rows_interval(100, 500, 0.95, &mut splitmix(seed), mean_of(&values));
        assert_eq!(local(3).unwrap(), local(3).unwrap());
        assert_ne!(local(3).unwrap(), local(4).unwrap());
    }

    #[test]
    fn singleton_groups_reproduce_the_row_bootstrap() {
        // Group code = row position: every group is one row, drawn with the
        // same bounded draws, so the two must agree bit for bit.
        let values = outcomes(40, 150);
        let codes: Vec<u32> = (0..150).collect();
        let rows = rows_interval(150, 300, 0.9, &mut splitmix(5), mean_of(&values)).unwrap();
        let groups = cluster_interval(&codes, 300, 0.9, &mut splitmix(5), mean_of(&values));
        let groups = groups.unwrap();
        assert_eq!((rows.low, rows.high), (groups.low, groups.high));
        assert_eq!(groups.method, IntervalMethod::ClusterBootstrapPercentile);
    }

    #[test]
    fn repeated_rows_widen_the_cluster_interval() {
        // 500 units, each written as 4 identical rows: the row bootstrap
        // believes it has 2000 independent rows, the cluster bootstrap sees
        // 500, so its interval is sqrt(4) = 2 times wider in expectation
        // (standard error of a mean, common practice); 1.8..2.2 allows for
        // Monte Carlo error.
        let units = outcomes(150, 500);
        let values: Vec<f64> = units.iter().flat_map(|&v| [v; 4]).collect();
        let codes: Vec<u32> = (0..2000).map(|i| i / 4).collect();
        let rows = rows_interval(2000, 2000, 0.95, &mut splitmix(9), mean_of(&values)).unwrap();
        let groups = cluster_interval(&codes, 2000, 0.95, &mut splitmix(9), mean_of(&values));
        let groups = groups.unwrap();
        let ratio = (groups.high - groups.low) / (rows.high - rows.low);
        assert!((1.8..2.2).contains(&ratio), "ratio {ratio}");
    }

    #[test]
    fn undefined_statistic_and_bad_arguments_are_errors() {
        let mut stream = Stream::new(1, "stats/test");
        let never = |_: &[usize]| None;
        let undefined = bootstrap_percentile(10, 20, 0.95, &mut stream, never);
        assert!(matches!(undefined, Err(StatsError::Undefined(_))));
        let nan = |_: &[usize]| Some(f64::NAN);
        assert!(bootstrap_percentile(10, 20, 0.95, &mut stream, nan).is_err());
        let one = |_: &[usize]| Some(1.0);
        assert!(bootstrap_percentile(1, 20, 0.95, &mut stream, one).is_err());
        assert!(bootstrap_percentile(10, 1, 0.95, &mut stream, one).is_err());
        assert!(bootstrap_percentile(10, 20, 1.0, &mut stream, one).is_err());
        assert!(cluster_bootstrap_percentile(&[3, 3, 3], 20, 0.95, &mut stream, one).is_err());
    }
}
