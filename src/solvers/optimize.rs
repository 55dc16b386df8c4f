//! Maximisation in one variable: Brent's method (golden section with parabolic steps; Brent,
//! Algorithms for Minimization without Derivatives, 1973), with errors of the objective carried
//! through. The one bounded maximiser of the crate: the searches over temperature and wavevector
//! of the critical-temperature solvers, the ordered states and the relative phases use it.

use crate::error::NumericalError;

/// A located maximum.
#[derive(Debug, Clone, Copy)]
pub struct Maximum {
    /// Where the maximum lies.
    pub x: f64,
    /// The objective there.
    pub value: f64,
    /// Iterations used.
    pub iterations: usize,
}

/// Tolerance in x of the maximiser near the current point x.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum XTol {
    /// max(abs, 1e-15 |x|): an absolute tolerance, kept above the rounding of x.
    Floor(f64),
    /// abs + rel |x|.
    AbsRel {
        /// Absolute part (units of x).
        abs: f64,
        /// Relative part.
        rel: f64,
    },
}

impl XTol {
    fn at(self, x: f64) -> f64 {
        match self {
            XTol::Floor(abs) => abs.max(1e-15 * x.abs()),
            XTol::AbsRel { abs, rel } => rel * x.abs() + abs,
        }
    }

    fn target(self) -> f64 {
        match self {
            XTol::Floor(abs) | XTol::AbsRel { abs, .. } => abs,
        }
    }
}

/// Maximum of f on [a, b], located to absolute tolerance `x_tol` in x.
pub fn brent_max<F>(what: &str, a: f64, b: f64, x_tol: f64, f: F) -> Result<Maximum, NumericalError>
where
    F: FnMut(f64) -> Result<f64, NumericalError>,
{
    brent_max_from(what, a, b, None, XTol::Floor(x_tol), f)
}

/// Iteration limit of the maximiser (it needs 10 to 40 iterations).
const MAX_ITER: usize = 200;

/// The golden section (3 - sqrt 5)/2, the step fraction of golden-section searches.
pub const GOLDEN_SECTION: f64 = 0.381_966_011_250_105_1;

/// Maximum of f on [a, b] to `x_tol`, started from `start` = (x0, f(x0)) inside the interval when
/// given (otherwise from the golden-section point), for any error type of f that can hold a
/// [`NumericalError`]. The value returned is never below the start's.
pub fn brent_max_from<F, E>(
    what: &str,
    a: f64,
    b: f64,
    start: Option<(f64, f64)>,
    x_tol: XTol,
    mut f: F,
) -> Result<Maximum, E>
where
    F: FnMut(f64) -> Result<f64, E>,
    E: From<NumericalError>,
{
    // Minimise g = -f: (x, w, v) the best, second and previous best points.
    let (mut a, mut b) = (a.min(b), a.max(b));
    let (mut x, mut fx) = match start {
        Some((x0, f0)) => (x0, -f0),
        None => {
            let x = a + GOLDEN_SECTION * (b - a);
            (x, -f(x)?)
        }
    };
    let (mut w, mut v) = (x, x);
    let (mut fw, mut fv) = (fx, fx);
    let (mut d, mut e): (f64, f64) = (0.0, 0.0);
    for it in 0..MAX_ITER {
        let m = 0.5 * (a + b);
        let tol = x_tol.at(x);
        let t2 = 2.0 * tol;
        if (x - m).abs() <= t2 - 0.5 * (b - a) {
            return Ok(Maximum {
                x,
                value: -fx,
                iterations: it,
            });
        }
        (d, e) = next_step(Points { a, b, x, w, v }, (fx, fw, fv), (d, e), tol);
        let u = if d.abs() >= tol {
            x + d
        } else {
            x + tol.copysign(d)
        };
        let fu = -f(u)?;
        if fu <= fx {
            if u < x {
                b = x;
            } else {
                a = x;
            }
            (v, fv, w, fw, x, fx) = (w, fw, x, fx, u, fu);
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                (v, fv, w, fw) = (w, fw, u, fu);
            } else if fu <= fv || v == x || v == w {
                (v, fv) = (u, fu);
            }
        }
    }
    Err(NumericalError::NotConverged {
        what: what.to_string(),
        iterations: MAX_ITER,
        last_change: b - a,
        target: x_tol.target(),
    }
    .into())
}

/// The interval and the three points of Brent's minimiser.
#[derive(Clone, Copy)]
struct Points {
    a: f64,
    b: f64,
    x: f64,
    w: f64,
    v: f64,
}

/// The next step d (and the step before last, e) of Brent's minimiser: a parabola through
/// (x, w, v) where it falls well inside the interval and shrinks the steps, else golden section.
fn next_step(p: Points, (fx, fw, fv): (f64, f64, f64), (d, e): (f64, f64), tol: f64) -> (f64, f64) {
    let Points { a, b, x, w, v } = p;
    let m = 0.5 * (a + b);
    if e.abs() > tol {
        let r = (x - w) * (fx - fv);
        let mut q = (x - v) * (fx - fw);
        let mut p = (x - v) * q - (x - w) * r;
        q = 2.0 * (q - r);
        if q > 0.0 {
            p = -p;
        } else {
            q = -q;
        }
        if p.abs() < (0.5 * q * e).abs() && p > q * (a - x) && p < q * (b - x) {
            let mut d_new = p / q;
            let u = x + d_new;
            if u - a < 2.0 * tol || b - u < 2.0 * tol {
                d_new = tol.copysign(m - x);
            }
            return (d_new, d);
        }
    }
    let e_new = if x < m { b - x } else { a - x };
    (GOLDEN_SECTION * e_new, e_new)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_interior_and_edge_maxima() {
        let m = brent_max("cos", 0.0, 3.0, 1e-10, |x| Ok((x - 1.3f64).cos())).unwrap();
        assert!((m.x - 1.3).abs() < 1e-8 && (m.value - 1.0).abs() < 1e-15);
        let m = brent_max("edge", 0.0, 1.0, 1e-10, Ok).unwrap();
        assert!(m.x > 1.0 - 1e-8);
        assert!(m.iterations < 100);
    }

    /// From a given start the value never falls below the start's, and a relative tolerance
    /// locates a maximum far from x = 0 to that relative accuracy.
    #[test]
    fn start_point_and_relative_tolerance() {
        let f = |x: f64| Ok::<f64, NumericalError>(-(x - 1e4).powi(2));
        let tol = XTol::AbsRel {
            abs: 0.0,
            rel: 1e-9,
        };
        let m = brent_max_from("shifted parabola", 0.0, 3e4, Some((2e4, -1e8)), tol, f).unwrap();
        assert!((m.x - 1e4).abs() < 1e-4);
    }
}
