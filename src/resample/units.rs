//! The development rows seen the way resampling moves them: checked facts,
//! class lists, groups (units that always move whole) and time points.
//!
//! Everything here works on *positions*: indices into the sorted `rows`
//! slice being resampled, so iterating positions in order yields rows in
//! ascending order and outputs need no sorting. Every structure is built in
//! a fixed order from the facts alone (codes ascending, positions ascending
//! within a code), never from hashing or iteration over unordered maps.

use std::collections::BTreeMap;

use super::{ResampleError, RowFacts, Split, Stream};

/// The rows being resampled with their facts and stream settings.
#[derive(Clone, Copy, Debug)]
pub(super) struct Ctx<'a> {
    /// Sorted ascending, distinct, non-empty.
    pub rows: &'a [u32],
    pub facts: RowFacts<'a>,
    pub seed: u64,
    /// Stream label prefix: `resample`, or `resample/inner/<i>` in nested.
    pub prefix: &'a str,
}

impl Ctx<'_> {
    /// The stream for one repeat or draw of a scheme: `<prefix>/<scheme>/<n>`.
    pub fn stream(&self, scheme: &str, number: usize) -> Stream {
        Stream::new(self.seed, &format!("{}/{scheme}/{number}", self.prefix))
    }

    /// Number of rows.
    pub fn len(&self) -> usize {
        self.rows.len()
    }

    /// The class column, or an error naming what needed it.
    pub fn class(&self, what: &'static str) -> Result<&[u32], ResampleError> {
        self.facts.class.ok_or(ResampleError::NeedsClass { what })
    }
}

/// A shuffle that is either seeded or the identity (for hand-worked tests).
#[derive(Clone, Debug)]
pub(super) enum Mix {
    Seeded(Box<Stream>),
    #[cfg_attr(not(test), allow(dead_code))]
    Identity,
}

impl Mix {
    pub fn seeded(stream: Stream) -> Mix {
        Mix::Seeded(Box::new(stream))
    }

    pub fn shuffle<T>(&mut self, items: &mut [T]) {
        if let Mix::Seeded(stream) = self {
            stream.shuffle(items);
        }
    }
}

/// Check that `rows` is non-empty, strictly ascending and covered by every
/// fact column given. Order values are checked where they are used
/// ([`Times::new`]), so a scheme that ignores order never fails on one.
pub(super) fn check_rows(rows: &[u32], facts: RowFacts<'_>) -> Result<(), ResampleError> {
    let Some(&last) = rows.last() else {
        return Err(ResampleError::NoRows);
    };
    if let Some(pair) = rows.windows(2).find(|pair| pair[0] >= pair[1]) {
        return Err(ResampleError::RowsUnsorted { row: pair[1] });
    }
    let lens = [
        ("class", facts.class.map(<[u32]>::len)),
        ("group", facts.group.map(<[u32]>::len)),
        ("order", facts.order.map(<[f64]>::len)),
    ];
    for (column, len) in lens {
        if let Some(len) = len.filter(|&len| last as usize >= len) {
            return Err(ResampleError::FactsTooShort {
                column,
                row: last,
                len,
            });
        }
    }
    Ok(())
}

/// Positions of each class, classes in code order, positions ascending.
pub(super) fn class_lists(rows: &[u32], class: &[u32]) -> Vec<(u32, Vec<u32>)> {
    let mut lists: BTreeMap<u32, Vec<u32>> = BTreeMap::new();
    for (pos, &row) in rows.iter().enumerate() {
        lists
            .entry(class[row as usize])
            .or_default()
            .push(pos as u32);
    }
    lists.into_iter().collect()
}

/// Groups as units: CSR lists of positions, groups in code order, with the
/// class make-up of each group when classes are given.
#[derive(Clone, Debug)]
pub(super) struct Units {
    /// Group code of each unit, ascending.
    pub codes: Vec<u32>,
    /// Unit of each position.
    pub of: Vec<u32>,
    start: Vec<usize>,
    members: Vec<u32>,
    /// Class make-up, CSR over units: (class index, rows), class ascending.
    comp_start: Vec<usize>,
    comp: Vec<(u32, u32)>,
}

impl Units {
    /// The groups among `rows` (O(n log g)).
    pub fn new(rows: &[u32], group: &[u32]) -> Units {
        let mut codes: Vec<u32> = rows.iter().map(|&r| group[r as usize]).collect();
        codes.sort_unstable();
        codes.dedup();
        let of: Vec<u32> = rows
            .iter()
            .map(|&r| codes.partition_point(|&c| c < group[r as usize]) as u32)
            .collect();
        let mut start = vec![0usize; codes.len() + 1];
        for &u in &of {
            start[u as usize + 1] += 1;
        }
        for u in 0..codes.len() {
            start[u + 1] += start[u];
        }
        let mut fill = start.clone();
        let mut members = vec![0u32; of.len()];
        for (pos, &u) in of.iter().enumerate() {
            members[fill[u as usize]] = pos as u32;
            fill[u as usize] += 1;
        }
        Units {
            codes,
            of,
            start,
            members,
            comp_start: Vec::new(),
            comp: Vec::new(),
        }
    }

    /// Attach the class make-up of each unit; `class_of` gives the class
    /// index of each position.
    pub fn with_classes(mut self, class_of: &[u32]) -> Units {
        let mut scratch = Vec::new();
        self.comp_start = Vec::with_capacity(self.len() + 1);
        self.comp_start.push(0);
        for u in 0..self.len() {
            scratch.clear();
            scratch.extend(self.positions(u).iter().map(|&p| class_of[p as usize]));
            scratch.sort_unstable();
            for run in scratch.chunk_by(|a, b| a == b) {
                self.comp.push((run[0], run.len() as u32));
            }
            self.comp_start.push(self.comp.len());
        }
        self
    }

    pub fn len(&self) -> usize {
        self.codes.len()
    }

    /// Positions of unit `u`, ascending.
    pub fn positions(&self, u: usize) -> &[u32] {
        &self.members[self.start[u]..self.start[u + 1]]
    }

    pub fn size(&self, u: usize) -> usize {
        self.start[u + 1] - self.start[u]
    }

    /// Class make-up of unit `u` (empty unless built `with_classes`).
    pub fn comp(&self, u: usize) -> &[(u32, u32)] {
        match self.comp_start.get(u..u + 2) {
            Some(&[a, b]) => &self.comp[a..b],
            _ => &[],
        }
    }

    /// Units in shuffled order.
    pub fn shuffled(&self, mix: &mut Mix) -> Vec<u32> {
        let mut order: Vec<u32> = (0..self.len() as u32).collect();
        mix.shuffle(&mut order);
        order
    }

    /// Smallest and largest unit sizes (for error messages).
    pub fn size_range(&self) -> (usize, usize) {
        let sizes = (0..self.len()).map(|u| self.size(u));
        (sizes.clone().min().unwrap_or(0), sizes.max().unwrap_or(0))
    }
}

/// Class index of each position and the distinct class codes, ascending.
pub(super) fn class_index(rows: &[u32], class: &[u32]) -> (Vec<u32>, Vec<u32>) {
    let mut codes: Vec<u32> = rows.iter().map(|&r| class[r as usize]).collect();
    codes.sort_unstable();
    codes.dedup();
    let of = rows
        .iter()
        .map(|&r| codes.partition_point(|&c| c < class[r as usize]) as u32)
        .collect();
    (codes, of)
}

/// Distinct order values as time points: positions sorted by time, and the
/// CSR start of each time point in that list.
#[derive(Clone, Debug)]
pub(super) struct Times {
    pub by_time: Vec<u32>,
    pub start: Vec<usize>,
}

impl Times {
    /// Time points of `rows` under `order`; a NaN among them is an error
    /// naming the lowest such row. -0.0 and 0.0 are the same time point.
    pub fn new(rows: &[u32], order: &[f64]) -> Result<Times, ResampleError> {
        if let Some(&row) = rows.iter().find(|&&r| order[r as usize].is_nan()) {
            return Err(ResampleError::OrderNotANumber { row });
        }
        let value = |pos: u32| {
            let v = order[rows[pos as usize] as usize];
            if v == 0.0 { 0.0 } else { v }
        };
        let mut by_time: Vec<u32> = (0..rows.len() as u32).collect();
        by_time.sort_by(|&a, &b| value(a).total_cmp(&value(b)).then(a.cmp(&b)));
        let mut start = vec![0];
        for i in 1..by_time.len() {
            if value(by_time[i]) != value(by_time[i - 1]) {
                start.push(i);
            }
        }
        start.push(by_time.len());
        Ok(Times { by_time, start })
    }

    /// Number of time points.
    pub fn len(&self) -> usize {
        self.start.len() - 1
    }

    /// Positions of time points `from..to`, ascending by position.
    pub fn positions(&self, from: usize, to: usize) -> Vec<u32> {
        let mut out = self.by_time[self.start[from]..self.start[to]].to_vec();
        out.sort_unstable();
        out
    }

    /// Rows at time point `t`.
    pub fn size(&self, t: usize) -> usize {
        self.start[t + 1] - self.start[t]
    }
}

/// The k splits of one k-fold repeat: fold `f` validates the positions
/// assigned to it and trains on all others.
pub(super) fn emit_folds(rows: &[u32], fold_of: &[u32], folds: usize, repeat: usize) -> Vec<Split> {
    (0..folds)
        .map(|f| {
            let (val, train) = partition(rows, fold_of, |code| code == f as u32);
            split(repeat, f, train, val)
        })
        .collect()
}

/// One split from a part code per position: 0 trains, 1 validates, any
/// other code leaves the row out.
pub(super) fn emit_parts(rows: &[u32], part_of: &[u8], repeat: usize, fold: usize) -> Split {
    let pick = |code: u8| -> Vec<u32> {
        rows.iter()
            .zip(part_of)
            .filter(|&(_, &p)| p == code)
            .map(|(&r, _)| r)
            .collect()
    };
    split(repeat, fold, pick(0), pick(1))
}

fn partition(rows: &[u32], code_of: &[u32], is_val: impl Fn(u32) -> bool) -> (Vec<u32>, Vec<u32>) {
    let mut val = Vec::new();
    let mut train = Vec::with_capacity(rows.len());
    for (&row, &code) in rows.iter().zip(code_of) {
        if is_val(code) {
            val.push(row)
        } else {
            train.push(row)
        }
    }
    (val, train)
}

/// An outer split (the nested driver re-roles inner ones).
pub(super) fn split(repeat: usize, fold: usize, train: Vec<u32>, validation: Vec<u32>) -> Split {
    Split {
        role: super::Role::Outer,
        parent: None,
        repeat: repeat as u32,
        fold: fold as u32,
        train,
        validation,
    }
}

/// Row indices of a list of positions, ascending when the positions are.
pub(super) fn rows_at(rows: &[u32], positions: &[u32]) -> Vec<u32> {
    positions.iter().map(|&p| rows[p as usize]).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn check_rows_reports_each_defect() {
        let order = [1.0, f64::NAN, 3.0];
        assert_eq!(
            Times::new(&[0, 1, 2], &order).err(),
            Some(ResampleError::OrderNotANumber { row: 1 })
        );
        let class = [0, 1];
        let facts = RowFacts {
            class: Some(&class),
            ..RowFacts::default()
        };
        let order_facts = RowFacts {
            order: Some(&order),
            ..RowFacts::default()
        };
        let cases: Vec<(&[u32], RowFacts<'_>, ResampleError)> = vec![
            (&[], facts, ResampleError::NoRows),
            (&[1, 1], facts, ResampleError::RowsUnsorted { row: 1 }),
            (&[1, 0], facts, ResampleError::RowsUnsorted { row: 0 }),
            (
                &[0, 2],
                facts,
                ResampleError::FactsTooShort {
                    column: "class",
                    row: 2,
                    len: 2,
                },
            ),
        ];
        for (rows, facts, want) in cases {
            assert_eq!(check_rows(rows, facts), Err(want));
        }
        // A NaN order value is not checked here: only where order is used.
        assert_eq!(check_rows(&[0, 1, 2], order_facts), Ok(()));
    }

    #[test]
    fn units_list_groups_in_code_order_with_class_make_up() {
        // rows 1..=6 of a file; groups by row: 9, 4, 9, 4, 7, 9
        let group = [0, 9, 4, 9, 4, 7, 9];
        let class_of = [0, 1, 1, 1, 0, 0];
        let units = Units::new(&[1, 2, 3, 4, 5, 6], &group).with_classes(&class_of);
        assert_eq!(units.codes, vec![4, 7, 9]);
        assert_eq!(units.positions(0), &[1, 3]);
        assert_eq!(units.positions(1), &[4]);
        assert_eq!(units.positions(2), &[0, 2, 5]);
        assert_eq!(units.comp(0), &[(1, 2)]);
        assert_eq!(units.comp(2), &[(0, 2), (1, 1)]);
        assert_eq!(units.size_range(), (1, 3));
    }

    #[test]
    fn time_points_merge_equal_values() {
        let order = [3.0, -0.0, 0.0, 3.0, -1.0];
        let times = Times::new(&[0, 1, 2, 3, 4], &order).expect("no NaN");
        assert_eq!(times.len(), 3);
        assert_eq!(times.positions(0, 1), vec![4]);
        assert_eq!(times.positions(1, 2), vec![1, 2]);
        assert_eq!(times.positions(1, 3), vec![0, 1, 2, 3]);
    }
}
