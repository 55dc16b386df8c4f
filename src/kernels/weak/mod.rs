//! Kernel: weak-coupling closed forms for two circular pockets with equal velocities (see the crate
//! docs (`crate::theory`)): the fast path for the pair susceptibility and the Landau coefficients,
//! and an independent cross-check of the exact shell integrals. The searches built on them (the
//! instability lines, the weak-coupling Tc) are methods and live in [`crate::solvers::tc::weak`].
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
//! state is unstable. Any failure to converge is reported as a [`WeakError`], never as a number.

mod margin;

pub use margin::{margin_q_curvature, margin_q_curvature_fd, pair_margin, quartic_weak};

use crate::error::NumericalError;
use crate::special::{digamma, EULER_GAMMA};
use num_complex::Complex64;
use std::f64::consts::PI;

/// Why a weak-coupling evaluation or search stopped without a trustworthy number.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum WeakError {
    /// An argument outside the range where the closed forms are defined.
    #[error("{name} = {value} is not allowed: {allowed}")]
    InvalidArgument {
        /// Which argument.
        name: &'static str,
        /// Its value.
        value: f64,
        /// What is allowed.
        allowed: &'static str,
    },
    /// The angular average did not reach its error target.
    #[error(
        "angular average at t = {t}, h = {h}, Q = {q} not converged: error estimate {estimate:.3e} \
         above target {target:.3e} after {evaluations} evaluations"
    )]
    AngularAverageNotConverged {
        /// Temperature T/Tc0.
        t: f64,
        /// Mismatch h/Tc0.
        h: f64,
        /// Wavevector Q/Tc0.
        q: f64,
        /// The error estimate reached.
        estimate: f64,
        /// The target.
        target: f64,
        /// Integrand evaluations used.
        evaluations: usize,
    },
    /// No sign change of the function was found where the root was searched for.
    #[error("{what}: no sign change bracketed in [{lo}, {hi}] (values {f_lo:.3e}, {f_hi:.3e})")]
    NotBracketed {
        /// What was searched for.
        what: &'static str,
        /// Lower end of the bracket.
        lo: f64,
        /// Upper end of the bracket.
        hi: f64,
        /// The function at `lo`.
        f_lo: f64,
        /// The function at `hi`.
        f_hi: f64,
    },
    /// A root or maximum search hit its iteration limit.
    #[error(
        "{what}: not converged after {iterations} iterations (bracket [{lo}, {hi}], target width \
         {target:.3e})"
    )]
    NotConverged {
        /// What was searched for.
        what: &'static str,
        /// Iterations used.
        iterations: usize,
        /// Lower end of the bracket.
        lo: f64,
        /// Upper end of the bracket.
        hi: f64,
        /// The target.
        target: f64,
    },
    /// A root or maximum search of the shared routines failed (not converged, not bracketed).
    #[error(transparent)]
    Search(#[from] NumericalError),
    /// The largest margin over the wavevector scan sat at its upper edge, so the scan range was
    /// too small to contain the maximum.
    #[error("maximum of the pair margin over Q at t = {t}, h = {h} lies at the scan edge Q = {q}")]
    MaximumAtScanEdge {
        /// Temperature T/Tc0.
        t: f64,
        /// Mismatch h/Tc0.
        h: f64,
        /// The last wavevector of the scan, Q/Tc0.
        q: f64,
    },
}

/// Lowest temperature t = T/Tc0 searched for instability lines.
pub const T_FLOOR: f64 = 1e-4;

/// The BCS ratio Tc0 / Lambda e^{1/lambda} = 2 e^gamma / pi = 1.1338659..., the one definition of
/// the crate (the nested Tc of the exact solver uses it too).
pub fn bcs_tc_prefactor() -> f64 {
    2.0 * EULER_GAMMA.exp() / PI
}

/// Delta0 / Tc0 = pi e^{-gamma} = 1.763877..., the T = 0 gap over the nested critical temperature
/// (Bardeen, Cooper, Schrieffer 1957): the inverse of half [`bcs_tc_prefactor`].
pub fn delta0_over_tc0() -> f64 {
    PI * (-EULER_GAMMA).exp()
}

/// Tc0 / Lambda = (2 e^gamma / pi) exp(-1/lambda) for the dimensionless coupling lambda = g nu > 0
/// (weak coupling, constant pair density of states). NaN for lambda <= 0 or not finite.
pub fn tc0_over_cutoff(lambda: f64) -> f64 {
    if !(lambda > 0.0 && lambda.is_finite()) {
        return f64::NAN;
    }
    bcs_tc_prefactor() * (-1.0 / lambda).exp()
}

/// t must be finite and > 0.
pub(crate) fn check_temperature(t: f64) -> Result<(), WeakError> {
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

/// `value` must be finite.
pub(crate) fn check_finite(name: &'static str, value: f64) -> Result<(), WeakError> {
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

/// 0 < t < 1: where the instability lines in h exist.
pub(crate) fn check_below_tc0(t: f64) -> Result<(), WeakError> {
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

#[cfg(test)]
mod tests;
