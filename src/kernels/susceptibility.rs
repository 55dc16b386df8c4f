//! Normal-state pair susceptibility chi(q, T) of one channel by the exact shell integral
//! (the crate docs, [`theory::susceptibility`](crate::theory::susceptibility)), and the nesting-line quantities at q = 0: pair density of states
//! nu_ab and the mismatch h (the crate docs, [`theory::channels`](crate::theory::channels)). Per spin channel, in 1/(meV nm^2).

use crate::error::NumericalError;
use crate::kernels::integrate::{nesting_line_integral, shell_integral_graded, Accuracy, Estimate};
use crate::kernels::shell::Shell;

/// [f(eps_b) - f(eps_a)] / (eps_a - eps_b) with eps_a = h + xi, eps_b = h - xi, written without
/// cancellation or overflow: sinh(|xi|/T) / (2 |xi| [cosh(xi/T) + cosh(h/T)]) (see the crate docs, [`theory::numerics`](crate::theory::numerics)), with
/// the limit 1/(2T [1 + cosh(h/T)]) at xi = 0. Units 1/meV.
///
/// With a = |xi|/T, b = |h|/T, m = max(a, b), p = e^{-|a - b|} and r = e^{-2 min(a, b)}, the
/// four exponentials e^{+-a-m}, e^{+-b-m} are 1, p, p r and p^2 r in some order, so two exp()
/// calls suffice: 2 (cosh a + cosh b) e^{-m} = 1 + p + p r + p^2 r and
/// 2 sinh(a) e^{-m} = (1 - e^{-2a}) (1 when a >= b, else p).
#[inline]
pub fn pair_kernel(xi: f64, h: f64, t: f64) -> f64 {
    pair_kernel_inv(xi, h, t, 1.0 / t)
}

/// `pair_kernel` with 1/T given (hoisted out of the integration loop). With a t = |xi| the
/// result is lead (1 - e^{-2a}) / (2 |xi| (1 + p + p r + p^2 r)): one division.
#[inline]
fn pair_kernel_inv(xi: f64, h: f64, t: f64, inv_t: f64) -> f64 {
    let ax = xi.abs();
    let a = ax * inv_t;
    let b = h.abs() * inv_t;
    let d = (a - b).abs();
    let lo = a.min(b);
    // Arguments beyond 700 give factors below 1e-304 next to terms of order one: set them to
    // zero rather than take the slow underflow path of exp().
    let p = if d < 700.0 { (-d).exp() } else { 0.0 };
    let r = if lo < 350.0 { (-2.0 * lo).exp() } else { 0.0 };
    let pr = p * r;
    let denom = 1.0 + p + pr + p * pr;
    // e^{-2a}: p^2 r when a >= b (lo = b), r when a < b (lo = a).
    let (lead, e2a) = if a >= b { (1.0, p * pr) } else { (p, r) };
    if a == 0.0 {
        // The limit 1/(2T (1 + cosh(h/T))) = e^{-b} / (T (1 + p + p r + p^2 r)) at xi = 0.
        return lead / (denom * t);
    }
    // 1 - e^{-2a}, with expm1 where a is small (no cancellation).
    let num = if a < 0.25 {
        -(-2.0 * a).exp_m1()
    } else {
        1.0 - e2a
    };
    lead * num / (2.0 * denom * ax)
}

/// chi(q, T) of the shell (its q is fixed at construction), T = k_B T in meV.
pub fn susceptibility(shell: &Shell, t: f64, acc: &Accuracy) -> Result<Estimate, NumericalError> {
    if t.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
        return Err(NumericalError::NonPositiveTemperature {
            what: "the susceptibility".into(),
            t,
        });
    }
    let inv_t = 1.0 / t;
    shell_integral_graded(shell, t, &[], acc, |_, p| {
        if p.w == 0.0 {
            0.0
        } else {
            p.w * pair_kernel_inv(p.xi(), p.h(), t, inv_t)
        }
    })
}

/// chi(q, T) with a check of the radial rule: the value at `acc`, with the error estimate
/// enlarged by the difference to the refined rule.
pub fn susceptibility_checked(
    shell: &Shell,
    t: f64,
    acc: &Accuracy,
) -> Result<Estimate, NumericalError> {
    let base = susceptibility(shell, t, acc)?;
    let fine = susceptibility(shell, t, &acc.refined())?;
    Ok(Estimate {
        value: base.value,
        error: base.error + (fine.value - base.value).abs(),
        rays: base.rays,
    })
}

/// Quantities on the nesting line xi = 0 at q = 0.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NestingLine {
    /// Pair density of states nu_ab per spin channel, 1/(meV nm^2).
    pub nu: Estimate,
    /// Mismatch h: h_k on the line averaged with weight W/|grad xi| (weight 1/|grad xi| when W
    /// vanishes everywhere), meV.
    pub mismatch: f64,
    pub mismatch_min: f64,
    pub mismatch_max: f64,
    /// Length of the nesting line weighted by 1/|grad xi| (the W = 1 pair density of states).
    pub nu_unweighted: f64,
}

/// Pair density of states and mismatch of a q = 0 shell.
pub fn nesting_line(shell: &Shell, acc: &Accuracy) -> Result<NestingLine, NumericalError> {
    let [nu1, nu, nuh, nuh1] =
        nesting_line_integral::<4, _>(shell, acc, |_, p| [1.0, p.w, p.w * p.h(), p.h()])?;
    let mismatch = if nu.value > 1e-12 * nu1.value {
        nuh.value / nu.value
    } else {
        nuh1.value / nu1.value
    };
    // Extremes of h_k along the line, sampled on a fine set of rays.
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    let n = if shell.single_ray { 1 } else { 720 };
    for j in 0..n {
        let th = 2.0 * std::f64::consts::PI * j as f64 / n as f64;
        let u = [th.cos(), th.sin()];
        let r0 = shell.xi_radius(u, 0.0)?;
        let h = shell.at(shell.point_on_ray(u, r0)).h();
        lo = lo.min(h);
        hi = hi.max(h);
    }
    Ok(NestingLine {
        nu,
        mismatch,
        mismatch_min: lo,
        mismatch_max: hi,
        nu_unweighted: nu1.value,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The kernel equals the direct Fermi-function difference where that is well conditioned,
    /// and its xi -> 0 limit is -f'(h) = 1/(2T(1 + cosh(h/T))) (common practice). Relative 1e-12.
    #[test]
    fn kernel_matches_fermi_functions_and_limit() {
        let f = |e: f64, t: f64| 1.0 / ((e / t).exp() + 1.0);
        for &(xi, h, t) in &[
            (0.3, 0.1, 0.2),
            (1.0, -0.5, 0.7),
            (0.05, 0.4, 0.1),
            (2.0, 2.1, 0.5),
        ] {
            let direct = (f(h - xi, t) - f(h + xi, t)) / (2.0 * xi);
            assert!((pair_kernel(xi, h, t) / direct - 1.0).abs() < 1e-12);
            assert!((pair_kernel(-xi, h, t) / direct - 1.0).abs() < 1e-12);
        }
        let (h, t): (f64, f64) = (0.3, 0.2);
        let lim = 1.0 / (2.0 * t * (1.0 + (h / t).cosh()));
        assert!((pair_kernel(0.0, h, t) / lim - 1.0).abs() < 1e-12);
        assert!((pair_kernel(1e-9, h, t) / lim - 1.0).abs() < 1e-12);
        // No overflow far from the features: xi/T = h/T = 900.
        let v = pair_kernel(90.0, 90.0, 0.1);
        assert!(v.is_finite() && (v * 2.0 * 90.0 / 0.5 - 1.0).abs() < 1e-12);
    }
}
