//! Leave-one-out and leave-one-group-out: no randomness, one split per row
//! or per group, in row order or group-code order; `fold` is the row's
//! position among the development rows, or the group's rank in code order.
//!
//! Leave-one-out with a group column is allowed only when every group has a
//! single development row (then it is leave-one-group-out); otherwise a row
//! would share its group with training rows, which is an error naming the
//! first such group.

use super::units::{Ctx, Units, rows_at, split};
use super::{ResampleError, Split};

/// One split per development row: split `i` validates row `i`.
pub(super) fn leave_one_out(ctx: &Ctx<'_>) -> Result<Vec<Split>, ResampleError> {
    let rows = ctx.rows;
    if rows.len() < 2 {
        return Err(ResampleError::TooFewRows {
            scheme: "leave-one-out",
            need: 2,
            rows: rows.len(),
        });
    }
    if let Some(group) = ctx.facts.group {
        let units = Units::new(rows, group);
        if let Some(u) = (0..units.len()).find(|&u| units.size(u) > 1) {
            return Err(ResampleError::GroupedLeaveOneOut {
                group: units.codes[u],
                rows: units.size(u),
            });
        }
    }
    let splits = (0..rows.len()).map(|i| {
        let train = rows[..i].iter().chain(&rows[i + 1..]).copied().collect();
        split(0, i, train, vec![rows[i]])
    });
    Ok(splits.collect())
}

/// One split per group, in group-code order: split `u` validates group `u`.
pub(super) fn leave_one_group_out(ctx: &Ctx<'_>) -> Result<Vec<Split>, ResampleError> {
    let group = ctx.facts.group.ok_or(ResampleError::NeedsGroup {
        what: "leave-one-group-out",
        instead: "use leave-one-out",
    })?;
    let units = Units::new(ctx.rows, group);
    if units.len() < 2 {
        return Err(ResampleError::TooFewGroups {
            groups: units.len(),
        });
    }
    let splits = (0..units.len()).map(|u| {
        let train = ctx
            .rows
            .iter()
            .zip(&units.of)
            .filter(|&(_, &of)| of as usize != u)
            .map(|(&r, _)| r)
            .collect();
        split(0, u, train, rows_at(ctx.rows, units.positions(u)))
    });
    Ok(splits.collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::resample::RowFacts;

    fn ctx<'a>(rows: &'a [u32], facts: RowFacts<'a>) -> Ctx<'a> {
        Ctx {
            rows,
            facts,
            seed: 0,
            prefix: "resample",
        }
    }

    fn parts(splits: Vec<Split>) -> Vec<(Vec<u32>, Vec<u32>)> {
        splits
            .into_iter()
            .map(|s| (s.train, s.validation))
            .collect()
    }

    #[test]
    fn leave_one_out_by_hand() {
        let got = leave_one_out(&ctx(&[2, 5, 9], RowFacts::default())).map(parts);
        let want = vec![
            (vec![5, 9], vec![2]),
            (vec![2, 9], vec![5]),
            (vec![2, 5], vec![9]),
        ];
        assert_eq!(got, Ok(want));
    }

    #[test]
    fn leave_one_group_out_by_hand() {
        // File rows 0..6 with groups 3,1,3,2,1,3; development rows 0,1,2,3,4.
        let group = [3, 1, 3, 2, 1, 3];
        let facts = RowFacts {
            group: Some(&group),
            ..RowFacts::default()
        };
        let got = leave_one_group_out(&ctx(&[0, 1, 2, 3, 4], facts)).map(parts);
        let want = vec![
            (vec![0, 2, 3], vec![1, 4]),
            (vec![0, 1, 2, 4], vec![3]),
            (vec![1, 3, 4], vec![0, 2]),
        ];
        assert_eq!(got, Ok(want));
    }

    #[test]
    fn bad_inputs_are_errors() {
        let group = [4, 4, 5];
        let grouped = RowFacts {
            group: Some(&group),
            ..RowFacts::default()
        };
        let plain = RowFacts::default();
        assert_eq!(
            leave_one_out(&ctx(&[0], plain)),
            Err(ResampleError::TooFewRows {
                scheme: "leave-one-out",
                need: 2,
                rows: 1
            })
        );
        assert_eq!(
            leave_one_out(&ctx(&[0, 1, 2], grouped)),
            Err(ResampleError::GroupedLeaveOneOut { group: 4, rows: 2 })
        );
        assert_eq!(
            leave_one_out(&ctx(&[1, 2], grouped)).map(|s| s.len()),
            Ok(2)
        );
        assert_eq!(
            leave_one_group_out(&ctx(&[0, 1], plain)),
            Err(ResampleError::NeedsGroup {
                what: "leave-one-group-out",
                instead: "use leave-one-out"
            })
        );
        assert_eq!(
            leave_one_group_out(&ctx(&[0, 1], grouped)),
            Err(ResampleError::TooFewGroups { groups: 1 })
        );
    }
}
