//! The critical-temperature root, written once for every equation: the largest T at which a
//! positive multiple of g chi - 1 (the exact shell integral, the weak-coupling pair margin, or its
//! maximum over q) changes sign, by a scan down a temperature grid from the top and Brent's
//! method; where the grid shows no sign change, the maximum over T around the best grid point is
//! located before concluding that there is none.

use crate::error::NumericalError;
use crate::kernels::equation::{EquationError, PairEquation};
use crate::solvers::optimize::{brent_max_from, XTol};
use crate::solvers::roots::{brent_root_in, Bracket, RootTol};

/// How the largest root in T is searched for: the grid (descending, the top first), the root
/// tolerance, and how the maximum over T between grid points is located.
#[derive(Debug, Clone)]
pub struct TemperatureScan {
    /// Temperatures from the top down (units of the equation); the function must be negative
    /// at the first.
    pub grid: Vec<f64>,
    /// Tolerance of the root in T.
    pub root: RootTol,
    /// Tolerance of the maximum over T (in ln T where `in_log`).
    pub max_tol: XTol,
    /// The maximum over T is located in x = ln T (else in T).
    pub in_log: bool,
    /// The maximiser starts from the best grid point and its value (else from its own
    /// golden-section point).
    pub from_best: bool,
}

impl TemperatureScan {
    /// The geometric grid t_top, ratio t_top, ratio^2 t_top, ... down to `floor` (the last point
    /// is the floor itself).
    pub fn geometric(t_top: f64, floor: f64, ratio: f64) -> Vec<f64> {
        let mut grid = vec![t_top];
        let mut t = t_top;
        while t > floor {
            t = (t * ratio).max(floor);
            grid.push(t);
        }
        grid
    }
}

/// Why the temperature search stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum RootStop {
    /// A sign change on the grid, refined by Brent's method.
    Converged,
    /// No sign change on the grid, but the maximum between two grid points reaches zero: the
    /// root next to it, refined.
    ConvergedBetweenGridPoints,
    /// The function stays negative down to the floor (no instability above it).
    BelowFloor,
}

/// The largest root in T, or none above the floor.
#[derive(Debug, Clone, Copy)]
pub struct TemperatureRoot {
    /// The root (units of the equation); None when the search stopped with
    /// [`RootStop::BelowFloor`].
    pub t: Option<f64>,
    /// Bound of the error of `t` from the root tolerance (the function's own error is not
    /// included).
    pub error: f64,
    /// Evaluations of the function.
    pub evaluations: usize,
    /// Why the search stopped.
    pub stop: RootStop,
}

/// The largest T on `scan.grid` at which f(T) >= 0, refined to a root of f; see
/// [`TemperatureScan`]. Errors of f are passed through; a non-negative f at the top of the grid
/// is an error ([`NumericalError::UnstableAtTop`]).
pub fn largest_root<F, E>(
    what: &str,
    scan: &TemperatureScan,
    mut f: F,
) -> Result<TemperatureRoot, E>
where
    F: FnMut(f64) -> Result<f64, E>,
    E: From<NumericalError>,
{
    let count = std::cell::Cell::new(0);
    let mut f = |t: f64| {
        count.set(count.get() + 1);
        f(t)
    };
    let grid = &scan.grid;
    let mut values: Vec<f64> = Vec::with_capacity(grid.len());
    for (k, &t) in grid.iter().enumerate() {
        let v = f(t)?;
        if v >= 0.0 {
            if k == 0 {
                return Err(NumericalError::UnstableAtTop(format!(
                    "{what}: unstable at the top temperature {t:.4e}"
                ))
                .into());
            }
            let bracket = Bracket::known(t, v, grid[k - 1], values[k - 1]);
            let r = brent_root_in(what, bracket, scan.root, &mut f)?;
            return Ok(found(r.x, scan, RootStop::Converged, count.get()));
        }
        values.push(v);
    }
    // No sign change on the grid: the curve may poke above zero between two grid points (a line
    // that bends back near its nose). The first largest value:
    let (k, best) =
        values.iter().enumerate().fold(
            (0, f64::NEG_INFINITY),
            |b, (k, &v)| if v > b.1 { (k, v) } else { b },
        );
    let none = TemperatureRoot {
        t: None,
        error: 0.0,
        evaluations: count.get(),
        stop: RootStop::BelowFloor,
    };
    if k == 0 || k + 1 >= grid.len() {
        return Ok(none);
    }
    let map = |t: f64| if scan.in_log { t.ln() } else { t };
    let unmap = |x: f64| if scan.in_log { x.exp() } else { x };
    let start = scan.from_best.then(|| (map(grid[k]), best));
    let (lo, hi) = (map(grid[k + 1]), map(grid[k - 1]));
    let m = brent_max_from(what, lo, hi, start, scan.max_tol, |x| f(unmap(x)))?;
    if m.value < 0.0 {
        return Ok(TemperatureRoot {
            evaluations: count.get(),
            ..none
        });
    }
    let bracket = Bracket::known(unmap(m.x), m.value, grid[k - 1], values[k - 1]);
    let r = brent_root_in(what, bracket, scan.root, &mut f)?;
    let stop = RootStop::ConvergedBetweenGridPoints;
    Ok(found(r.x, scan, stop, count.get()))
}

/// The critical temperature at a fixed wavevector q of any equation: the largest root in T of
/// [`PairEquation::excess`] on `scan` (units of the equation).
pub fn tc_at_q<E: PairEquation + ?Sized>(
    eq: &E,
    q: [f64; 2],
    what: &str,
    scan: &TemperatureScan,
) -> Result<TemperatureRoot, EquationError> {
    let f = eq.excess_in_t(q)?;
    largest_root(what, scan, f)
}

fn found(t: f64, scan: &TemperatureScan, stop: RootStop, evaluations: usize) -> TemperatureRoot {
    TemperatureRoot {
        t: Some(t),
        error: scan.root.abs + scan.root.rel * t.abs(),
        evaluations,
        stop,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The larger root of -(T - 1)(T - 2) - 0.1, 1.5 + sqrt(0.15), is found from T = 3; a narrow
    /// bump between grid points is found by the maximiser; a curve below zero has no root.
    #[test]
    fn finds_the_largest_root_and_the_hidden_nose() {
        let scan = TemperatureScan {
            grid: TemperatureScan::geometric(3.0, 0.1, 0.8),
            root: RootTol::relative(1e-12),
            max_tol: XTol::Floor(1e-8),
            in_log: true,
            from_best: false,
        };
        let f = |t: f64| Ok::<f64, NumericalError>(-(t - 1.0) * (t - 2.0) - 0.1);
        let r = largest_root("parabola", &scan, f).unwrap();
        let want = 1.5 + (0.25f64 - 0.1).sqrt();
        assert!((r.t.unwrap() - want).abs() < 1e-11);
        assert_eq!(r.stop, RootStop::Converged);
        // A bump of height 1e-3 at T = 1.38, between the grid points 1.536 and 1.2288.
        let bump = |t: f64| Ok::<f64, NumericalError>(1e-3 - 1e3 * (t - 1.38).powi(2));
        let r = largest_root("bump", &scan, bump).unwrap();
        assert_eq!(r.stop, RootStop::ConvergedBetweenGridPoints);
        assert!(bump(r.t.unwrap()).unwrap().abs() < 1e-12);
        let low = |t: f64| Ok::<f64, NumericalError>(-1e-3 - (t - 1.38).powi(2));
        assert_eq!(
            largest_root("none", &scan, low).unwrap().stop,
            RootStop::BelowFloor
        );
    }
}
