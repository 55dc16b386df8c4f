//! Kernel: the weak-coupling pair margin m(t, h, Q) (the angular average of Re psi on adaptive
//! Gauss-Legendre panels), its Q-curvature at Q = 0 by two routes and the quartic Landau
//! coefficient. Units of [`crate::kernels::weak`]: energies over Tc0.

use super::{check_finite, check_temperature, re_psi_half, WeakError};
use crate::kernels::quad::gauss_legendre;
use crate::special::{digamma_real, polygamma};
use num_complex::Complex64;
use std::f64::consts::PI;
use std::sync::OnceLock;

/// Absolute error target of the angular average (the margin target is 1e-10; the extra margin keeps
/// the function smooth enough for the maximisation over Q and the roots built on it).
const ANGULAR_TOL: f64 = 1e-12;

/// Evaluation budget of one angular average (a few thousand are used at t = 1e-4).
const ANGULAR_MAX_EVALUATIONS: usize = 400_000;

/// Number of Gauss-Legendre nodes per panel.
const GL_ORDER: usize = 16;

/// The rule of [`crate::kernels::quad::gauss_legendre`] with `GL_ORDER` nodes, in descending
/// order of the nodes (the order of the panel sums), computed once.
fn panel_rule() -> &'static (Vec<f64>, Vec<f64>) {
    static RULE: OnceLock<(Vec<f64>, Vec<f64>)> = OnceLock::new();
    RULE.get_or_init(|| {
        let (mut nodes, mut weights) = gauss_legendre(GL_ORDER);
        nodes.reverse();
        weights.reverse();
        (nodes, weights)
    })
}

/// One Gauss-Legendre panel on [a, b]: (integral, integral of |f|).
fn gl_panel(f: &mut impl FnMut(f64) -> f64, a: f64, b: f64) -> (f64, f64) {
    let (nodes, weights) = panel_rule();
    let half = 0.5 * (b - a);
    let mid = 0.5 * (a + b);
    let (mut sum, mut abs_sum) = (0.0, 0.0);
    for (x, w) in nodes.iter().zip(weights.iter()) {
        let v = f(mid + half * x);
        sum += w * v;
        abs_sum += w * v.abs();
    }
    (sum * half, abs_sum * half)
}

/// Result of an adaptive integral: value, error estimate, number of integrand evaluations.
#[derive(Debug, Clone, Copy)]
struct Integral {
    value: f64,
    error: f64,
    evaluations: usize,
    converged: bool,
}

/// Adaptive bisection of [a, b]: a panel is accepted when its Gauss-Legendre value and the sum over
/// its two halves differ by less than its share of `tol` (proportional to its length), or by less
/// than the rounding floor. The difference, an error bound on the coarser value, is reported as the
/// error of the (much more accurate) finer one, so the estimate is pessimistic.
fn integrate_adaptive(f: &mut impl FnMut(f64) -> f64, a: f64, b: f64, tol: f64) -> Integral {
    let length = b - a;
    let mut out = Integral {
        value: 0.0,
        error: 0.0,
        evaluations: GL_ORDER,
        converged: true,
    };
    if length <= 0.0 {
        out.evaluations = 0;
        return out;
    }
    let (whole, _) = gl_panel(f, a, b);
    let mut stack = vec![(a, b, whole, 0u32)];
    while let Some((lo, hi, coarse, depth)) = stack.pop() {
        let mid = 0.5 * (lo + hi);
        let (left, left_abs) = gl_panel(f, lo, mid);
        let (right, right_abs) = gl_panel(f, mid, hi);
        out.evaluations += 2 * GL_ORDER;
        let fine = left + right;
        let diff = (fine - coarse).abs();
        let local_tol =
            (tol * (hi - lo) / length).max(50.0 * f64::EPSILON * (left_abs + right_abs));
        if diff <= local_tol {
            out.value += fine;
            out.error += diff;
        } else if depth >= 60 || out.evaluations >= ANGULAR_MAX_EVALUATIONS {
            out.value += fine;
            out.error += diff;
            out.converged = false;
        } else {
            stack.push((lo, mid, left, depth + 1));
            stack.push((mid, hi, right, depth + 1));
        }
    }
    out
}

/// < Re psi(1/2 + i (h + Q cos theta)/(2 pi t)) >_theta over the Fermi-surface angle.
///
/// By symmetry the average runs over theta in [0, pi]. For |Q| > |h| the argument h + Q cos theta
/// vanishes at cos theta0 = -h/Q, where the integrand has a feature of width ~t: the range is split
/// there and the adaptive panels grade down towards it.
fn angular_average(t: f64, h: f64, q: f64) -> Result<f64, WeakError> {
    let s = 1.0 / (2.0 * PI * t);
    let (ha, qa) = (h.abs(), q.abs());
    if qa == 0.0 {
        return Ok(re_psi_half(ha, s));
    }
    let mut f = |theta: f64| re_psi_half(ha + qa * theta.cos(), s);
    let mut breaks = vec![0.0];
    if qa > ha {
        breaks.push((-ha / qa).acos());
    }
    breaks.push(PI);
    let target = ANGULAR_TOL * PI;
    let (mut value, mut error, mut evaluations, mut converged) = (0.0, 0.0, 0, true);
    for w in breaks.windows(2) {
        let piece = integrate_adaptive(&mut f, w[0], w[1], target * (w[1] - w[0]) / PI);
        value += piece.value;
        error += piece.error;
        evaluations += piece.evaluations;
        converged &= piece.converged;
    }
    if !converged || error > target {
        return Err(WeakError::AngularAverageNotConverged {
            t,
            h,
            q,
            estimate: error / PI,
            target: ANGULAR_TOL,
            evaluations,
        });
    }
    Ok(value / PI)
}

/// Pair margin m(t, h, Q) = ln(1/t) - ( <Re psi(1/2 + i (h + Q cos theta)/(2 pi t))>_theta - psi(1/2) ),
/// equal to (g chi(q, T) - 1)/lambda in weak coupling; m > 0: the normal state is unstable.
///
/// `t` = T/Tc0 > 0, `h` = mismatch/Tc0, `q` = (hbar v q/2)/Tc0 (signs of h and q do not matter).
/// Accuracy: about 1e-12 absolute (the angular average is converged to that with a pessimistic
/// error estimate; Q = 0 needs no average). At h = Q = 0 the margin is ln(1/t) exactly.
pub fn pair_margin(t: f64, h: f64, q: f64) -> Result<f64, WeakError> {
    check_temperature(t)?;
    check_finite("h", h)?;
    check_finite("q", q)?;
    let average = angular_average(t, h, q)?;
    Ok(-t.ln() - (average - digamma_real(0.5)))
}

/// d^2 m / dQ^2 at Q = 0 (Tc0^-2 units), from the closed form: averaging F(h + Q cos theta) gives
/// m(Q) = m(0) + Q^2 Re psi''(1/2 + i h/(2 pi t)) / (16 pi^2 t^2) + O(Q^4), so the curvature is
/// Re psi''(...)/(8 pi^2 t^2) = -2 [`quartic_weak`]: the Q-curvature and beta change sign together.
pub fn margin_q_curvature(t: f64, h: f64) -> f64 {
    let z = Complex64::new(0.5, h / (2.0 * PI * t));
    polygamma(2, z).re / (8.0 * PI * PI * t * t)
}

/// d^2 m / dQ^2 at Q = 0 from the angular quadrature: Richardson-extrapolated (two levels) second
/// differences D(d) = 2 (m(d) - m(0))/d^2 with steps d = t/8, t/16, t/32 (well below T/v). An
/// independent route to [`margin_q_curvature`]; accuracy about 1e-9 relative.
pub fn margin_q_curvature_fd(t: f64, h: f64) -> Result<f64, WeakError> {
    check_temperature(t)?;
    check_finite("h", h)?;
    let m0 = pair_margin(t, h, 0.0)?;
    let step = t / 8.0;
    let mut d = [0.0; 3];
    for (k, dk) in d.iter_mut().enumerate() {
        let delta = step / f64::powi(2.0, k as i32);
        *dk = 2.0 * (pair_margin(t, h, delta)? - m0) / (delta * delta);
    }
    let r1 = [(4.0 * d[1] - d[0]) / 3.0, (4.0 * d[2] - d[1]) / 3.0];
    Ok((16.0 * r1[1] - r1[0]) / 15.0)
}

/// Quartic Landau coefficient per unit pair density of states, beta/nu, in Tc0^-2 units:
/// -Re psi''(1/2 + i h/(2 pi t)) / (16 pi^2 t^2) (see the crate docs (`crate::theory`)). At h = 0 it is
/// 7 zeta(3)/(8 pi^2 t^2) > 0; beta < 0 on the instability line means a first-order transition.
pub fn quartic_weak(t: f64, h: f64) -> f64 {
    let z = Complex64::new(0.5, h / (2.0 * PI * t));
    -polygamma(2, z).re / (16.0 * PI * PI * t * t)
}
