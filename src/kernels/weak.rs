//! Kernel: weak-coupling closed forms for two circular pockets with equal velocities (physics.md
//! sections 3, 5, 8): the fast path for the pair susceptibility, the instability lines and the Landau
//! coefficients, and an independent cross-check of the exact shell integrals.
//!
//! # Units and conventions
//! Every energy here is in units of the nested critical temperature
//! Tc0 = (2 e^gamma / pi) Lambda exp(-1/lambda) (Lambda the shell cutoff, lambda = g nu the
//! dimensionless coupling, k_B = 1):
//! - `t` = T / Tc0, the temperature;
//! - `h` = mismatch / Tc0, half the Fermi-energy difference (hole minus electron); only |h| matters;
//! - `q` = Q / Tc0 with Q = hbar v q / 2 the pair wavevector in energy units (v the common Fermi
//!   velocity); only |Q| matters, and Q = 0 is the uniform state.
//!
//! The central quantity is the *pair margin*
//!
//! ```text
//! m(t, h, Q) = ln(1/t) - ( < Re psi(1/2 + i (h + Q cos theta) / (2 pi t)) >_theta - psi(1/2) ),
//! ```
//!
//! equal to (g chi(q, T) - 1) / lambda to leading order in weak coupling: m > 0 means the normal
//! state is unstable. Lines of instability are zeros of m; all roots are bracketed and refined by
//! Brent's method, and any failure to converge is reported as a [`WeakError`], never as a number.

use crate::special::{digamma, digamma_real, polygamma, EULER_GAMMA};
use num_complex::Complex64;
use std::f64::consts::PI;
use std::sync::OnceLock;

/// Why a weak-coupling evaluation or search stopped without a trustworthy number.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum WeakError {
    /// An argument outside the range where the closed forms are defined.
    #[error("{name} = {value} is not allowed: {allowed}")]
    InvalidArgument {
        name: &'static str,
        value: f64,
        allowed: &'static str,
    },
    /// The angular average did not reach its error target.
    #[error(
        "angular average at t = {t}, h = {h}, Q = {q} not converged: error estimate {estimate:.3e} \
         above target {target:.3e} after {evaluations} evaluations"
    )]
    AngularAverageNotConverged {
        t: f64,
        h: f64,
        q: f64,
        estimate: f64,
        target: f64,
        evaluations: usize,
    },
    /// No sign change of the function was found where the root was searched for.
    #[error("{what}: no sign change bracketed in [{lo}, {hi}] (values {f_lo:.3e}, {f_hi:.3e})")]
    NotBracketed {
        what: &'static str,
        lo: f64,
        hi: f64,
        f_lo: f64,
        f_hi: f64,
    },
    /// A root or maximum search hit its iteration limit.
    #[error(
        "{what}: not converged after {iterations} iterations (bracket [{lo}, {hi}], target width \
         {target:.3e})"
    )]
    NotConverged {
        what: &'static str,
        iterations: usize,
        lo: f64,
        hi: f64,
        target: f64,
    },
    /// The largest margin over the wavevector scan sat at its upper edge, so the scan range was
    /// too small to contain the maximum.
    #[error("maximum of the pair margin over Q at t = {t}, h = {h} lies at the scan edge Q = {q}")]
    MaximumAtScanEdge { t: f64, h: f64, q: f64 },
}

/// Lowest temperature t = T/Tc0 searched for instability lines.
pub const T_FLOOR: f64 = 1e-4;

/// Absolute error target of the angular average (the margin target is 1e-10; the extra margin keeps
/// the function smooth enough for the maximisation over Q and the roots built on it).
const ANGULAR_TOL: f64 = 1e-12;

/// Evaluation budget of one angular average (a few thousand are used at t = 1e-4).
const ANGULAR_MAX_EVALUATIONS: usize = 400_000;

/// Absolute tolerance on roots in t and h (in Tc0 units).
const ROOT_XTOL: f64 = 1e-12;

/// Relative tolerance on the position Q* of the maximum over Q: the maximum is quadratic, so the
/// margin there is known to ~1e-14 while Q* itself is known only to about this accuracy.
const Q_XTOL_REL: f64 = 1e-7;

/// Iteration limit of the Brent searches (they need 10 to 40).
const MAX_ITER: usize = 200;

/// Delta0 / Tc0 = pi e^{-gamma} = 1.763877..., the T = 0 gap over the nested critical temperature
/// (Bardeen, Cooper, Schrieffer 1957).
pub fn delta0_over_tc0() -> f64 {
    PI * (-EULER_GAMMA).exp()
}

/// Tc0 / Lambda = (2 e^gamma / pi) exp(-1/lambda) for the dimensionless coupling lambda = g nu > 0
/// (weak coupling, constant pair density of states). NaN for lambda <= 0 or not finite.
pub fn tc0_over_cutoff(lambda: f64) -> f64 {
    if !(lambda > 0.0 && lambda.is_finite()) {
        return f64::NAN;
    }
    2.0 * EULER_GAMMA.exp() / PI * (-1.0 / lambda).exp()
}

fn check_temperature(t: f64) -> Result<(), WeakError> {
    if t > 0.0 && t.is_finite() {
        Ok(())
    } else {
        Err(WeakError::InvalidArgument {
            name: "t",
            value: t,
            allowed: "temperature T/Tc0 must be finite and > 0",
        })
    }
}

fn check_finite(name: &'static str, value: f64) -> Result<(), WeakError> {
    if value.is_finite() {
        Ok(())
    } else {
        Err(WeakError::InvalidArgument {
            name,
            value,
            allowed: "must be finite",
        })
    }
}

fn check_below_tc0(t: f64) -> Result<(), WeakError> {
    check_temperature(t)?;
    if t < 1.0 {
        Ok(())
    } else {
        Err(WeakError::InvalidArgument {
            name: "t",
            value: t,
            allowed: "instability lines in h exist only for 0 < T/Tc0 < 1",
        })
    }
}

/// F(x) = Re psi(1/2 + i x / (2 pi t)) for x = h + Q cos(theta), with s = 1/(2 pi t).
fn re_psi_half(x: f64, s: f64) -> f64 {
    digamma(Complex64::new(0.5, x * s)).re
}

/// Pair margin of the uniform state: no angular average is needed.
fn uniform_margin(t: f64, h: f64) -> f64 {
    let s = 1.0 / (2.0 * PI * t);
    -t.ln() - (re_psi_half(h, s) - digamma_real(0.5))
}

// ---------------------------------------------------------------------------------------------
// Angular average: adaptive Gauss-Legendre panels.
// ---------------------------------------------------------------------------------------------

/// Number of Gauss-Legendre nodes per panel.
const GL_ORDER: usize = 16;

struct GaussLegendre {
    nodes: [f64; GL_ORDER],
    weights: [f64; GL_ORDER],
}

/// Gauss-Legendre nodes and weights on [-1, 1], by Newton's method on P_n (computed once).
fn gauss_legendre() -> &'static GaussLegendre {
    static RULE: OnceLock<GaussLegendre> = OnceLock::new();
    RULE.get_or_init(|| {
        let n = GL_ORDER;
        let mut nodes = [0.0; GL_ORDER];
        let mut weights = [0.0; GL_ORDER];
        for i in 0..n {
            let mut x = (PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
            let mut dp = 1.0;
            for _ in 0..100 {
                // P_n(x) and P_{n-1}(x) by the three-term recurrence.
                let (mut p0, mut p1) = (1.0, x);
                for k in 2..=n {
                    let kf = k as f64;
                    let p2 = ((2.0 * kf - 1.0) * x * p1 - (kf - 1.0) * p0) / kf;
                    p0 = p1;
                    p1 = p2;
                }
                dp = n as f64 * (x * p1 - p0) / (x * x - 1.0);
                let dx = p1 / dp;
                x -= dx;
                if dx.abs() < 1e-16 {
                    break;
                }
            }
            nodes[i] = x;
            weights[i] = 2.0 / ((1.0 - x * x) * dp * dp);
        }
        GaussLegendre { nodes, weights }
    })
}

/// One Gauss-Legendre panel on [a, b]: (integral, integral of |f|).
fn gl_panel(f: &mut impl FnMut(f64) -> f64, a: f64, b: f64) -> (f64, f64) {
    let rule = gauss_legendre();
    let half = 0.5 * (b - a);
    let mid = 0.5 * (a + b);
    let (mut sum, mut abs_sum) = (0.0, 0.0);
    for (x, w) in rule.nodes.iter().zip(rule.weights.iter()) {
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

// ---------------------------------------------------------------------------------------------
// Brent's root and maximum searches.
// ---------------------------------------------------------------------------------------------

/// Brent's root search on a bracket [lo, hi] with known end values of opposite sign.
fn brent_root<F>(
    mut f: F,
    lo: f64,
    hi: f64,
    f_lo: f64,
    f_hi: f64,
    xtol: f64,
    what: &'static str,
) -> Result<f64, WeakError>
where
    F: FnMut(f64) -> Result<f64, WeakError>,
{
    if f_lo == 0.0 {
        return Ok(lo);
    }
    if f_hi == 0.0 {
        return Ok(hi);
    }
    if !(f_lo.is_finite() && f_hi.is_finite()) || (f_lo > 0.0) == (f_hi > 0.0) {
        return Err(WeakError::NotBracketed {
            what,
            lo,
            hi,
            f_lo,
            f_hi,
        });
    }
    let (mut a, mut b, mut fa, mut fb) = (lo, hi, f_lo, f_hi);
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    for _ in 0..MAX_ITER {
        if (fb > 0.0) == (fc > 0.0) {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol1 = 2.0 * f64::EPSILON * b.abs() + 0.5 * xtol;
        let xm = 0.5 * (c - b);
        if xm.abs() <= tol1 || fb == 0.0 {
            return Ok(b);
        }
        if e.abs() >= tol1 && fa.abs() > fb.abs() {
            // Inverse quadratic interpolation (secant when only two points are distinct).
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * xm * s;
                q = 1.0 - s;
            } else {
                let qa = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * xm * qa * (qa - r) - (b - a) * (r - 1.0));
                q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            } else {
                p = -p;
            }
            if 2.0 * p < (3.0 * xm * q - (tol1 * q).abs()).min((e * q).abs()) {
                e = d;
                d = p / q;
            } else {
                d = xm;
                e = d;
            }
        } else {
            d = xm;
            e = d;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol1 { d } else { tol1.copysign(xm) };
        fb = f(b)?;
    }
    Err(WeakError::NotConverged {
        what,
        iterations: MAX_ITER,
        lo: b.min(c),
        hi: b.max(c),
        target: xtol,
    })
}

/// Brent's maximum search (golden section with parabolic steps) on [lo, hi], started from an
/// interior point x0 with known value f0; returns (x*, f(x*)) with f(x*) >= f0.
#[allow(clippy::too_many_arguments)]
fn brent_maximize<F>(
    mut f: F,
    lo: f64,
    hi: f64,
    x0: f64,
    f0: f64,
    xtol_abs: f64,
    xtol_rel: f64,
    what: &'static str,
) -> Result<(f64, f64), WeakError>
where
    F: FnMut(f64) -> Result<f64, WeakError>,
{
    const CGOLD: f64 = 0.381_966_011_250_105_1; // (3 - sqrt 5)/2
    let (mut a, mut b) = (lo, hi);
    let (mut x, mut w, mut v) = (x0, x0, x0);
    // Minimise g = -f.
    let (mut fx, mut fw, mut fv) = (-f0, -f0, -f0);
    let mut d: f64 = 0.0;
    let mut e: f64 = 0.0;
    for _ in 0..MAX_ITER {
        let xm = 0.5 * (a + b);
        let tol1 = xtol_rel * x.abs() + xtol_abs;
        let tol2 = 2.0 * tol1;
        if (x - xm).abs() <= tol2 - 0.5 * (b - a) {
            return Ok((x, -fx));
        }
        if e.abs() > tol1 {
            let r = (x - w) * (fx - fv);
            let mut q = (x - v) * (fx - fw);
            let mut p = (x - v) * q - (x - w) * r;
            q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            } else {
                q = -q;
            }
            let etemp = e;
            e = d;
            if p.abs() >= (0.5 * q * etemp).abs() || p <= q * (a - x) || p >= q * (b - x) {
                e = if x >= xm { a - x } else { b - x };
                d = CGOLD * e;
            } else {
                d = p / q;
                let u = x + d;
                if u - a < tol2 || b - u < tol2 {
                    d = tol1.copysign(xm - x);
                }
            }
        } else {
            e = if x >= xm { a - x } else { b - x };
            d = CGOLD * e;
        }
        let u = if d.abs() >= tol1 {
            x + d
        } else {
            x + tol1.copysign(d)
        };
        let fu = -f(u)?;
        if fu <= fx {
            if u >= x {
                a = x;
            } else {
                b = x;
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
    Err(WeakError::NotConverged {
        what,
        iterations: MAX_ITER,
        lo: a,
        hi: b,
        target: xtol_abs,
    })
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

/// Largest t in [T_FLOOR, 1] with `margin(t) = 0`, scanning the grid from the top.
///
/// Where no sign change is found, the margin is maximised around the best grid point before
/// concluding that there is no root (two close roots can hide between grid points at the nose of a
/// line that bends back).
fn largest_temperature_root<F>(
    mut margin: F,
    grid: &[f64],
    what: &'static str,
) -> Result<Option<f64>, WeakError>
where
    F: FnMut(f64) -> Result<f64, WeakError>,
{
    let mut values = Vec::with_capacity(grid.len());
    for (k, &t) in grid.iter().enumerate() {
        let m = margin(t)?;
        if m == 0.0 {
            return Ok(Some(t));
        }
        if m > 0.0 {
            if k == 0 {
                // Unstable already at the top of the grid: no root below the top.
                return Err(WeakError::NotBracketed {
                    what,
                    lo: t,
                    hi: t,
                    f_lo: m,
                    f_hi: m,
                });
            }
            let root = brent_root(
                &mut margin,
                t,
                grid[k - 1],
                m,
                values[k - 1],
                ROOT_XTOL,
                what,
            )?;
            return Ok(Some(root));
        }
        values.push(m);
    }
    // No sign change on the grid: look between grid points around the largest margin.
    let (k_best, _) = values
        .iter()
        .enumerate()
        .fold((0, f64::NEG_INFINITY), |best, (k, &m)| {
            if m > best.1 {
                (k, m)
            } else {
                best
            }
        });
    if k_best == 0 || k_best + 1 == grid.len() {
        return Ok(None);
    }
    let (t_lo, t_hi) = (grid[k_best + 1], grid[k_best - 1]);
    let (t_max, m_max) = brent_maximize(
        &mut margin,
        t_lo,
        t_hi,
        grid[k_best],
        values[k_best],
        1e-14,
        1e-10,
        what,
    )?;
    if m_max <= 0.0 {
        return Ok(None);
    }
    let root = brent_root(
        &mut margin,
        t_max,
        t_hi,
        m_max,
        values[k_best - 1],
        ROOT_XTOL,
        what,
    )?;
    Ok(Some(root))
}

// ---------------------------------------------------------------------------------------------
// Uniform (Q = 0) instability.
// ---------------------------------------------------------------------------------------------

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
    let grid = temperature_grid(401);
    largest_temperature_root(|t| Ok(uniform_margin(t, h)), &grid, "uniform Tc at fixed h")
}

/// h (Tc0 units, h >= 0) of the uniform line at temperature t = T/Tc0, 0 < t < 1: the root of
/// m(t, h, 0) = 0. The margin decreases monotonically in |h| (Re psi(1/2 + i y) increases with
/// |y|), so the root in h >= 0 is unique; -h is its mirror image.
pub fn uniform_line_h(t: f64) -> Result<f64, WeakError> {
    check_below_tc0(t)?;
    let m0 = uniform_margin(t, 0.0);
    let mut h_hi = 1.0;
    let mut m_hi = uniform_margin(t, h_hi);
    while m_hi >= 0.0 {
        h_hi *= 2.0;
        if h_hi > 1e6 {
            return Err(WeakError::NotBracketed {
                what: "uniform line h at fixed t",
                lo: 0.0,
                hi: h_hi,
                f_lo: m0,
                f_hi: m_hi,
            });
        }
        m_hi = uniform_margin(t, h_hi);
    }
    brent_root(
        |h| Ok(uniform_margin(t, h)),
        0.0,
        h_hi,
        m0,
        m_hi,
        ROOT_XTOL,
        "uniform line h at fixed t",
    )
}

// ---------------------------------------------------------------------------------------------
// Modulated (Q != 0) instability.
// ---------------------------------------------------------------------------------------------

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
    let mut values = Vec::with_capacity(grid.len());
    for &q in &grid {
        values.push(pair_margin(t, h, q)?);
    }
    let (k, m_best) = values
        .iter()
        .enumerate()
        .fold((0, f64::NEG_INFINITY), |best, (k, &m)| {
            if m > best.1 {
                (k, m)
            } else {
                best
            }
        });
    let margin = |q: f64| pair_margin(t, h, q);
    let xtol_abs = 1e-10 * (h + t);
    let what = "maximum of the pair margin over Q";
    if k + 1 == grid.len() {
        return Err(WeakError::MaximumAtScanEdge { t, h, q: grid[k] });
    }
    if k == 0 {
        // Q = 0 is always stationary (m is even in Q); it is the maximum unless m curves upwards.
        if margin_q_curvature(t, h) <= 0.0 {
            return Ok((m_best, 0.0));
        }
        let mid = 0.5 * grid[1];
        let m_mid = margin(mid)?;
        let (q, m) = brent_maximize(margin, 0.0, grid[1], mid, m_mid, xtol_abs, Q_XTOL_REL, what)?;
        return Ok(if m > m_best { (m, q) } else { (m_best, 0.0) });
    }
    let (q, m) = brent_maximize(
        margin,
        grid[k - 1],
        grid[k + 1],
        grid[k],
        m_best,
        xtol_abs,
        Q_XTOL_REL,
        what,
    )?;
    Ok((m, q))
}

/// The modulated instability line at 0 < t < 1: the largest h (Tc0 units) with
/// max_Q m(t, h, Q) = 0, and Q* there (Tc0 units).
///
/// The search starts above h = Delta0/Tc0 (the T -> 0 end of the line), moves up until the margin is
/// negative, then steps down in h to the first sign change and refines it with Brent's method.
pub fn modulated_line(t: f64) -> Result<(f64, f64), WeakError> {
    check_below_tc0(t)?;
    let what = "modulated line h at fixed t";
    let max_margin = |h: f64| modulated_point(t, h).map(|(m, _)| m);
    let mut h_hi = delta0_over_tc0() + 0.25;
    let mut m_hi = max_margin(h_hi)?;
    let mut expansions = 0;
    while m_hi >= 0.0 {
        expansions += 1;
        if expansions > 20 {
            return Err(WeakError::NotBracketed {
                what,
                lo: 0.0,
                hi: h_hi,
                f_lo: -t.ln(),
                f_hi: m_hi,
            });
        }
        h_hi *= 1.5;
        m_hi = max_margin(h_hi)?;
    }
    let step = 0.05 * h_hi;
    let (mut h_above, mut m_above) = (h_hi, m_hi);
    loop {
        let h = (h_above - step).max(0.0);
        let m = max_margin(h)?;
        if m >= 0.0 {
            let root = brent_root(max_margin, h, h_above, m, m_above, ROOT_XTOL, what)?;
            let (_, q_star) = modulated_point(t, root)?;
            return Ok((root, q_star));
        }
        if h == 0.0 {
            // Cannot happen for t < 1 (m(t, 0, 0) = ln(1/t) > 0); reported rather than assumed.
            return Err(WeakError::NotBracketed {
                what,
                lo: 0.0,
                hi: h_hi,
                f_lo: m,
                f_hi: m_hi,
            });
        }
        h_above = h;
        m_above = m;
    }
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
    let grid = temperature_grid(61);
    let root = largest_temperature_root(
        |t| modulated_point(t, h).map(|(m, _)| m),
        &grid,
        "modulated Tc at fixed h",
    )?;
    match root {
        None => Ok(None),
        Some(t) => Ok(Some((t, modulated_point(t, h)?.1))),
    }
}

// ---------------------------------------------------------------------------------------------
// Landau coefficients, tricritical and Lifshitz points.
// ---------------------------------------------------------------------------------------------

/// Quartic Landau coefficient per unit pair density of states, beta/nu, in Tc0^-2 units:
/// -Re psi''(1/2 + i h/(2 pi t)) / (16 pi^2 t^2) (physics.md section 5). At h = 0 it is
/// 7 zeta(3)/(8 pi^2 t^2) > 0; beta < 0 on the instability line means a first-order transition.
pub fn quartic_weak(t: f64, h: f64) -> f64 {
    let z = Complex64::new(0.5, h / (2.0 * PI * t));
    -polygamma(2, z).re / (16.0 * PI * PI * t * t)
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
    let mut g = |t: f64| -> Result<f64, WeakError> { indicator(t, uniform_line_h(t)?) };
    let (t_top, t_bottom, n) = (0.99, 0.05, 48);
    let mut t_prev = t_top;
    let mut g_prev = g(t_prev)?;
    for k in 1..=n {
        let t = t_top + (t_bottom - t_top) * k as f64 / n as f64;
        let gt = g(t)?;
        if (gt > 0.0) != (g_prev > 0.0) {
            let root = brent_root(&mut g, t, t_prev, gt, g_prev, ROOT_XTOL, what)?;
            return Ok((root, uniform_line_h(root)?));
        }
        t_prev = t;
        g_prev = gt;
    }
    Err(WeakError::NotBracketed {
        what,
        lo: t_bottom,
        hi: t_top,
        f_lo: g_prev,
        f_hi: g(t_top)?,
    })
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
#[allow(clippy::excessive_precision, clippy::approx_constant)]
mod tests {
    use super::*;

    /// Check values quoted to 4 decimals (physics.md section 8, mpmath at 30 digits, and the cited
    /// papers): rounding allows 5e-5; 2e-4 absolute leaves room for the flat maximum in Q.
    const TABLE_TOL: f64 = 2e-4;

    /// Against 20-digit mpmath values of the margin itself: the target accuracy of `pair_margin`.
    const MARGIN_TOL: f64 = 1e-10;

    /// Agreement of two routes to the same number computed here to ~1e-12 (roots, finite
    /// differences): 1e-8 absolute is far below any physics use and above their noise.
    const ROUTE_TOL: f64 = 1e-8;

    #[test]
    fn constants() {
        // physics.md section 8 table (BCS 1957): Delta0/Tc0 = 1.763877, Tc0/Lambda = 1.133866 e^{-1/lambda}.
        assert!((delta0_over_tc0() - 1.763877).abs() < 1e-6);
        assert!((tc0_over_cutoff(1.0) * 1f64.exp() - 1.133866).abs() < 1e-6);
        assert!(tc0_over_cutoff(0.0).is_nan());
    }

    /// At h = Q = 0 the average is psi(1/2) itself, so m = ln(1/t) exactly (identity).
    #[test]
    fn nested_margin_is_log_one_over_t() {
        for &t in &[1e-3, 0.1, 0.5, 1.0, 2.0] {
            assert_eq!(pair_margin(t, 0.0, 0.0).unwrap(), -f64::ln(t));
        }
    }

    /// References: mpmath 1.3 at 25 digits, the average by mpmath.quad split at cos theta0 = -h/Q
    /// and at graded points around it (unchanged at 32 digits with other split points):
    /// ```text
    /// from mpmath import mp, mpf, psi, quad, pi, log, acos, cos
    /// mp.dps = 25
    /// f = lambda th: psi(0, mpf(1)/2 + 1j*(h + Q*cos(th))/(2*pi*t)).real
    /// m = log(1/t) - (quad(f, [0, th0, ..., pi], maxdegree=10)/pi - psi(0, mpf(1)/2))
    /// ```
    #[test]
    fn margin_matches_mpmath() {
        let refs = [
            (0.5, 0.3, 0.2, 0.60531234475913355451),
            (0.2, 1.35, 1.5, 0.0011537489745460574086),
            (0.05, 1.6, 1.7, 0.010405580565281932367),
            (0.01, 1.72, 1.75, 0.0033444110839418768837),
            (0.01, 1.0, 3.0, -0.53109806772024237786),
            (0.05, 1.62, 1.5, -0.20707418290443838071),
            (0.2, 0.0, 1.0, 0.56016738915504643509),
            (0.001, 1.76, 1.77, -0.0034666779716063680474),
        ];
        for (t, h, q, want) in refs {
            let got = pair_margin(t, h, q).unwrap();
            assert!(
                (got - want).abs() < MARGIN_TOL,
                "m({t}, {h}, {q}) = {got}, want {want}"
            );
            // Signs of h and Q do not matter.
            assert!((pair_margin(t, -h, -q).unwrap() - want).abs() < MARGIN_TOL);
        }
    }

    /// Independent route: the Matsubara sum. Averaging 1/(a + i(c + b cos theta)) over theta gives
    /// 1/sqrt((a + ic)^2 + b^2), so with a_n = n + 1/2, c = h/(2 pi t), b = Q/(2 pi t),
    /// <Re psi> - psi(1/2) = sum_n [1/a_n - Re ((a_n + ic)^2 + b^2)^(-1/2)]; the tail beyond N is
    /// its midpoint-rule Euler-Maclaurin integral, Re ln[(z + sqrt(z^2 + b^2))/(2N)] with z = N + ic,
    /// minus g'(N)/24, with N = 200 (|b| + |c|) + 2000 (the neglected Euler-Maclaurin terms and the
    /// rounding of the sum stay below 1e-12). No digamma and no angular quadrature is involved.
    fn margin_by_matsubara_sum(t: f64, h: f64, q: f64) -> f64 {
        let c = h / (2.0 * PI * t);
        let b = q / (2.0 * PI * t);
        let g = |x: f64| {
            let z = Complex64::new(x, c);
            1.0 / x - (z * z + b * b).sqrt().inv().re
        };
        let n_terms = (200.0 * (b.abs() + c.abs()) + 2000.0) as usize;
        let sum: f64 = (0..n_terms).map(|n| g(n as f64 + 0.5)).sum();
        let x = n_terms as f64;
        let z = Complex64::new(x, c);
        let root = (z * z + b * b).sqrt();
        let tail_integral = ((z + root) / (2.0 * x)).ln().re;
        let g_prime = -1.0 / (x * x) + (z / (root * root * root)).re;
        let average = sum + tail_integral - g_prime / 24.0;
        -t.ln() - average
    }

    #[test]
    fn margin_matches_matsubara_sum() {
        for &t in &[1e-3, 0.02, 0.1, 0.3, 0.7, 1.3] {
            for &h in &[0.0, 0.4, 1.1, 1.7] {
                for &q in &[0.0, 0.3, 1.2, 1.75, 4.0] {
                    let got = pair_margin(t, h, q).unwrap();
                    let want = margin_by_matsubara_sum(t, h, q);
                    assert!(
                        (got - want).abs() < MARGIN_TOL,
                        "m({t}, {h}, {q}) = {got}, Matsubara sum {want}"
                    );
                }
            }
        }
    }

    /// uniform_tc(0) = 1 (definition of Tc0); the uniform line at t = 0.2 is h = 0.9658
    /// (physics.md section 8, mpmath 1.3 at 30 digits); uniform_tc inverts uniform_line_h.
    #[test]
    fn uniform_line() {
        assert_eq!(uniform_tc(0.0).unwrap(), Some(1.0));
        let h = uniform_line_h(0.2).unwrap();
        assert!((h - 0.9658).abs() < TABLE_TOL, "h = {h}");
        // Points on the upper branch (above the nose of the line, near t = 0.48).
        for &t in &[0.9, 0.7, 0.55] {
            let h = uniform_line_h(t).unwrap();
            let tc = uniform_tc(h).unwrap().unwrap();
            assert!((tc - t).abs() < ROUTE_TOL, "t = {t}, h = {h}, tc = {tc}");
            assert!(pair_margin(t, h, 0.0).unwrap().abs() < MARGIN_TOL);
        }
        assert!(uniform_line_h(1.0).is_err());
        // Far beyond the nose of the uniform line there is no uniform instability.
        assert_eq!(uniform_tc(1.5).unwrap(), None);
    }

    /// Below the nose the uniform line has two roots in t at fixed h: the larger one is returned,
    /// and at h just below the T -> 0 end Delta0/2 the root exists and lies on the upper branch.
    #[test]
    fn uniform_tc_takes_the_upper_branch() {
        // Locate the nose of the uniform line (the largest h) on a grid in t.
        let (t_nose, h_nose) = (1..100)
            .map(|k| {
                let t = 0.01 * k as f64;
                (t, uniform_line_h(t).unwrap())
            })
            .fold((0.0, 0.0), |a, b| if b.1 > a.1 { b } else { a });
        // Slightly below the nose: two roots, the returned one lies above the nose temperature.
        let h = h_nose - 1e-3;
        let tc = uniform_tc(h).unwrap().unwrap();
        assert!(tc > t_nose, "tc = {tc}, nose at t = {t_nose}");
        assert!(uniform_margin(tc, h).abs() < MARGIN_TOL);
        // Just above the nose (past the refinement of the grid): none.
        assert_eq!(uniform_tc(h_nose + 1e-3).unwrap(), None);
        // Below Delta0/2 the lower branch has gone below t = 0: a single root.
        assert!(uniform_tc(0.8).unwrap().is_some());
    }

    /// The Q-curvature from the angular quadrature (Richardson finite differences) agrees with the
    /// closed form Re psi''/(8 pi^2 t^2) = -2 beta/nu.
    #[test]
    fn q_curvature_routes_agree() {
        for &(t, h) in &[(0.8, 0.3), (0.5615, 1.0728), (0.3, 1.0), (0.2, 0.5)] {
            let closed = margin_q_curvature(t, h);
            let fd = margin_q_curvature_fd(t, h).unwrap();
            assert!(
                (closed - fd).abs() < 1e-6 * (1.0 + closed.abs()),
                "{closed} vs {fd}"
            );
            assert!((closed + 2.0 * quartic_weak(t, h)).abs() < 1e-13 * (1.0 + closed.abs()));
        }
    }

    /// beta at h = 0 is the BCS value 7 zeta(3)/(8 pi^2 t^2) (Gor'kov's Ginzburg-Landau coefficient).
    #[test]
    fn quartic_at_zero_mismatch() {
        let zeta3 = 1.202_056_903_159_594_3;
        let t = 0.7;
        let want = 7.0 * zeta3 / (8.0 * PI * PI * t * t);
        assert!((quartic_weak(t, 0.0) - want).abs() < 1e-14 * want);
    }

    /// Tricritical point t = 0.5615, h = 1.0728 (Sarma, J. Phys. Chem. Solids 24, 1029 (1963);
    /// Saint-James, Sarma, Thomas (1969)); the Lifshitz point coincides in weak coupling (physics.md
    /// section 5; Buzdin and Kachkachi 1997).
    #[test]
    fn tricritical_and_lifshitz_points() {
        let (t, h) = tricritical().unwrap();
        assert!((t - 0.5615).abs() < TABLE_TOL, "t = {t}");
        assert!((h - 1.0728).abs() < TABLE_TOL, "h = {h}");
        assert!(quartic_weak(t, h).abs() < 1e-10);
        let (tl, hl) = lifshitz().unwrap();
        assert!(
            (tl - t).abs() < ROUTE_TOL && (hl - h).abs() < ROUTE_TOL,
            "{tl} {hl} vs {t} {h}"
        );
    }

    /// Modulated line at t = 0.2: h = 1.3519, Q* = 1.5023 (physics.md section 8, mpmath 1.3 at 30
    /// digits).
    #[test]
    fn modulated_line_at_t_0_2() {
        let (h, q) = modulated_line(0.2).unwrap();
        assert!((h - 1.3519).abs() < TABLE_TOL, "h = {h}");
        assert!((q - 1.5023).abs() < TABLE_TOL, "Q* = {q}");
        let (m, q2) = modulated_point(0.2, h).unwrap();
        assert!(m.abs() < MARGIN_TOL);
        assert!((q2 - q).abs() < 1e-6);
    }

    /// Low-temperature modulated line: h = 1.6189 / 1.6959 / 1.7262, Q*/h = 1.0551 / 1.0275 / 1.0158
    /// at t = 0.05 / 0.02 / 0.01 (physics.md section 8, mpmath 1.3 at 30 digits); the approach to the
    /// T -> 0 limits h -> Delta0, Q*/h -> 1 (Burkhardt and Rainer, Ann. Phys. 3, 181 (1994); Shimahara,
    /// PRB 50, 12760 (1994)) is monotonic.
    #[test]
    fn modulated_line_at_low_temperature() {
        let table = [
            (0.05, 1.6189, 1.0551),
            (0.02, 1.6959, 1.0275),
            (0.01, 1.7262, 1.0158),
        ];
        let (mut h_prev, mut ratio_prev) = (modulated_line(0.2).unwrap().0, f64::INFINITY);
        for (t, h_want, ratio_want) in table {
            let (h, q) = modulated_line(t).unwrap();
            assert!((h - h_want).abs() < TABLE_TOL, "t = {t}: h = {h}");
            assert!(
                (q / h - ratio_want).abs() < TABLE_TOL,
                "t = {t}: Q*/h = {}",
                q / h
            );
            assert!(
                h > h_prev && h < delta0_over_tc0(),
                "h not increasing towards Delta0"
            );
            assert!(
                q / h < ratio_prev && q / h > 1.0,
                "Q*/h not decreasing towards 1"
            );
            h_prev = h;
            ratio_prev = q / h;
        }
        // Further down in t (no table values): still monotonic, and within 1% of both limits at
        // t = 0.001 (the gaps shrink roughly like t, with a slowly growing prefactor).
        for t in [0.002, 0.001] {
            let (h, q) = modulated_line(t).unwrap();
            assert!(h > h_prev && h < delta0_over_tc0(), "t = {t}: h = {h}");
            assert!(
                q / h < ratio_prev && q / h > 1.0,
                "t = {t}: Q*/h = {}",
                q / h
            );
            h_prev = h;
            ratio_prev = q / h;
        }
        assert!(delta0_over_tc0() - h_prev < 0.01 && ratio_prev - 1.0 < 0.01);
    }

    /// modulated_tc inverts modulated_line (t = 0.2: h = 1.3519, Q* = 1.5023 from the table), gives
    /// the uniform answer above the Lifshitz point, and none beyond h = Delta0.
    #[test]
    fn modulated_tc_inverts_the_line() {
        let (h, q) = modulated_line(0.2).unwrap();
        let (tc, qc) = modulated_tc(h).unwrap().unwrap();
        assert!((tc - 0.2).abs() < ROUTE_TOL, "tc = {tc}");
        assert!((qc - q).abs() < 1e-5, "Q* = {qc} vs {q}");
        // Above the Lifshitz point (h small) the uniform state is the most unstable: Q* = 0.
        let (tc, qc) = modulated_tc(0.5).unwrap().unwrap();
        assert_eq!(qc, 0.0);
        assert!((tc - uniform_tc(0.5).unwrap().unwrap()).abs() < ROUTE_TOL);
        assert_eq!(modulated_tc(0.0).unwrap(), Some((1.0, 0.0)));
        // Beyond the T -> 0 end of the modulated line, h = Delta0 = 1.7639: no instability.
        assert_eq!(modulated_tc(1.8).unwrap(), None);
    }

    /// The global search never settles on a local maximum: a brute-force scan of 1500 points over
    /// Q in [0, 3(h + t)] finds no larger margin (beyond the quadrature noise) at points below,
    /// at, and above the Lifshitz temperature and at low t.
    #[test]
    fn modulated_point_is_global() {
        let t_l = 0.5;
        let points = [
            (0.3, 1.2),
            (0.05, 1.6),
            (0.01, 1.72),
            (0.8, 0.5),
            (t_l, uniform_line_h(t_l).unwrap()),
        ];
        for (t, h) in points {
            let (m, q) = modulated_point(t, h).unwrap();
            let q_max = 3.0 * (h + t);
            let n = 1500;
            for k in 0..=n {
                let qk = q_max * k as f64 / n as f64;
                let mk = pair_margin(t, h, qk).unwrap();
                assert!(
                    mk <= m + 1e-12,
                    "t = {t}, h = {h}: m({qk}) = {mk} > m({q}) = {m}"
                );
            }
        }
    }

    #[test]
    fn invalid_arguments_are_errors() {
        assert!(pair_margin(0.0, 1.0, 1.0).is_err());
        assert!(pair_margin(-1.0, 1.0, 1.0).is_err());
        assert!(pair_margin(0.5, f64::NAN, 1.0).is_err());
        assert!(modulated_line(1.0).is_err());
        assert!(uniform_line_h(0.0).is_err());
    }
}
