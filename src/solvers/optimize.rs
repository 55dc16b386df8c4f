//! Maximisation in one variable: Brent's method (golden section with parabolic steps; Brent,
//! Algorithms for Minimization without Derivatives, 1973), with errors of the objective carried
//! through.

use crate::error::NumericalError;

/// A located maximum.
#[derive(Debug, Clone, Copy)]
pub struct Maximum {
    pub x: f64,
    pub value: f64,
    pub iterations: usize,
}

/// Maximum of f on [a, b], located to absolute tolerance `x_tol` in x.
pub fn brent_max<F>(
    what: &str,
    a: f64,
    b: f64,
    x_tol: f64,
    mut f: F,
) -> Result<Maximum, NumericalError>
where
    F: FnMut(f64) -> Result<f64, NumericalError>,
{
    // Minimise g = -f.
    const GOLD: f64 = 0.381_966_011_250_105_1;
    let (mut a, mut b) = (a.min(b), a.max(b));
    let mut x = a + GOLD * (b - a);
    let (mut w, mut v) = (x, x);
    let mut fx = -f(x)?;
    let (mut fw, mut fv) = (fx, fx);
    let (mut d, mut e): (f64, f64) = (0.0, 0.0);
    for it in 0..200 {
        let m = 0.5 * (a + b);
        let tol = x_tol.max(1e-15 * x.abs());
        let t2 = 2.0 * tol;
        if (x - m).abs() <= t2 - 0.5 * (b - a) {
            return Ok(Maximum {
                x,
                value: -fx,
                iterations: it,
            });
        }
        let mut golden = true;
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
            let r2 = e;
            e = d;
            if p.abs() < (0.5 * q * r2).abs() && p > q * (a - x) && p < q * (b - x) {
                d = p / q;
                let u = x + d;
                if u - a < t2 || b - u < t2 {
                    d = if x < m { tol } else { -tol };
                }
                golden = false;
            }
        }
        if golden {
            e = if x < m { b - x } else { a - x };
            d = GOLD * e;
        }
        let u = if d.abs() >= tol {
            x + d
        } else if d > 0.0 {
            x + tol
        } else {
            x - tol
        };
        let fu = -f(u)?;
        if fu <= fx {
            if u < x {
                b = x;
            } else {
                a = x;
            }
            v = w;
            fv = fw;
            w = x;
            fw = fx;
            x = u;
            fx = fu;
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                v = w;
                fv = fw;
                w = u;
                fw = fu;
            } else if fu <= fv || v == x || v == w {
                v = u;
                fv = fu;
            }
        }
    }
    Err(NumericalError::NotConverged {
        what: what.to_string(),
        iterations: 200,
        last_change: b - a,
        target: x_tol,
    })
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
}
