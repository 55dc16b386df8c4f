//! The weak-coupling critical temperatures and instability lines (units of
//! [`crate::kernels::weak`]: energies over Tc0): the uniform and modulated Tc at a mismatch h, the
//! uniform and modulated lines h(t), the maximum of the pair margin over Q, and the tricritical
//! and Lifshitz points. The root in T is the shared [`super::root::largest_root`]; every root and
//! maximum goes through [`crate::solvers::roots`] and [`crate::solvers::optimize`].

use super::lines::{self, LinePoint, LineStop};
use super::qline::{max_over_q_line, QLineMax, QLineStop};
use super::root::{largest_root, tc_at_q, TemperatureScan};
use crate::kernels::equation::{WeakEquation, WeakFamily};
use crate::kernels::weak::{
    check_below_tc0, check_finite, check_temperature, delta0_over_tc0, margin_q_curvature_fd,
    quartic_weak, WeakError, T_FLOOR,
};
use crate::solvers::optimize::XTol;
use crate::solvers::roots::RootTol;

/// The weak-coupling family in margin units (lambda = 1: the excess is the pair margin).
const WEAK: WeakFamily = WeakFamily { lambda: 1.0 };

/// Absolute tolerance on roots in t and h (in Tc0 units).
const ROOT_TOL: RootTol = RootTol {
    abs: 1e-12,
    rel: 0.0,
};

/// Relative tolerance on the position Q* of the maximum over Q: the maximum is quadratic, so the
/// margin there is known to ~1e-14 while Q* itself is known only to about this accuracy.
const Q_XTOL_REL: f64 = 1e-7;

/// The temperature search of the weak-coupling Tc: `n` temperatures from 1 down to `T_FLOOR`,
/// geometrically spaced; roots to `ROOT_TOL`; the maximum between grid points in t from the best
/// grid point, to 1e-14 + 1e-10 t.
fn temperature_scan(n: usize) -> TemperatureScan {
    TemperatureScan {
        grid: temperature_grid(n),
        root: ROOT_TOL,
        max_tol: XTol::AbsRel {
            abs: 1e-14,
            rel: 1e-10,
        },
        in_log: false,
        from_best: true,
    }
}

/// Temperatures from 1 down to `T_FLOOR`, geometrically spaced, `n` points.
fn temperature_grid(n: usize) -> Vec<f64> {
    let log_floor = T_FLOOR.ln();
    (0..n)
        .map(|k| {
            if k + 1 == n {
                T_FLOOR
            } else {
                (log_floor * k as f64 / (n - 1) as f64).exp()
            }
        })
        .collect()
}

/// t = T/Tc0 of the uniform (Q = 0) second-order instability at mismatch h (Tc0 units): the largest
/// t with m(t, h, 0) = 0, or `None` when there is none above t = `T_FLOOR`.
///
/// The uniform line bends back at low t (its T -> 0 end is h = Delta0/2 = 0.882, its nose, the
/// largest h, is near t = 0.478, h = 1.0855), so for 0.882 < h < 1.0855 there are two roots; the
/// larger one is returned.
/// uniform_tc(0) = 1.
pub fn uniform_tc(h: f64) -> Result<Option<f64>, WeakError> {
    check_finite("h", h)?;
    let h = h.abs();
    if h == 0.0 {
        return Ok(Some(1.0));
    }
    let scan = temperature_scan(401);
    let eq = WeakEquation { h, lambda: 1.0 };
    let r = tc_at_q(&eq, [0.0, 0.0], "uniform Tc at fixed h", &scan)?;
    Ok(r.t)
}

/// h (Tc0 units, h >= 0) of the uniform line at temperature t = T/Tc0, 0 < t < 1: the root of
/// m(t, h, 0) = 0. The margin decreases monotonically in |h| (Re psi(1/2 + i y) increases with
/// |y|), so the root in h >= 0 is unique; -h is its mirror image.
pub fn uniform_line_h(t: f64) -> Result<f64, WeakError> {
    check_below_tc0(t)?;
    let p = lines::uniform_line(&WEAK, t, 1.0, 1e6, ROOT_TOL)?;
    found_or(p, "uniform line h at fixed t")
}

/// Wavevector scan for the maximum of m over Q at (t, h >= 0): from 0 to 3 (h + t), dense (steps t/2)
/// within 2.5 t of Q = h and geometrically coarser (ratio 1.2) away from it. The only feature of m(Q)
/// on the scale t sits at Q = |h| (where the end of the range h +- Q of the angular argument crosses
/// zero); elsewhere m varies on the scale |Q - h| or h.
fn wavevector_grid(t: f64, h: f64) -> Vec<f64> {
    let q_max = 3.0 * (h + t);
    let step = |d: f64| (0.5 * t).max(0.2 * d);
    let mut grid = vec![h];
    let mut d = 0.0;
    while h + d < q_max {
        d += step(d);
        grid.push((h + d).min(q_max));
    }
    d = 0.0;
    while h - d > 0.0 {
        d += step(d);
        grid.push((h - d).max(0.0));
    }
    grid.sort_by(|a, b| a.total_cmp(b));
    grid.dedup();
    grid
}

/// max over Q >= 0 of m(t, h, Q) at t = T/Tc0 > 0 and mismatch h: returns (max margin, Q*) with
/// Q* = hbar v q*/2 in Tc0 units (Q* = 0: the uniform state is the most unstable).
///
/// Global search: a scan over Q in [0, 3(|h| + t)] (see the grid note above) followed by Brent's
/// maximisation between the neighbours of the best scan point. The maximum is flat: Q* is known to
/// about 1e-7 relative, the margin there to about 1e-12.
pub fn modulated_point(t: f64, h: f64) -> Result<(f64, f64), WeakError> {
    check_temperature(t)?;
    check_finite("h", h)?;
    let h = h.abs();
    let grid = wavevector_grid(t, h);
    let tol = XTol::AbsRel {
        abs: 1e-10 * (h + t),
        rel: Q_XTOL_REL,
    };
    let eq = WeakEquation { h, lambda: 1.0 };
    let m = max_over_q_line(&eq, t, [1.0, 0.0], &grid, tol)?;
    if m.stop == QLineStop::AtScanEdge {
        return Err(WeakError::MaximumAtScanEdge { t, h, q: m.q });
    }
    Ok((m.value, m.q))
}

/// The modulated instability line at 0 < t < 1: the largest h (Tc0 units) with
/// max_Q m(t, h, Q) = 0, and Q* there (Tc0 units).
///
/// The search starts above h = Delta0/Tc0 (the T -> 0 end of the line), moves up until the margin is
/// negative, then steps down in h to the first sign change and refines it with Brent's method.
pub fn modulated_line(t: f64) -> Result<(f64, f64), WeakError> {
    check_below_tc0(t)?;
    let h_start = delta0_over_tc0() + 0.25;
    let p = lines::modulated_line(&WEAK, h_start, ROOT_TOL, |eq| {
        Ok(modulated_point(t, eq.h).map(|(m, q)| QLineMax {
            value: m,
            q,
            q_error: 0.0,
            evaluations: 0,
            stop: QLineStop::Converged,
        })?)
    })?;
    let root = found_or(p, "modulated line h at fixed t")?;
    let (_, q_star) = modulated_point(t, root)?;
    Ok((root, q_star))
}

/// The modulated critical temperature at mismatch h (Tc0 units): the largest t = T/Tc0 with
/// max_Q m(t, h, Q) = 0, and Q* there; `None` when there is none above t = `T_FLOOR` (in weak
/// coupling that is |h| >= about Delta0/Tc0 = 1.7639).
pub fn modulated_tc(h: f64) -> Result<Option<(f64, f64)>, WeakError> {
    check_finite("h", h)?;
    let h = h.abs();
    if h == 0.0 {
        return Ok(Some((1.0, 0.0)));
    }
    let scan = temperature_scan(61);
    let root = largest_root("modulated Tc at fixed h", &scan, |t| {
        modulated_point(t, h).map(|(m, _)| m)
    })?;
    match root.t {
        None => Ok(None),
        Some(t) => Ok(Some((t, modulated_point(t, h)?.1))),
    }
}

/// Largest t in (t_min, t_max) along the uniform line at which `indicator(t, h_u(t))` changes sign
/// from negative (at high t) to positive; returns (t, h_u(t)).
fn uniform_line_sign_change<F>(
    mut indicator: F,
    what: &'static str,
) -> Result<(f64, f64), WeakError>
where
    F: FnMut(f64, f64) -> Result<f64, WeakError>,
{
    let g = |t: f64| -> Result<f64, WeakError> { indicator(t, uniform_line_h(t)?) };
    let p = lines::first_sign_change(what, (0.99, 0.05, 48), ROOT_TOL, g)?;
    let root = found_or(p, what)?;
    Ok((root, uniform_line_h(root)?))
}

/// The root of a line search, or the weak-coupling error naming the interval searched.
fn found_or(p: LinePoint, what: &'static str) -> Result<f64, WeakError> {
    match (p.x, p.stop) {
        (Some(x), _) => Ok(x),
        (None, LineStop::NoSignChange { lo, hi, f_lo, f_hi }) => Err(WeakError::NotBracketed {
            what,
            lo,
            hi,
            f_lo,
            f_hi,
        }),
        (None, LineStop::Converged) => unreachable!("a converged line search has a root"),
    }
}

/// Tricritical point (t, h) in Tc0 units: where the quartic coefficient [`quartic_weak`] changes
/// sign along the uniform line (t = 0.5615, h = 1.0728: Sarma 1963).
pub fn tricritical() -> Result<(f64, f64), WeakError> {
    uniform_line_sign_change(|t, h| Ok(-quartic_weak(t, h)), "tricritical point")
}

/// Lifshitz point (t, h) in Tc0 units: where the Q-curvature of the margin at Q = 0 changes sign
/// along the uniform line, computed from the angular quadrature ([`margin_q_curvature_fd`]), so
/// that it is found independently of the closed form; in weak coupling it coincides with the
/// tricritical point.
pub fn lifshitz() -> Result<(f64, f64), WeakError> {
    uniform_line_sign_change(margin_q_curvature_fd, "Lifshitz point")
}

// Reference values are pasted with all the digits the reference library printed (some of them
// are close to pi/2), so the digit-count and approximate-constant lints do not apply.

#[cfg(test)]
#[path = "weak_tests.rs"]
mod tests;
