//! Radii along one ray of the harmonic k grid where a coupling's xi (convex along rays, meV)
//! crosses a level: the sub-level interval and a safeguarded Newton root. Used by the ray
//! evaluator to find the pieces of a ray inside the cutoff shells.

use crate::error::NumericalError;

/// `scale` is a first guess of a radius beyond the set.
pub(super) fn sublevel<F>(
    f: &F,
    level: f64,
    scale: f64,
) -> Result<Option<(f64, f64)>, NumericalError>
where
    F: Fn(f64) -> (f64, f64),
{
    let mut hi = scale.max(1e-9);
    let mut n = 0;
    loop {
        let (v, d) = f(hi);
        if v > level && d > 0.0 {
            break;
        }
        hi *= 2.0;
        n += 1;
        if n > 80 {
            return Err(NumericalError::NotBracketed {
                what: format!("ray radius where a coupling's xi = {level} meV"),
                lo: 0.0,
                hi,
            });
        }
    }
    let (v0, d0) = f(0.0);
    let rmin = if d0 >= 0.0 {
        0.0
    } else {
        let (mut lo, mut up) = (0.0, hi);
        for _ in 0..200 {
            let mid = 0.5 * (lo + up);
            if f(mid).1 < 0.0 {
                lo = mid;
            } else {
                up = mid;
            }
            if up - lo <= 1e-15 * up {
                break;
            }
        }
        0.5 * (lo + up)
    };
    if f(rmin).0 >= level {
        return Ok(None);
    }
    let lo = if v0 < level {
        0.0
    } else {
        bracketed_root(f, level, 0.0, rmin)?
    };
    let up = bracketed_root(f, level, rmin, hi)?;
    Ok(Some((lo, up)))
}

/// Root of f(r) = level in [a, b] where f - level changes sign: safeguarded Newton.
fn bracketed_root<F>(f: &F, level: f64, mut a: f64, mut b: f64) -> Result<f64, NumericalError>
where
    F: Fn(f64) -> (f64, f64),
{
    let fa = f(a).0 - level;
    let fb = f(b).0 - level;
    if fa == 0.0 {
        return Ok(a);
    }
    if fb == 0.0 {
        return Ok(b);
    }
    if fa.signum() == fb.signum() {
        return Err(NumericalError::NotBracketed {
            what: format!("ray radius where a coupling's xi = {level} meV"),
            lo: a,
            hi: b,
        });
    }
    let sa = fa.signum();
    let tol = 1e-15 * b.abs().max(1e-12);
    let mut x = a + (b - a) * fa / (fa - fb);
    if !(x > a && x < b) {
        x = 0.5 * (a + b);
    }
    for _ in 0..200 {
        let (v, d) = f(x);
        let v = v - level;
        if v == 0.0 {
            return Ok(x);
        }
        if v.signum() == sa {
            a = x;
        } else {
            b = x;
        }
        let newton = x - v / d;
        let next = if d != 0.0 && newton > a && newton < b {
            newton
        } else {
            0.5 * (a + b)
        };
        if (next - x).abs() <= tol || b - a <= tol {
            return Ok(next);
        }
        x = next;
    }
    Err(NumericalError::NotConverged {
        what: format!("ray radius where a coupling's xi = {level} meV"),
        iterations: 200,
        last_change: b - a,
        target: tol,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    /// The convex sub-level interval against the roots of a quadratic (closed form; common
    /// practice): f = (r - 2)^2 - 1 < 0 on (1, 3); f < 3 on [0, 4); f < -1 nowhere.
    #[test]
    fn sublevel_interval_of_a_parabola() {
        let f = |r: f64| ((r - 2.0) * (r - 2.0) - 1.0, 2.0 * (r - 2.0));
        let (lo, hi) = sublevel(&f, 0.0, 1.0).unwrap().unwrap();
        assert!((lo - 1.0).abs() < 1e-13 && (hi - 3.0).abs() < 1e-13);
        let (lo, hi) = sublevel(&f, 3.0, 1.0).unwrap().unwrap();
        assert!(lo == 0.0 && (hi - 4.0).abs() < 1e-13);
        assert!(sublevel(&f, -1.0, 1.0).unwrap().is_none());
    }
}
