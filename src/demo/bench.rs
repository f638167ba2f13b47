//! Benchmark inputs: many rows of plain numeric features with a class label,
//! a group column and an order column, written as a stream so that a
//! million-row file never sits in memory.
//!
//! Columns: `unit` (group, `u0001`...), `t` (order: the row's index within
//! its unit), `f01`..`fNN`, `label` (`c0`...). Row `i` belongs to unit
//! `i % groups`. Every feature is standard normal noise plus a unit effect;
//! the first three features also carry the class (a shift of 0.8 per class
//! code). Invariant: the bytes depend only on the arguments.

use std::fmt::Write as _;
use std::io::{self, BufWriter, Write};

use super::random::Draws;
use super::turbines::push_fixed;

/// Shift of the first features' mean per class code.
const CLASS_SHIFT: f64 = 0.8;
/// How many leading features carry the class.
const SIGNAL_FEATURES: usize = 3;

/// Write a benchmark CSV to `w` (buffered here; no need to wrap it).
/// `groups` and `classes` below 1 are taken as 1.
pub fn write_bench(
    w: &mut impl Write,
    seed: u64,
    rows: usize,
    groups: usize,
    features: usize,
    classes: usize,
) -> io::Result<()> {
    let (groups, classes) = (groups.max(1), classes.max(1));
    let mut out = BufWriter::new(w);
    let mut draws = Draws::new("holdfast/demo/bench", seed);
    let unit_effect: Vec<f64> = (0..groups).map(|_| draws.gauss(0.0, 0.5)).collect();
    let unit_width = groups.to_string().len().max(4);
    let feature_width = features.to_string().len().max(2);
    let mut line: String = ["unit".to_owned(), "t".to_owned()]
        .into_iter()
        .chain((1..=features).map(|j| format!("f{j:0feature_width$}")))
        .chain(["label".to_owned()])
        .collect::<Vec<_>>()
        .join(",");
    line.push('\n');
    out.write_all(line.as_bytes())?;
    for i in 0..rows {
        line.clear();
        let (unit, t) = (i % groups, i / groups);
        let class = draws.below(classes as u64);
        // Writing to a String cannot fail.
        let _ = write!(line, "u{:0unit_width$},{t}", unit + 1);
        for j in 0..features {
            // Alternate the sign of the unit effect so features differ.
            let sign = if j % 2 == 0 { 1.0 } else { -1.0 };
            let shift = if j < SIGNAL_FEATURES {
                CLASS_SHIFT * class as f64
            } else {
                0.0
            };
            line.push(',');
            push_fixed(
                &mut line,
                draws.gauss(shift + sign * unit_effect[unit], 1.0),
                4,
            );
        }
        let _ = writeln!(line, ",c{class}");
        out.write_all(line.as_bytes())?;
    }
    out.flush()
}

/// [`write_bench`] into a string, for small inputs in tests.
pub fn bench_csv(seed: u64, rows: usize, groups: usize, features: usize, classes: usize) -> String {
    let mut bytes = Vec::new();
    // Writing to a Vec cannot fail.
    let _ = write_bench(&mut bytes, seed, rows, groups, features, classes);
    String::from_utf8_lossy(&bytes).into_owned()
}
