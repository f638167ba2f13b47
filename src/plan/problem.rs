//! Problems found in a plan, with the place they were found.
//!
//! Every problem in a plan is collected and reported at once, each as
//! `FILE:LINE:COLUMN: message`, so that a user fixes them in one pass.

use std::fmt;
use std::path::PathBuf;

/// Where in the plan file something is (1-based line and column).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, PartialOrd, Ord)]
pub struct Place {
    pub line: usize,
    pub column: usize,
}

impl Place {
    /// The place of byte `offset` in `text`.
    pub fn of_offset(text: &str, offset: usize) -> Place {
        let offset = offset.min(text.len());
        let before = &text.as_bytes()[..offset];
        let line = before.iter().filter(|&&b| b == b'\n').count() + 1;
        let line_start = before
            .iter()
            .rposition(|&b| b == b'\n')
            .map_or(0, |i| i + 1);
        let column = text[line_start..offset].chars().count() + 1;
        Place { line, column }
    }
}

/// One problem: where, and what is wrong and what to do.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub struct Problem {
    /// `None` when the problem has no single place (a missing table, say).
    pub place: Option<Place>,
    pub message: String,
}

impl Problem {
    pub fn at(place: Option<Place>, message: impl Into<String>) -> Problem {
        Problem {
            place,
            message: message.into(),
        }
    }
}

/// Every problem found in one plan file.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct PlanError {
    pub path: PathBuf,
    pub problems: Vec<Problem>,
}

impl std::error::Error for PlanError {}

impl fmt::Display for PlanError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let count = self.problems.len();
        if count > 1 {
            writeln!(f, "{} problems in plan {}:", count, self.path.display())?;
        }
        for (i, p) in self.problems.iter().enumerate() {
            if i > 0 {
                writeln!(f)?;
            }
            match p.place {
                Some(at) => write!(
                    f,
                    "{}:{}:{}: {}",
                    self.path.display(),
                    at.line,
                    at.column,
                    p.message
                )?,
                None => write!(f, "{}: {}", self.path.display(), p.message)?,
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn places_count_lines_and_characters_from_one() {
        let text = "a = 1\nbé = 2\n";
        let cases = [(0, 1, 1), (4, 1, 5), (6, 2, 1), (9, 2, 3)];
        for (offset, line, column) in cases {
            assert_eq!(
                Place::of_offset(text, offset),
                Place { line, column },
                "offset {offset}"
            );
        }
    }
}
