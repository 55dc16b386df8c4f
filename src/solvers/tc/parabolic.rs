//! One-dimensional maximisation by successive parabolic interpolation from a bracketing triple,
//! used by the wavevector searches of the critical-temperature solver.

use crate::error::NumericalError;
use crate::solvers::optimize::GOLDEN_SECTION;

/// Growth of the bracketing steps (the golden ratio).
pub(super) const GROW: f64 = 1.618_033_988_749_895;

/// A located one-dimensional maximum.
#[derive(Debug, Clone, Copy)]
pub(super) struct Max1 {
    pub(super) x: f64,
    pub(super) value: f64,
    /// The value at the starting point.
    pub(super) start: f64,
    /// Gain the last parabola still predicts above `value`.
    pub(super) gain: f64,
    /// -f'' of the last parabola (>= 0).
    pub(super) curvature: f64,
}

/// Maximum near `x0` of a smooth function: a bracketing triple a < b < c with
/// f(b) >= f(a), f(c) (stepping out from x0 -+ step), then successive parabolic interpolation,
/// with a golden-section test step where the vertex falls on the middle point. It stops, after at
/// least one step, when the parabola through the triple predicts a gain below tol_rel |f(b)|, or
/// when the triple is narrower than `x_res`. `known` holds values already at hand at
/// (x0 - step, x0, x0 + step).
pub(super) fn parabolic_max<F>(
    what: &str,
    x0: f64,
    step: f64,
    known: [Option<f64>; 3],
    tol_rel: f64,
    x_res: f64,
    mut f: F,
) -> Result<Max1, NumericalError>
where
    F: FnMut(f64) -> Result<f64, NumericalError>,
{
    if !(step > 0.0 && step.is_finite() && x0.is_finite()) {
        return Err(NumericalError::RootSearch(format!(
            "{what}: bad starting step {step:e} at {x0:e}"
        )));
    }
    let mut get = |x: f64, k: Option<f64>| -> Result<Point, NumericalError> {
        Ok((x, k.map_or_else(|| f(x), Ok)?))
    };
    let mut b = get(x0, known[1])?;
    let start = b.1;
    let mut a = get(x0 - step, known[0])?;
    let mut c = get(x0 + step, known[2])?;
    step_out(what, &mut a, &mut b, &mut c, &mut get)?;
    let mut stepped = false;
    for _ in 0..100 {
        let (p, r) = (b.0 - a.0, c.0 - b.0);
        let (da, dc) = (b.1 - a.1, b.1 - c.1);
        let k = 2.0 * (da / p + dc / r) / (p + r);
        if k.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
            // Equal values: the maximum is b to the resolution of f.
            return Ok(Max1 {
                x: b.0,
                value: b.1,
                start,
                gain: 0.0,
                curvature: 0.0,
            });
        }
        let slope = da / p - 0.5 * k * p;
        let shift = slope / k;
        let gain = 0.5 * slope * shift;
        if (stepped && gain <= tol_rel * b.1.abs()) || c.0 - a.0 <= x_res {
            return Ok(Max1 {
                x: b.0,
                value: b.1,
                start,
                gain,
                curvature: k,
            });
        }
        let u = trial_point(a.0, b.0, c.0, shift);
        let fu = get(u, None)?;
        stepped = true;
        if fu.1 >= b.1 {
            if u < b.0 {
                c = b;
            } else {
                a = b;
            }
            b = fu;
        } else if u < b.0 {
            a = fu;
        } else {
            c = fu;
        }
    }
    Err(NumericalError::NotConverged {
        what: what.to_string(),
        iterations: 100,
        last_change: c.0 - a.0,
        target: x_res,
    })
}

/// The next trial abscissa of the parabolic search in the triple a < b < c: the parabola's
/// vertex b + shift, or a golden-section step into the larger side where the vertex falls on b;
/// kept off the ends.
fn trial_point(a: f64, b: f64, c: f64, shift: f64) -> f64 {
    let (p, r) = (b - a, c - b);
    let u = if shift.abs() >= 0.02 * p.min(r) {
        b + shift
    } else if r > p {
        b + GOLDEN_SECTION * r
    } else {
        b - GOLDEN_SECTION * p
    };
    u.clamp(a + 1e-3 * p, c - 1e-3 * r)
}

/// A point (x, f(x)) of the parabolic search.
type Point = (f64, f64);

/// Steps the triple a < b < c outward (by the golden ratio) until f(b) >= f(a), f(c).
fn step_out<G>(
    what: &str,
    a: &mut Point,
    b: &mut Point,
    c: &mut Point,
    get: &mut G,
) -> Result<(), NumericalError>
where
    G: FnMut(f64, Option<f64>) -> Result<Point, NumericalError>,
{
    let mut outward = 0;
    while a.1 > b.1 || c.1 > b.1 {
        outward += 1;
        if outward > 60 {
            return Err(NumericalError::NotBracketed {
                what: what.to_string(),
                lo: a.0,
                hi: c.0,
            });
        }
        if a.1 > c.1 {
            *c = *b;
            *b = *a;
            *a = get(b.0 - GROW * (c.0 - b.0), None)?;
        } else {
            *a = *b;
            *b = *c;
            *c = get(b.0 + GROW * (b.0 - a.0), None)?;
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::solvers::tc::qgrid::parabola_gain;

    /// The parabolic search finds a smooth maximum from a start off to one side (stepping out),
    /// to the value tolerance, and rejects a zero step. cos has its maximum 1 at 0.3 here.
    #[test]
    pub(super) fn parabolic_search_finds_a_smooth_maximum() {
        let mut n = 0;
        let m = parabolic_max("cos", 2.0, 0.1, [None; 3], 1e-12, 1e-14, |x| {
            n += 1;
            Ok((x - 0.3f64).cos())
        })
        .unwrap();
        assert!((m.value - 1.0).abs() < 1e-11, "{}", m.value);
        assert!((m.x - 0.3).abs() < 1e-5, "{}", m.x);
        assert!(m.gain <= 1e-12 && (m.curvature - 1.0).abs() < 0.05);
        assert!(n < 40, "{n} evaluations");
        assert!(parabolic_max("zero", 1.0, 0.0, [None; 3], 1e-9, 1e-12, |x| Ok(-x * x)).is_err());
    }

    /// The gain of the parabola through three equally spaced values: zero for a symmetric
    /// triple, 1/8 of the second difference for a one-sided one, never negative.
    #[test]
    pub(super) fn parabola_gain_of_grid_triples() {
        assert_eq!(parabola_gain(0.0, 1.0, 0.0), 0.0);
        assert!((parabola_gain(0.0, 1.0, 1.0) - 0.125).abs() < 1e-15);
        assert_eq!(parabola_gain(1.0, 0.5, 0.0), 0.5);
    }
}
