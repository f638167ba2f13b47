//! Column stores filled while rows are read: text columns coded by level
//! (targets, groups, categorical features), and the final feature matrix with
//! categorical columns expanded in place to one indicator per level.
//!
//! Invariants: codes follow the sorted order of the level text, whatever the
//! order levels first appear in; a missing categorical cell has no code and
//! leaves its indicator block all zeros.

use std::collections::BTreeMap;

use ndarray::Array2;

use super::FeatureKind;

/// The code of a missing cell in a [`Levels`] column.
pub(crate) const MISSING: u32 = u32::MAX;

/// A text column coded by level while it is read; codes are first-seen ids
/// until [`Levels::finish`] turns them into ranks of the sorted text.
#[derive(Debug, Default)]
pub(crate) struct Levels {
    ids: BTreeMap<String, u32>,
    codes: Vec<u32>,
}

impl Levels {
    pub(crate) fn with_capacity(rows: usize) -> Self {
        Levels {
            ids: BTreeMap::new(),
            codes: Vec::with_capacity(rows),
        }
    }

    pub(crate) fn push(&mut self, text: &str) {
        let code = match self.ids.get(text) {
            Some(&code) => code,
            None => {
                // At most one level per row, and a file of 2^32 rows does not
                // fit in memory (each row keeps a 64-byte hash), so no wrap.
                let code = self.ids.len() as u32;
                self.ids.insert(text.to_owned(), code);
                code
            }
        };
        self.codes.push(code);
    }

    pub(crate) fn push_missing(&mut self) {
        self.codes.push(MISSING);
    }

    /// Codes per row (ranks in sorted level order; [`MISSING`] kept) and the
    /// level names in code order.
    pub(crate) fn finish(self) -> (Vec<u32>, Vec<String>) {
        let mut rank = vec![0u32; self.ids.len()];
        let mut names = Vec::with_capacity(self.ids.len());
        for (sorted, (name, id)) in self.ids.into_iter().enumerate() {
            rank[id as usize] = sorted as u32;
            names.push(name);
        }
        let codes = self
            .codes
            .into_iter()
            .map(|code| match code {
                MISSING => MISSING,
                id => rank[id as usize],
            })
            .collect();
        (codes, names)
    }
}

/// One matrix source, in `features` order: a numeric column (its index among
/// the numeric columns) or a categorical one (its index among those).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Source {
    Numeric(usize),
    Categorical(usize),
}

/// A finished categorical column.
pub(crate) struct Coded {
    pub(crate) codes: Vec<u32>,
    pub(crate) levels: Vec<String>,
}

/// The feature matrix with its column names and kinds.
pub(crate) struct Matrix {
    pub(crate) values: Array2<f64>,
    pub(crate) names: Vec<String>,
    pub(crate) kinds: Vec<FeatureKind>,
}

/// Build the matrix from the numeric values (rows x numeric columns,
/// row-major) and the coded categorical columns, in `sources` order.
pub(crate) fn assemble(
    sources: &[(String, Source)],
    numeric: Vec<f64>,
    coded: &[Coded],
    rows: usize,
) -> Matrix {
    let (names, kinds, offsets) = columns(sources, coded);
    let numeric_count = sources
        .iter()
        .filter(|(_, s)| matches!(s, Source::Numeric(_)))
        .count();
    if coded.is_empty() {
        // All numeric, in order: the buffer is the matrix already.
        let values = Array2::from_shape_vec((rows, numeric_count), numeric)
            .expect("the reader stores one value per row and numeric column");
        return Matrix {
            values,
            names,
            kinds,
        };
    }
    let mut values = Array2::zeros((rows, names.len()));
    for (r, mut row) in values.rows_mut().into_iter().enumerate() {
        for ((_, source), &offset) in sources.iter().zip(&offsets) {
            match *source {
                Source::Numeric(k) => row[offset] = numeric[r * numeric_count + k],
                Source::Categorical(c) => {
                    let code = coded[c].codes[r];
                    if code != MISSING {
                        row[offset + code as usize] = 1.0;
                    }
                }
            }
        }
    }
    Matrix {
        values,
        names,
        kinds,
    }
}

/// Matrix column names, kinds, and each source's first matrix column.
fn columns(
    sources: &[(String, Source)],
    coded: &[Coded],
) -> (Vec<String>, Vec<FeatureKind>, Vec<usize>) {
    let (mut names, mut kinds, mut offsets) = (Vec::new(), Vec::new(), Vec::new());
    for (column, source) in sources {
        offsets.push(names.len());
        match *source {
            Source::Numeric(_) => {
                names.push(column.clone());
                kinds.push(FeatureKind::Numeric {
                    column: column.clone(),
                });
            }
            Source::Categorical(c) => {
                for level in &coded[c].levels {
                    names.push(format!("{column}={level}"));
                    kinds.push(FeatureKind::Indicator {
                        column: column.clone(),
                        level: level.clone(),
                    });
                }
            }
        }
    }
    (names, kinds, offsets)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn levels_are_coded_in_sorted_order_whatever_the_order_of_appearance() {
        let mut levels = Levels::default();
        for text in ["b", "c", "a", "b"] {
            levels.push(text);
        }
        levels.push_missing();
        let (codes, names) = levels.finish();
        assert_eq!(names, ["a", "b", "c"]);
        assert_eq!(codes, [1, 2, 0, 1, MISSING]);
    }

    #[test]
    fn indicator_blocks_sit_in_place_and_missing_is_all_zero() {
        let sources = vec![
            ("x".to_owned(), Source::Numeric(0)),
            ("c".to_owned(), Source::Categorical(0)),
            ("y".to_owned(), Source::Numeric(1)),
        ];
        let coded = [Coded {
            codes: vec![1, MISSING],
            levels: vec!["p".into(), "q".into()],
        }];
        let m = assemble(&sources, vec![1.0, 2.0, 3.0, 4.0], &coded, 2);
        assert_eq!(m.names, ["x", "c=p", "c=q", "y"]);
        assert_eq!(
            m.values,
            ndarray::array![[1.0, 0.0, 1.0, 2.0], [3.0, 0.0, 0.0, 4.0]]
        );
    }
}
