//! The branches of a phase diagram and their first-order lines and spinodals (the step after
//! the columns in [`super::phase_diagram`]). A sweep through perfect nesting (the channel's
//! mismatch h changes sign along the axis) has one copy of every line on each side; the axis is
//! split there so that each side's lines are found and stored on their own.

use super::Column;
use crate::error::NestorError;

/// Points (parameter, T meV) of a line.
pub(super) type Points = Vec<(f64, f64)>;

/// A column, solved or not.
pub(super) type ColumnResult = Result<Column, NestorError>;

/// The first and last column index (inclusive) of each branch: stretches of the axis on which
/// the mismatch (meV) keeps its sign. A column at perfect nesting (|h| below a relative 1e-9 of
/// the largest |h|) ends one branch and starts the next; a failed column inside a branch is part
/// of it, one exactly at a sign change belongs to neither.
pub(super) fn branch_bounds(columns: &[ColumnResult]) -> Vec<[usize; 2]> {
    let h: Vec<Option<f64>> = columns
        .iter()
        .map(|c| c.as_ref().ok().map(|c| c.mismatch))
        .collect();
    let zero = 1e-9 * h.iter().flatten().fold(0.0_f64, |a, &x| a.max(x.abs()));
    let mut bounds = Vec::new();
    let mut start = 0;
    // The last column of definite sign, and the zero columns seen since.
    let mut last: Option<(usize, f64)> = None;
    let mut zeros: Option<[usize; 2]> = None;
    for (i, h) in h.iter().enumerate() {
        let Some(h) = *h else { continue };
        if h.abs() <= zero {
            zeros = Some(zeros.map_or([i, i], |z| [z[0], i]));
            continue;
        }
        if let Some((p, sign)) = last {
            if sign != h.signum() {
                let (end, next) = zeros.map_or((p, i), |z| (z[0], z[1]));
                bounds.push([start, end]);
                start = next;
            }
        }
        last = Some((i, h.signum()));
        zeros = None;
    }
    if !columns.is_empty() {
        bounds.push([start, columns.len() - 1]);
    }
    bounds
}

/// The first-order line (equal Omega of the uniform minimum and the best other minimum,
/// interpolated in the parameter) and the uniform state's spinodal (where its minimum
/// disappears while the normal state stays a minimum) on the columns of one branch, as
/// (parameter, T meV) pairs, temperature by temperature.
pub(super) fn first_order_and_spinodal(
    columns: &[ColumnResult],
    temps: &[f64],
) -> (Points, Points) {
    let mut first_order = Vec::new();
    let mut spinodal = Vec::new();
    for (j, &t) in temps.iter().enumerate() {
        for w in columns.windows(2) {
            let (Ok(a), Ok(b)) = (&w[0], &w[1]) else {
                continue;
            };
            let (Ok(ca), Ok(cb)) = (&a.cells[j], &b.cells[j]) else {
                continue;
            };
            if let (Some(ua), Some(ub), Some(oa), Some(ob)) = (
                ca.uniform_omega,
                cb.uniform_omega,
                ca.other_omega,
                cb.other_omega,
            ) {
                let (da, db) = (ua - oa, ub - ob);
                if da.signum() != db.signum() {
                    let x = a.value + (b.value - a.value) * da / (da - db);
                    // Both differences zero (signed zeros): no crossing to place.
                    if x.is_finite() {
                        first_order.push((x, t));
                    }
                }
            }
            if ca.uniform_omega.is_some() != cb.uniform_omega.is_some()
                && ca.normal_minimum
                && cb.normal_minimum
            {
                spinodal.push((0.5 * (a.value + b.value), t));
            }
        }
    }
    (first_order, spinodal)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A solved column with only its mismatch (meV) set.
    fn col(h: f64) -> ColumnResult {
        Ok(Column {
            value: h,
            mismatch: h,
            t_uniform: 0.0,
            beta_uniform: None,
            curvature_uniform: None,
            t_modulated: 0.0,
            q_star: [0.0; 2],
            cells: vec![],
        })
    }

    /// The axis splits where the mismatch changes sign; a column at perfect nesting is shared,
    /// a sweep starting or ending there is one branch.
    #[test]
    fn branches_split_at_perfect_nesting() {
        let bounds = |h: &[f64]| branch_bounds(&h.iter().map(|&h| col(h)).collect::<Vec<_>>());
        assert_eq!(bounds(&[-2.0, -1.0, 0.0, 1.0, 2.0]), vec![[0, 2], [2, 4]]);
        assert_eq!(bounds(&[-1.5, -0.5, 0.5, 1.5]), vec![[0, 1], [2, 3]]);
        assert_eq!(bounds(&[0.0, 1.0, 2.0]), vec![[0, 2]]);
        assert_eq!(bounds(&[2.0, 1.0, 0.0]), vec![[0, 2]]);
        assert_eq!(bounds(&[1.0, -1.0, 1.0]), vec![[0, 0], [1, 1], [2, 2]]);
        let mut with_failure: Vec<ColumnResult> = vec![col(-1.0), col(-0.5)];
        with_failure.push(Err(crate::error::InputError::new("no model").into()));
        with_failure.extend([col(0.5), col(1.0)]);
        assert_eq!(branch_bounds(&with_failure), vec![[0, 1], [3, 4]]);
    }
}
