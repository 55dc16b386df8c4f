//! The maximum over |q| of any equation along one direction, written once: a scan over a given
//! grid of |q| (starting at q = 0), then Brent's maximiser between the neighbours of the best grid
//! point (or, where q = 0 is best but the q-curvature there is positive, between 0 and the first
//! grid point). Used by the weak-coupling modulated searches; units of the equation.

use crate::kernels::equation::{EquationError, PairEquation};
use crate::solvers::optimize::{brent_max_from, XTol};

/// Why the search over |q| stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum QLineStop {
    /// q = 0 is the maximum (the curvature there is not positive, or no larger value was found
    /// below the first grid point).
    Uniform,
    /// An interior maximum located to the tolerance.
    Converged,
    /// The best grid value sits at the last grid point: the grid is too short to contain the
    /// maximum (no refinement was made).
    AtScanEdge,
}

/// The maximum of [`PairEquation::excess`] over |q| along a direction at one temperature.
#[derive(Debug, Clone, Copy)]
pub struct QLineMax {
    /// The largest excess found.
    pub value: f64,
    /// |q*| (0: the uniform state).
    pub q: f64,
    /// Bound of the error of `q` from the tolerance of the maximiser.
    pub q_error: f64,
    /// Evaluations of the equation.
    pub evaluations: usize,
    /// Why the search stopped.
    pub stop: QLineStop,
}

/// Maximum over |q| in `[0, grid.last()]` of `eq.excess(|q| dir, t)` (grid ascending, `grid[0] = 0`),
/// refined to `tol` in |q|.
pub fn max_over_q_line<E: PairEquation + ?Sized>(
    eq: &E,
    t: f64,
    dir: [f64; 2],
    grid: &[f64],
    tol: XTol,
) -> Result<QLineMax, EquationError> {
    let count = std::cell::Cell::new(0);
    let excess = |q: f64| {
        count.set(count.get() + 1);
        eq.excess([q * dir[0], q * dir[1]], t)
    };
    let mut values = Vec::with_capacity(grid.len());
    for &q in grid {
        values.push(excess(q)?);
    }
    let (k, best) =
        values.iter().enumerate().fold(
            (0, f64::NEG_INFINITY),
            |b, (k, &m)| if m > b.1 { (k, m) } else { b },
        );
    let report = |value: f64, q: f64, stop: QLineStop| QLineMax {
        value,
        q,
        q_error: if stop == QLineStop::Converged {
            tol_at(tol, q)
        } else {
            0.0
        },
        evaluations: count.get(),
        stop,
    };
    let what = "maximum of g chi over |q|";
    if k + 1 == grid.len() {
        return Ok(report(best, grid[k], QLineStop::AtScanEdge));
    }
    if k == 0 {
        // q = 0 is always stationary (chi is even in q); it is the maximum unless chi curves up.
        if eq.q_curvature(t, dir)?.value <= 0.0 {
            return Ok(report(best, 0.0, QLineStop::Uniform));
        }
        let mid = 0.5 * grid[1];
        let start = Some((mid, excess(mid)?));
        let m = brent_max_from(what, 0.0, grid[1], start, tol, excess)?;
        return Ok(if m.value > best {
            report(m.value, m.x, QLineStop::Converged)
        } else {
            report(best, 0.0, QLineStop::Uniform)
        });
    }
    let start = Some((grid[k], best));
    let m = brent_max_from(what, grid[k - 1], grid[k + 1], start, tol, excess)?;
    Ok(report(m.value, m.x, QLineStop::Converged))
}

/// The tolerance's width at x.
fn tol_at(tol: XTol, x: f64) -> f64 {
    match tol {
        XTol::Floor(abs) => abs.max(1e-15 * x.abs()),
        XTol::AbsRel { abs, rel } => abs + rel * x.abs(),
    }
}
