//! Warnings for plans that are valid but likely to mislead. They never fail
//! a command; `check`, `run` and `unseal` print them.

use std::collections::BTreeSet;
use std::path::Path;

use crate::learn::Task;
use crate::plan::Resolved;
use crate::resample::Scheme;

use super::JobSheet;

/// Folds below this draw a warning (common practice: five or ten folds, no source).
pub const FEW_FOLDS: usize = 5;
/// Leave-one-out above this many development rows draws a warning (cost and
/// variance; common practice, no source).
pub const MANY_ROWS_FOR_LOO: usize = 3000;

/// Words that mark a column as naming a unit (a heuristic).
const ID_WORDS: &[&str] = &[
    "id",
    "unit",
    "group",
    "machine",
    "turbine",
    "site",
    "customer",
    "patient",
    "subject",
    "device",
    "store",
    "account",
    "user",
    "household",
    "plant",
    "asset",
    "island",
    "region",
    "farm",
    "hospital",
    "clinic",
    "school",
    "herd",
    "batch",
    "lot",
    "station",
    "family",
    "cluster",
    "participant",
    "vehicle",
    "well",
];

/// Whether a column name reads like an identifier of a unit.
pub fn named_like_id(name: &str) -> bool {
    let lower = name.to_ascii_lowercase();
    lower
        .split(|c: char| !c.is_ascii_alphanumeric())
        .any(|w| ID_WORDS.contains(&w))
        || lower.ends_with("id")
}

/// Columns named like an id whose values repeat across many rows: each
/// value appears on average at least twice and there are at least two.
fn repeating_id_columns(path: &Path, header: &[String], rows: usize) -> Vec<String> {
    let wanted: Vec<usize> = (0..header.len())
        .filter(|&i| named_like_id(&header[i]))
        .collect();
    if wanted.is_empty() || rows == 0 {
        return Vec::new();
    }
    let Ok(mut reader) = csv::Reader::from_path(path) else {
        return Vec::new();
    };
    let mut seen: Vec<BTreeSet<Vec<u8>>> = vec![BTreeSet::new(); wanted.len()];
    for record in reader.byte_records().map_while(Result::ok) {
        for (slot, &i) in wanted.iter().enumerate() {
            if let Some(cell) = record.get(i) {
                seen[slot].insert(cell.to_vec());
            }
        }
    }
    wanted
        .iter()
        .zip(seen)
        .filter(|(_, s)| s.len() >= 2 && s.len() * 2 <= rows)
        .map(|(&i, _)| header[i].clone())
        .collect()
}

fn scheme_warnings(scheme: &Scheme, rows: usize, out: &mut Vec<String>) {
    match scheme {
        Scheme::KFold { folds, .. } if *folds < FEW_FOLDS => out.push(format!(
            "[resample] {folds} folds: fewer than {FEW_FOLDS} folds gives noisy and pessimistic estimates; five or ten is usual"
        )),
        Scheme::OneRowOut if rows > MANY_ROWS_FOR_LOO => out.push(format!(
            "[resample] leave-one-out on {rows} development rows: {rows} fits per candidate and a high-variance estimate; consider 5 or 10 folds"
        )),
        Scheme::Nested { outer, inner } => {
            scheme_warnings(outer, rows, out);
            scheme_warnings(inner, rows, out);
        }
        _ => {}
    }
}

/// Every warning for a compiled plan.
pub fn warnings(r: &Resolved, sheet: &JobSheet) -> Vec<String> {
    let mut out = Vec::new();
    if r.plan.data.group.is_none() {
        let header = crate::data::read_header(&r.data_path).unwrap_or_default();
        for col in repeating_id_columns(&r.data_path, &header, r.data.rows()) {
            out.push(format!(
                "column `{col}` looks like a unit id (its values repeat across rows) but [data] sets no `group`: \
                 rows of one unit may sit on both sides of a split and flatter the scores; set `group = \"{col}\"` if rows of one unit are alike"
            ));
        }
    }
    scheme_warnings(&r.plan.resample, sheet.development.len(), &mut out);
    if let Task::Classification { classes } = r.plan.task() {
        let small = sheet
            .splits
            .iter()
            .filter(|s| s.validation.len() < classes)
            .count();
        if small > 0 {
            out.push(format!(
                "{small} split(s) have a validation part with fewer rows than the {classes} classes: their scores are coarse and some metrics undefined"
            ));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scheme_warnings_name_the_problem() {
        let cases: Vec<(Scheme, usize, Option<&str>)> = vec![
            (
                Scheme::KFold {
                    folds: 3,
                    repeats: 1,
                    stratify: false,
                },
                100,
                Some("3 folds"),
            ),
            (
                Scheme::KFold {
                    folds: 5,
                    repeats: 1,
                    stratify: false,
                },
                100,
                None,
            ),
            (
                Scheme::OneRowOut,
                5000,
                Some("leave-one-out on 5000 development rows"),
            ),
            (Scheme::OneRowOut, 300, None),
        ];
        for (scheme, rows, want) in cases {
            let mut out = Vec::new();
            scheme_warnings(&scheme, rows, &mut out);
            match want {
                Some(w) => assert!(out.iter().any(|o| o.contains(w)), "{scheme:?}: {out:?}"),
                None => assert!(out.is_empty(), "{scheme:?}: {out:?}"),
            }
        }
    }

    #[test]
    fn id_like_names() {
        for (name, want) in [
            ("turbine", true),
            ("turbine_id", true),
            ("PatientID", true),
            ("site", true),
            ("island", true),
            ("oil_temp", false),
            ("vib_axial", false),
            ("hour", false),
        ] {
            assert_eq!(named_like_id(name), want, "{name}");
        }
    }
}
