//! The fold map: for each outer split, which rows trained, which validated
//! and which stayed sealed, by unit (group) or in time order where the plan
//! has them.
//!
//! A selection records split sizes, not row sets, so the recorded plan is
//! re-resolved from the entry's plan text against its data file and
//! compiled, as replay does. When the file is missing, its fingerprint
//! differs, the plan no longer resolves to the recorded hash, or the
//! compiled splits are not the recorded ones, the map is left out and the
//! reason is given in words.
//!
//! Invariants: columns are units in a fixed order (time, then group code,
//! then row index); a column's role is the role of most of its rows (ties
//! to validation, then training, sealed, unused); runs of one role are one
//! `cell <role>` element.

use plotters::prelude::*;

use crate::analysis::Analysis;
use crate::compile::{self, JobSheet};
use crate::ledger::Entry;
use crate::plan::Resolved;
use crate::resample::Scheme;

use super::plots::{GRID, Key, Plot, Swatch, WIDTH, draw_error, row_labels};
use super::svg::Figure;

/// At most this many columns; more units are binned.
const MAX_COLUMNS: usize = 520;
/// At most this many split rows are drawn.
const MAX_ROWS: usize = 60;

/// The roles a row can have in one split, in tie-break order.
const ROLES: [(&str, RGBColor); 4] = [
    ("validation", RGBColor(230, 126, 34)),
    ("training", RGBColor(133, 183, 229)),
    ("sealed", RGBColor(70, 70, 70)),
    ("unused", RGBColor(240, 240, 240)),
];

/// The drawn map and what its columns are.
pub struct FoldMap {
    pub plot: Plot,
    /// The columns in words, and any rows or splits not drawn.
    pub note: String,
}

/// The recorded plan, resolved against its data as replay does.
fn recorded_plan(entry: &Entry) -> Result<Resolved, String> {
    crate::exec::recorded_plan(entry).map_err(|e| e.to_string())
}

fn cuts_by_time(s: &Scheme) -> bool {
    match s {
        Scheme::ForwardChaining { .. } => true,
        Scheme::Nested { outer, .. } => cuts_by_time(outer),
        _ => false,
    }
}

/// The units (rows of each, in column order) and a description of them.
fn units(r: &Resolved, sheet: &JobSheet) -> (Vec<Vec<u32>>, String) {
    let rows: Vec<u32> = (0..r.data.rows() as u32).collect();
    let order = r.data.order.as_ref();
    let time = |i: u32| order.map_or(0.0, |o| o[i as usize]);
    let _ = sheet;
    let by_key = |key: &dyn Fn(u32) -> (f64, u32)| {
        let mut keyed: Vec<(f64, u32, u32)> =
            rows.iter().map(|&i| (key(i).0, key(i).1, i)).collect();
        keyed.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)).then(a.2.cmp(&b.2)));
        keyed
    };
    let order_name = r.plan.data.order.clone().unwrap_or_default();
    if let (Some(o), true) = (order, cuts_by_time(&r.plan.resample)) {
        let keyed = by_key(&|i| (o[i as usize], 0));
        let units = group_runs(&keyed, |k| k.0.to_bits());
        let text = format!("each column is one time point ({order_name}), in time order");
        return (units, text);
    }
    if let Some(g) = &r.data.group {
        let first_time = |code: u32| {
            rows.iter()
                .filter(|&&i| g[i as usize] == code)
                .map(|&i| time(i))
                .fold(f64::INFINITY, f64::min)
        };
        let keyed = by_key(&|i| {
            (
                if order.is_some() {
                    first_time(g[i as usize])
                } else {
                    0.0
                },
                g[i as usize],
            )
        });
        let units = group_runs(&keyed, |k| k.1 as u64);
        let group = r.plan.data.group.clone().unwrap_or_default();
        let how = if order.is_some() {
            format!("ordered by their first {order_name}")
        } else {
            "in name order".into()
        };
        return (units, format!("each column is one {group}, {how}"));
    }
    if let Some(o) = order {
        let keyed = by_key(&|i| (o[i as usize], 0));
        return (
            keyed.iter().map(|k| vec![k.2]).collect(),
            format!("each column is one row, in {order_name} order"),
        );
    }
    (
        rows.iter().map(|&i| vec![i]).collect(),
        "each column is one row, in file order".into(),
    )
}

/// Consecutive keyed rows with equal `key` as one unit.
fn group_runs(keyed: &[(f64, u32, u32)], key: impl Fn(&(f64, u32, u32)) -> u64) -> Vec<Vec<u32>> {
    let mut out: Vec<Vec<u32>> = Vec::new();
    let mut last = None;
    for k in keyed {
        let this = key(k);
        match out.last_mut() {
            Some(unit) if last == Some(this) => unit.push(k.2),
            _ => out.push(vec![k.2]),
        }
        last = Some(this);
    }
    out
}

/// The role index of every data row in one split.
fn row_roles(rows: usize, sealed: &[u32], train: &[u32], validation: &[u32]) -> Vec<usize> {
    let mut role = vec![3; rows];
    for &i in sealed {
        role[i as usize] = 2;
    }
    for &i in train {
        role[i as usize] = 1;
    }
    for &i in validation {
        role[i as usize] = 0;
    }
    role
}

/// The role of each column: most of its rows' roles, ties in role order.
fn column_roles(columns: &[Vec<u32>], roles: &[usize]) -> Vec<usize> {
    columns
        .iter()
        .map(|rows| {
            let mut count = [0usize; 4];
            rows.iter().for_each(|&i| count[roles[i as usize]] += 1);
            (0..4).fold(0, |best, k| if count[k] > count[best] { k } else { best })
        })
        .collect()
}

/// Units binned into at most [`MAX_COLUMNS`] columns.
fn bin(units: Vec<Vec<u32>>) -> (Vec<Vec<u32>>, usize) {
    let per = units.len().div_ceil(MAX_COLUMNS).max(1);
    if per == 1 {
        return (units, 1);
    }
    (units.chunks(per).map(|c| c.concat()).collect(), per)
}

fn split_label(a: &Analysis, i: usize) -> String {
    let s = &a.outer_splits[i];
    let repeats = a.outer_splits.iter().map(|s| s.repeat).max().unwrap_or(0);
    match a.scheme.as_str() {
        "k-fold" if repeats > 0 => format!("repeat {} fold {}", s.repeat + 1, s.fold + 1),
        "k-fold" => format!("fold {}", s.fold + 1),
        "bootstrap" => format!("draw {}", i + 1),
        _ => format!("split {}", i + 1),
    }
}

/// The fold map of selection `entry`, or why there is none.
pub fn fold_map(entry: &Entry, a: &Analysis) -> Result<FoldMap, String> {
    let r = recorded_plan(entry)?;
    let sheet =
        compile::compile(&r).map_err(|e| format!("the recorded plan no longer compiles: {e}"))?;
    let outer: Vec<_> = sheet.outer_splits().collect();
    let same = outer.len() == a.outer_splits.len()
        && outer.iter().zip(&a.outer_splits).all(|(s, t)| s.id == t.id);
    if !same {
        return Err("the recorded plan compiles to other splits than the entry records".into());
    }
    let (units, what) = units(&r, &sheet);
    let unit_count = units.len();
    let (columns, per) = bin(units);
    let mut note = what;
    if per > 1 {
        note.push_str(&format!("; {unit_count} of them, so each drawn column joins {per} and shows the role of most of their rows"));
    }
    let shown = outer.len().min(MAX_ROWS);
    if shown < outer.len() {
        note.push_str(&format!(
            "; the first {shown} of {} splits are drawn",
            outer.len()
        ));
    }
    if sheet.splits.len() > outer.len() {
        note.push_str("; inner splits of the nested scheme are not drawn");
    }
    let grid: Vec<Vec<usize>> = outer[..shown]
        .iter()
        .map(|s| {
            column_roles(
                &columns,
                &row_roles(r.data.rows(), &sheet.sealed, &s.train, &s.validation),
            )
        })
        .collect();
    let labels: Vec<String> = (0..shown).map(|i| split_label(a, i)).collect();
    let plot = draw(&grid, &labels, columns.len()).map_err(|e| e.to_string())?;
    Ok(FoldMap { plot, note })
}

fn draw(
    grid: &[Vec<usize>],
    labels: &[String],
    columns: usize,
) -> Result<Plot, super::ReportError> {
    let name = "fold-map".to_string();
    let title = "fold map: the role of each row in each outer split".to_string();
    let rows = grid.len();
    let (fig, backend) = Figure::new((WIDTH, 40 + 26 * rows as u32));
    let e = |x: String| draw_error(&name, x);
    {
        let root = backend.into_drawing_area();
        root.fill(&WHITE).map_err(|x| e(x.to_string()))?;
        let mut chart = ChartBuilder::on(&root)
            .margin(14)
            .x_label_area_size(8)
            .y_label_area_size(140)
            .build_cartesian_2d(0.0..columns.max(1) as f64, 0.0..rows.max(1) as f64)
            .map_err(|x| e(x.to_string()))?;
        chart
            .configure_mesh()
            .disable_x_mesh()
            .disable_y_mesh()
            .x_labels(0)
            .y_labels(0)
            .label_style(("sans-serif", 16))
            .axis_style(GRID)
            .draw()
            .map_err(|x| e(x.to_string()))?;
        for (k, (role, colour)) in ROLES.iter().enumerate() {
            fig.tagged(&format!("cell {role}"), || {
                let cells = runs(grid, k).into_iter().map(|(row, from, to)| {
                    let y = (rows - 1 - row) as f64;
                    Rectangle::new(
                        [(from as f64, y + 0.12), (to as f64, y + 0.88)],
                        colour.filled(),
                    )
                });
                chart.draw_series(cells).map(drop)
            })
            .map_err(|x| e(x.to_string()))?;
        }
        let at: Vec<(f64, String)> = labels
            .iter()
            .enumerate()
            .map(|(i, l)| ((rows - 1 - i) as f64 + 0.5, l.clone()))
            .collect();
        row_labels(&root, &chart, 0.0, &at).map_err(|x| e(x.to_string()))?;
    }
    let svg = fig.finish(&format!("plot-{name}"), "foldmap", &title);
    let legend = ROLES.iter().map(|(role, colour)| Key {
        swatch: Swatch::Block,
        colour: *colour,
        opacity: 1.0,
        text: (*role).to_string(),
    });
    Ok(Plot {
        name,
        title,
        svg,
        legend: legend.collect(),
    })
}

/// Runs (split row, first column, end column) of role `k`.
fn runs(grid: &[Vec<usize>], k: usize) -> Vec<(usize, usize, usize)> {
    let mut out = Vec::new();
    for (row, roles) in grid.iter().enumerate() {
        let mut start = None;
        for (c, &role) in roles.iter().chain(std::iter::once(&usize::MAX)).enumerate() {
            match (role == k, start) {
                (true, None) => start = Some(c),
                (false, Some(s)) => {
                    out.push((row, s, c));
                    start = None;
                }
                _ => {}
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn runs_join_neighbouring_columns_of_one_role() {
        // Roles by hand: row 0 = V V T T S, row 1 = T V V T S.
        let grid = vec![vec![0, 0, 1, 1, 2], vec![1, 0, 0, 1, 2]];
        assert_eq!(runs(&grid, 0), vec![(0, 0, 2), (1, 1, 3)]);
        assert_eq!(runs(&grid, 1), vec![(0, 2, 4), (1, 0, 1), (1, 3, 4)]);
        assert_eq!(runs(&grid, 2), vec![(0, 4, 5), (1, 4, 5)]);
    }

    #[test]
    fn a_column_takes_the_role_of_most_of_its_rows() {
        // Rows 0..5: roles V T T S U; column {0, 1, 2} -> training (2 of 3),
        // column {0, 3} -> tie between validation and sealed -> validation.
        let roles = row_roles(5, &[3], &[1, 2], &[0]);
        assert_eq!(roles, vec![0, 1, 1, 2, 3]);
        assert_eq!(
            column_roles(&[vec![0, 1, 2], vec![0, 3], vec![4]], &roles),
            vec![1, 0, 3]
        );
    }

    #[test]
    fn many_units_are_binned() {
        let units: Vec<Vec<u32>> = (0..1100).map(|i| vec![i]).collect();
        let (cols, per) = bin(units);
        assert_eq!((cols.len(), per), (367, 3));
    }
}
