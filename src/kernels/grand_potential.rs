//! The ordered state of one channel with one wavevector (the crate docs, [`theory::ordered`](crate::theory::ordered) and [`theory::landau`](crate::theory::landau)): the grand
//! potential Omega(Delta, q, T) relative to the normal state, the gap function whose zeros are the
//! self-consistent gaps, and the quartic Landau coefficient from the fermion loop. Per spin
//! channel; energies meV, Omega in meV/nm^2, T = k_B T in meV (T = 0 allowed).
//!
//! With R = sqrt(xi^2 + Delta^2 W) the quasiparticle energies are E_pm = h_k +- R, and
//!   Omega = Delta^2/g + int_shell [phi(E+) + phi(E-) - phi(eps_a) - phi(eps_b)],
//!   dOmega/dDelta = 2 Delta G(Delta),  G = 1/g - int_shell W [f(E-) - f(E+)] / (2R),
//! so G(0) = 1/g - chi(q, T) = alpha and the zeros of G at Delta > 0 solve the gap equation.

use crate::error::NumericalError;
use crate::kernels::integrate::{shell_integral, Accuracy, Estimate};
use crate::kernels::shell::{PairPoint, Shell};

/// phi(E) = -T ln(1 + e^{-E/T}); at T = 0, min(E, 0). Written without overflow.
#[inline]
pub fn phi(e: f64, t: f64) -> f64 {
    if t <= 0.0 {
        return e.min(0.0);
    }
    e.min(0.0) - t * (-(e.abs()) / t).exp().ln_1p()
}

/// Fermi function; at T = 0 the step (1/2 at E = 0).
#[inline]
pub fn fermi(e: f64, t: f64) -> f64 {
    if t <= 0.0 {
        return if e < 0.0 {
            1.0
        } else if e > 0.0 {
            0.0
        } else {
            0.5
        };
    }
    let x = e / t;
    if x > 0.0 {
        let y = (-x).exp();
        y / (1.0 + y)
    } else {
        1.0 / (1.0 + x.exp())
    }
}

/// Energy width for panel grading: T, or a small fraction of the cutoff at T = 0.
fn width(t: f64, cutoff: f64) -> f64 {
    t.max(1e-6 * cutoff)
}

/// Extra xi features where E_pm = 0 (|h| > Delta): xi = +-sqrt(h^2 - Delta^2), with h the
/// channel's mismatch on the nesting line.
fn gap_edges(h: f64, delta: f64, w: f64) -> Vec<(f64, f64)> {
    let d2 = h * h - delta * delta;
    if d2 > 0.0 {
        let x = d2.sqrt();
        vec![(x, w), (-x, w)]
    } else {
        vec![]
    }
}

/// The shell integral of an ordered-state integrand at gap `delta` (meV): thermal features of
/// width max(T-scale, Delta/4), with the gap edges of `mismatch` as extra features. The integrand
/// gets Delta^2 and the pair point.
fn ordered_integral<F>(
    shell: &Shell,
    mismatch: f64,
    delta: f64,
    t: f64,
    acc: &Accuracy,
    f: F,
) -> Result<Estimate, NumericalError>
where
    F: Fn(f64, &PairPoint) -> f64,
{
    let w = width(t, shell.cutoff);
    let extra = gap_edges(mismatch, delta, w);
    let d2 = delta * delta;
    shell_integral(shell, w.max(0.25 * delta), &extra, acc, |_, p| f(d2, p))
}

/// Omega(Delta) per spin channel, relative to the normal state, in meV/nm^2.
pub fn grand_potential(
    shell: &Shell,
    g: f64,
    mismatch: f64,
    delta: f64,
    t: f64,
    acc: &Accuracy,
) -> Result<Estimate, NumericalError> {
    let integral = ordered_integral(shell, mismatch, delta, t, acc, |d2, p| {
        let xi = p.xi();
        let h = p.h();
        let r = (xi * xi + d2 * p.w).sqrt();
        phi(h + r, t) + phi(h - r, t) - phi(p.eps_a, t) - phi(p.eps_b, t)
    })?;
    Ok(Estimate {
        value: delta * delta / g + integral.value,
        error: integral.error,
        rays: integral.rays,
    })
}

/// The gap function G(Delta) = 1/g - int W [f(E-) - f(E+)]/(2R) (1/(meV nm^2)); its zeros at
/// Delta > 0 are the self-consistent gaps, and dOmega/dDelta = 2 Delta G.
pub fn gap_function(
    shell: &Shell,
    g: f64,
    mismatch: f64,
    delta: f64,
    t: f64,
    acc: &Accuracy,
) -> Result<Estimate, NumericalError> {
    let integral = ordered_integral(shell, mismatch, delta, t, acc, |d2, p| {
        if p.w == 0.0 {
            return 0.0;
        }
        let xi = p.xi();
        let h = p.h();
        let r = (xi * xi + d2 * p.w).sqrt();
        if r == 0.0 {
            return p.w * crate::kernels::susceptibility::pair_kernel(0.0, h, t.max(1e-300));
        }
        p.w * (fermi(h - r, t) - fermi(h + r, t)) / (2.0 * r)
    })?;
    Ok(Estimate {
        value: 1.0 / g - integral.value,
        error: integral.error,
        rays: integral.rays,
    })
}

/// Quartic Landau coefficient beta per spin channel (Omega = alpha Delta^2 + beta/2 Delta^4 +
/// ...), from the fermion loop: beta = d^2 Omega / d(Delta^2)^2 at Delta = 0,
///   beta = int W^2 / (4 xi^2) [f'(h+xi) + f'(h-xi) - (f(h+xi) - f(h-xi))/xi],
/// with the small-xi limit (2/3) W^2 f'''(h) / 4. Units meV^-3 nm^-2. Needs T > 0.
pub fn quartic_loop(shell: &Shell, t: f64, acc: &Accuracy) -> Result<Estimate, NumericalError> {
    if t.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
        return Err(NumericalError::NonPositiveTemperature {
            what: "the quartic coefficient".into(),
            t,
        });
    }
    let fp = |e: f64| {
        let f = fermi(e, t);
        -f * (1.0 - f) / t
    };
    let f3 = |e: f64| {
        let f = fermi(e, t);
        let s = f * (1.0 - f);
        s * (6.0 * s - 1.0) / (t * t * t)
    };
    shell_integral(shell, t, &[], acc, |_, p| {
        if p.w == 0.0 {
            return 0.0;
        }
        let xi = p.xi();
        let h = p.h();
        let w2 = p.w * p.w;
        if xi.abs() < 1e-3 * t {
            return w2 * (2.0 / 3.0) * f3(h) / 4.0;
        }
        let big_f = fermi(h + xi, t) - fermi(h - xi, t);
        w2 / (4.0 * xi * xi) * (fp(h + xi) + fp(h - xi) - big_f / xi)
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// phi and f against their definitions where those are well conditioned, and the T = 0
    /// limits (common practice). Relative 1e-13.
    #[test]
    fn phi_and_fermi_match_definitions() {
        for &(e, t) in &[(0.3f64, 0.2f64), (-0.7, 0.5), (2.0, 0.1), (-0.05, 1.0)] {
            let direct = -t * (1.0 + (-e / t).exp()).ln();
            assert!((phi(e, t) - direct).abs() < 1e-13 * direct.abs().max(1e-3));
            let fd = 1.0 / ((e / t).exp() + 1.0);
            assert!((fermi(e, t) - fd).abs() < 1e-14);
            // phi' = f by a central difference.
            let d = 1e-6;
            let num = (phi(e + d, t) - phi(e - d, t)) / (2.0 * d);
            assert!((num - fermi(e, t)).abs() < 1e-8);
        }
        assert_eq!(phi(-2.0, 0.0), -2.0);
        assert_eq!(phi(2.0, 0.0), 0.0);
        assert!(phi(-900.0, 0.1).is_finite() && phi(900.0, 0.1).abs() < 1e-300);
    }
}
