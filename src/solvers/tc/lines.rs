//! Instability lines in the (h, T) plane, written once for any [`MismatchFamily`]: the mismatch
//! of the uniform line and of the modulated line at a given T (bracketed outwards, then Brent),
//! and the first sign change of an indicator along a line in T (the tricritical and Lifshitz
//! points). Units of the family.

use super::qline::QLineMax;
use crate::kernels::equation::{EquationError, MismatchFamily, PairEquation};
use crate::solvers::roots::{brent_root_in, Bracket, RootTol};

/// Why a line search stopped.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum LineStop {
    /// A sign change was bracketed and refined.
    Converged,
    /// No sign change where it was searched for: the interval [lo, hi] and the values at its
    /// ends.
    NoSignChange {
        /// Lower end of the interval searched.
        lo: f64,
        /// Upper end of the interval searched.
        hi: f64,
        /// The function at `lo` (NaN where not evaluated).
        f_lo: f64,
        /// The function at `hi`.
        f_hi: f64,
    },
}

/// A point found on a line: the coordinate searched (h, or T), with the evaluations used.
#[derive(Debug, Clone, Copy)]
pub struct LinePoint {
    /// The root (None when the search stopped without a sign change).
    pub x: Option<f64>,
    /// Bound of its error from the root tolerance.
    pub error: f64,
    /// Evaluations of the function searched.
    pub evaluations: usize,
    /// Why the search stopped.
    pub stop: LineStop,
}

impl LinePoint {
    fn found(x: f64, tol: RootTol, evaluations: usize) -> Self {
        LinePoint {
            x: Some(x),
            error: tol.abs + tol.rel * x.abs(),
            evaluations,
            stop: LineStop::Converged,
        }
    }

    fn none(stop: LineStop, evaluations: usize) -> Self {
        LinePoint {
            x: None,
            error: 0.0,
            evaluations,
            stop,
        }
    }
}

/// The mismatch h >= 0 of the uniform line at temperature t: the root in h of the q = 0 excess,
/// bracketed from [0, h_start] by doubling the upper end (up to `h_limit`). The excess must fall
/// with |h| (one root in h >= 0).
pub fn uniform_line<M: MismatchFamily>(
    family: &M,
    t: f64,
    h_start: f64,
    h_limit: f64,
    tol: RootTol,
) -> Result<LinePoint, EquationError> {
    let count = std::cell::Cell::new(0);
    let f = |h: f64| {
        count.set(count.get() + 1);
        family.at_mismatch(h).excess([0.0, 0.0], t)
    };
    let f0 = f(0.0)?;
    let mut h_hi = h_start;
    let mut f_hi = f(h_hi)?;
    while f_hi >= 0.0 {
        h_hi *= 2.0;
        if h_hi > h_limit {
            let stop = LineStop::NoSignChange {
                lo: 0.0,
                hi: h_hi,
                f_lo: f0,
                f_hi,
            };
            return Ok(LinePoint::none(stop, count.get()));
        }
        f_hi = f(h_hi)?;
    }
    let bracket = Bracket::known(0.0, f0, h_hi, f_hi);
    let root = brent_root_in("uniform line h at fixed t", bracket, tol, f)?;
    Ok(LinePoint::found(root.x, tol, count.get()))
}

/// The largest mismatch h of the modulated line at temperature t: max over q of the excess
/// (`max_q`, the method's maximum over q of one equation) is made negative at h_start (raised by
/// factors 1.5, at most 20 times), then h steps down by 5% of that to the first sign change,
/// refined by Brent.
pub fn modulated_line<M, Q>(
    family: &M,
    h_start: f64,
    tol: RootTol,
    mut max_q: Q,
) -> Result<LinePoint, EquationError>
where
    M: MismatchFamily,
    Q: FnMut(&M::Eq) -> Result<QLineMax, EquationError>,
{
    let what = "modulated line h at fixed t";
    let count = std::cell::Cell::new(0);
    let mut f = |h: f64| {
        count.set(count.get() + 1);
        max_q(&family.at_mismatch(h)).map(|m| m.value)
    };
    let mut h_hi = h_start;
    let mut f_hi = f(h_hi)?;
    let mut expansions = 0;
    while f_hi >= 0.0 {
        expansions += 1;
        if expansions > 20 {
            let stop = LineStop::NoSignChange {
                lo: 0.0,
                hi: h_hi,
                f_lo: f64::NAN,
                f_hi,
            };
            return Ok(LinePoint::none(stop, count.get()));
        }
        h_hi *= 1.5;
        f_hi = f(h_hi)?;
    }
    let step = 0.05 * h_hi;
    let (mut h_above, mut f_above) = (h_hi, f_hi);
    loop {
        let h = (h_above - step).max(0.0);
        let fh = f(h)?;
        if fh >= 0.0 {
            let bracket = Bracket::known(h, fh, h_above, f_above);
            let root = brent_root_in(what, bracket, tol, &mut f)?.x;
            return Ok(LinePoint::found(root, tol, count.get()));
        }
        if h == 0.0 {
            let stop = LineStop::NoSignChange {
                lo: 0.0,
                hi: h_hi,
                f_lo: fh,
                f_hi,
            };
            return Ok(LinePoint::none(stop, count.get()));
        }
        (h_above, f_above) = (h, fh);
    }
}

/// The first sign change of `indicator(T)` on `n` equal steps from `t_top` down to `t_bottom`,
/// refined by Brent: a special point along a line (tricritical: the quartic coefficient;
/// Lifshitz: the q-curvature).
pub fn first_sign_change<F, E>(
    what: &str,
    (t_top, t_bottom, n): (f64, f64, usize),
    tol: RootTol,
    mut indicator: F,
) -> Result<LinePoint, E>
where
    F: FnMut(f64) -> Result<f64, E>,
    E: From<crate::error::NumericalError>,
{
    let count = std::cell::Cell::new(0);
    let mut g = |t: f64| {
        count.set(count.get() + 1);
        indicator(t)
    };
    let mut t_prev = t_top;
    let mut g_prev = g(t_prev)?;
    for k in 1..=n {
        let t = t_top + (t_bottom - t_top) * k as f64 / n as f64;
        let gt = g(t)?;
        if (gt > 0.0) != (g_prev > 0.0) {
            let bracket = Bracket::known(t, gt, t_prev, g_prev);
            let root = brent_root_in(what, bracket, tol, &mut g)?.x;
            return Ok(LinePoint::found(root, tol, count.get()));
        }
        t_prev = t;
        g_prev = gt;
    }
    let stop = LineStop::NoSignChange {
        lo: t_bottom,
        hi: t_top,
        f_lo: g_prev,
        f_hi: g(t_top)?,
    };
    Ok(LinePoint::none(stop, count.get()))
}
