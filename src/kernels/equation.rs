//! The equation apart from the method: what the critical-temperature and ordered-state solvers
//! solve, g chi(q, T) = 1 for one channel, as a trait with two implementations, the exact shell
//! integral ([`ShellEquation`], wrapping `susceptibility` and `grand_potential` with the same
//! arithmetic) and the weak-coupling closed form ([`WeakEquation`], the digamma pair margin).
//! The methods (largest root in T, maxima over q, line searches) live in `crate::solvers::tc`
//! and take any [`PairEquation`]. Theory: see the crate docs (`crate::theory`).

use crate::error::NumericalError;
use crate::kernels::grand_potential::{gap_function, grand_potential};
use crate::kernels::susceptibility::susceptibility;
use crate::kernels::weak::{margin_q_curvature, pair_margin, WeakError};
use crate::kernels::{Accuracy, Shell};
use crate::model::{Channel, Model};

/// Scale of |q| (1/nm) for searches over the wavevector: 2 (|h| + 2T)/v, with v the smallest
/// Fermi velocity of the channel's pockets over a few directions and |h| the largest |h_k| on the
/// nesting line (v q/2 ~ h is where the modulated instability lies).
pub fn q_search_scale(model: &Model, ch: &Channel, t: f64) -> f64 {
    let (a, b) = (&model.pockets()[ch.a()], &model.pockets()[ch.b()]);
    let mut v = f64::INFINITY;
    for d in [[1.0, 0.0], [0.0, 1.0], [0.6, 0.8], [-0.8, 0.6]] {
        v = v
            .min(a.fermi_velocity_along(d))
            .min(b.fermi_velocity_along(d));
    }
    let h = ch
        .mismatch()
        .abs()
        .max(ch.mismatch_range()[0].abs())
        .max(ch.mismatch_range()[1].abs());
    2.0 * (h + 2.0 * t) / v
}

/// The nested Tc 1.134 Lambda exp(-1/lambda) in meV (BCS weak coupling), the reference scale of
/// the searches; None when lambda = 0.
pub fn nested_tc(ch: &Channel) -> Option<f64> {
    let l = ch.lambda();
    if l > 0.0 {
        Some(crate::kernels::weak::bcs_tc_prefactor() * ch.cutoff() * (-1.0 / l).exp())
    } else {
        None
    }
}

/// A value with its estimated absolute error.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Valued {
    /// The value.
    pub value: f64,
    /// Estimated absolute error of `value`.
    pub error: f64,
}

/// Why an equation could not be evaluated.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EquationError {
    /// A numerical failure of the exact integrals.
    #[error(transparent)]
    Numerical(#[from] NumericalError),
    /// A failure of the weak-coupling closed form.
    #[error("weak-coupling closed form: {0}")]
    Weak(#[from] WeakError),
}

impl EquationError {
    /// As a [`NumericalError`] (a weak-coupling failure becomes `WeakClosedForm` with its message).
    pub fn into_numerical(self) -> NumericalError {
        match self {
            EquationError::Numerical(e) => e,
            EquationError::Weak(w) => NumericalError::WeakClosedForm(w.to_string()),
        }
    }
}

impl From<EquationError> for WeakError {
    fn from(e: EquationError) -> Self {
        match e {
            EquationError::Weak(e) => e,
            EquationError::Numerical(e) => WeakError::Search(e),
        }
    }
}

/// [`PairEquation::excess`] at a fixed q as a function of T.
pub type ExcessInT<'s> = Box<dyn Fn(f64) -> Result<f64, EquationError> + 's>;

/// The linearised gap equation of one channel, g chi(q, T) = 1, in the implementation's units
/// (stated on each implementation). g chi > 1 means the normal state is unstable at (q, T).
pub trait PairEquation {
    /// g chi(q, T) (dimensionless) with its error estimate. q is a wavevector, T > 0.
    fn g_chi(&self, q: [f64; 2], t: f64) -> Result<Valued, EquationError>;

    /// A positive multiple of g chi(q, T) - 1: the function whose zeros the root searches solve
    /// (its sign is that of g chi - 1; its scale is the implementation's).
    fn excess(&self, q: [f64; 2], t: f64) -> Result<f64, EquationError>;

    /// [`PairEquation::excess`] at fixed q as a function of T, with any preparation that depends
    /// on q only (the shell geometry) done once.
    fn excess_in_t(&self, q: [f64; 2]) -> Result<ExcessInT<'_>, EquationError> {
        Ok(Box::new(move |t| self.excess(q, t)))
    }

    /// d^2 (g chi - 1)/dq^2 at q = 0 along the unit vector `dir`, in the units of
    /// [`PairEquation::excess`] per q^2 (the q^2 coefficient of 1/g - chi is its negative up to
    /// that positive scale): positive where a modulated instability sets in.
    fn q_curvature(&self, t: f64, dir: [f64; 2]) -> Result<Valued, EquationError>;

    /// The nested critical temperature Tc0 = 1.134 Lambda e^{-1/lambda} (units of T); None when
    /// the pair density of states vanishes.
    fn nested_tc(&self) -> Option<f64>;

    /// Scale of |q| for the searches over the wavevector at temperature T (units of q): where
    /// v q / 2 is of order |h| + 2T.
    fn q_scale(&self, t: f64) -> f64;

    /// Whether g chi depends only on |q|.
    fn isotropic(&self) -> bool;
}

/// The ordered state of the channel at (Delta, q, T): only the exact shell integral provides it
/// (the weak-coupling closed form of this crate stops at the Landau coefficients).
pub trait OrderedEquation: PairEquation {
    /// The gap function G(Delta) = 1/g - int W [f(E-) - f(E+)]/(2R) in 1/(meV nm^2); its zeros
    /// at Delta > 0 are the self-consistent gaps (dOmega/dDelta = 2 Delta G).
    fn gap_function(&self, delta: f64, q: [f64; 2], t: f64) -> Result<Valued, EquationError>;

    /// Omega(Delta) per spin channel relative to the normal state, meV/nm^2.
    fn grand_potential(&self, delta: f64, q: [f64; 2], t: f64) -> Result<Valued, EquationError>;
}

/// The exact shell integral of one channel: q in 1/nm (lab frame), T = k_B T in meV, at the
/// accuracy `acc`. `excess` is g chi - 1 itself.
#[derive(Debug, Clone, Copy)]
pub struct ShellEquation<'a> {
    /// The model the channel belongs to.
    pub model: &'a Model,
    /// The channel.
    pub ch: &'a Channel,
    /// Accuracy of every integral.
    pub acc: Accuracy,
}

impl<'a> ShellEquation<'a> {
    /// The channel's equation at accuracy `acc`.
    pub fn new(model: &'a Model, ch: &'a Channel, acc: Accuracy) -> Self {
        ShellEquation { model, ch, acc }
    }

    /// The same equation at another accuracy.
    pub fn at_accuracy(&self, acc: Accuracy) -> Self {
        ShellEquation { acc, ..*self }
    }

    /// Curvature d^2 chi / dq^2 at q = 0 along the unit vector `dir` (1/(meV nm^2) nm^2), by
    /// Richardson-extrapolated central differences (chi(q) = chi(-q)) with steps well below T/v,
    /// each chi to 1e-12 relative. Returns (curvature, error estimate).
    pub fn chi_q_curvature(&self, t: f64, dir: [f64; 2]) -> Result<(f64, f64), NumericalError> {
        let (model, ch) = (self.model, self.ch);
        let acc = Accuracy {
            rtol: 1e-12,
            ..self.acc
        };
        let v = {
            let (a, b) = (&model.pockets()[ch.a()], &model.pockets()[ch.b()]);
            a.fermi_velocity_along(dir).max(b.fermi_velocity_along(dir))
        };
        let step = 0.1 * t / v;
        let chi = |q: f64| -> Result<f64, NumericalError> {
            let shell = Shell::for_channel(model, ch, [q * dir[0], q * dir[1]])?;
            Ok(susceptibility(&shell, t, &acc)?.value)
        };
        let c0 = chi(0.0)?;
        let c1 = 2.0 * (chi(step)? - c0) / (step * step);
        let c2 = 2.0 * (chi(0.5 * step)? - c0) / (0.25 * step * step);
        let c4 = 2.0 * (chi(0.25 * step)? - c0) / (0.0625 * step * step);
        let r1 = (4.0 * c2 - c1) / 3.0;
        let r2 = (4.0 * c4 - c2) / 3.0;
        Ok((r2, (r2 - r1).abs()))
    }
}

impl PairEquation for ShellEquation<'_> {
    fn g_chi(&self, q: [f64; 2], t: f64) -> Result<Valued, EquationError> {
        let shell = Shell::for_channel(self.model, self.ch, q)?;
        let chi = susceptibility(&shell, t, &self.acc)?;
        Ok(Valued {
            value: self.ch.g() * chi.value,
            error: self.ch.g() * chi.error,
        })
    }

    fn excess(&self, q: [f64; 2], t: f64) -> Result<f64, EquationError> {
        Ok(self.g_chi(q, t)?.value - 1.0)
    }

    fn excess_in_t(&self, q: [f64; 2]) -> Result<ExcessInT<'_>, EquationError> {
        let shell = Shell::for_channel(self.model, self.ch, q)?;
        Ok(Box::new(move |t| {
            Ok(self.ch.g() * susceptibility(&shell, t, &self.acc)?.value - 1.0)
        }))
    }

    fn q_curvature(&self, t: f64, dir: [f64; 2]) -> Result<Valued, EquationError> {
        let (c, err) = self.chi_q_curvature(t, dir)?;
        Ok(Valued {
            value: self.ch.g() * c,
            error: self.ch.g() * err,
        })
    }

    fn nested_tc(&self) -> Option<f64> {
        nested_tc(self.ch)
    }

    fn q_scale(&self, t: f64) -> f64 {
        q_search_scale(self.model, self.ch, t)
    }

    fn isotropic(&self) -> bool {
        Shell::for_channel(self.model, self.ch, [0.0, 0.0]).is_ok_and(|s| s.isotropic)
    }
}

impl OrderedEquation for ShellEquation<'_> {
    fn gap_function(&self, delta: f64, q: [f64; 2], t: f64) -> Result<Valued, EquationError> {
        let shell = Shell::for_channel(self.model, self.ch, q)?;
        let g = gap_function(&shell, self.ch.g(), self.ch.mismatch(), delta, t, &self.acc)?;
        Ok(Valued {
            value: g.value,
            error: g.error,
        })
    }

    fn grand_potential(&self, delta: f64, q: [f64; 2], t: f64) -> Result<Valued, EquationError> {
        let shell = Shell::for_channel(self.model, self.ch, q)?;
        let o = grand_potential(&shell, self.ch.g(), self.ch.mismatch(), delta, t, &self.acc)?;
        Ok(Valued {
            value: o.value,
            error: o.error,
        })
    }
}

/// The weak-coupling closed form at mismatch h: every energy in units of Tc0 (t = T/Tc0,
/// q = [Q, 0] with Q = hbar v |q| / 2 over Tc0; only |q| matters), g chi = 1 + lambda m(t, h, Q)
/// with m the pair margin of [`crate::kernels::weak`]. `excess` is m itself (g chi - 1 over
/// lambda), so the roots and maxima in weak-coupling units are those of the margin.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WeakEquation {
    /// Mismatch h / Tc0 (its sign does not matter).
    pub h: f64,
    /// The dimensionless coupling lambda = g nu (scales g chi - 1 only).
    pub lambda: f64,
}

/// Absolute accuracy of the pair margin (see [`crate::kernels::weak::pair_margin`]).
const MARGIN_ERROR: f64 = 1e-12;

impl PairEquation for WeakEquation {
    fn g_chi(&self, q: [f64; 2], t: f64) -> Result<Valued, EquationError> {
        Ok(Valued {
            value: 1.0 + self.lambda * self.excess(q, t)?,
            error: self.lambda * MARGIN_ERROR,
        })
    }

    fn excess(&self, q: [f64; 2], t: f64) -> Result<f64, EquationError> {
        Ok(pair_margin(t, self.h, q[0].hypot(q[1]))?)
    }

    fn q_curvature(&self, t: f64, _dir: [f64; 2]) -> Result<Valued, EquationError> {
        crate::kernels::weak::check_temperature(t)?;
        Ok(Valued {
            value: margin_q_curvature(t, self.h),
            error: MARGIN_ERROR,
        })
    }

    fn nested_tc(&self) -> Option<f64> {
        (self.lambda > 0.0).then_some(1.0)
    }

    fn q_scale(&self, t: f64) -> f64 {
        self.h.abs() + 2.0 * t
    }

    fn isotropic(&self) -> bool {
        true
    }
}

/// A family of equations of one channel parameterised by its mismatch h (units of the family):
/// what the searches for instability lines in the (h, T) plane vary.
pub trait MismatchFamily {
    /// The equation at one mismatch.
    type Eq: PairEquation;

    /// The channel's equation at mismatch h.
    fn at_mismatch(&self, h: f64) -> Self::Eq;
}

/// The weak-coupling equations at every mismatch (h in units of Tc0) and one coupling lambda.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WeakFamily {
    /// The dimensionless coupling lambda = g nu.
    pub lambda: f64,
}

impl MismatchFamily for WeakFamily {
    type Eq = WeakEquation;

    fn at_mismatch(&self, h: f64) -> WeakEquation {
        WeakEquation {
            h,
            lambda: self.lambda,
        }
    }
}
