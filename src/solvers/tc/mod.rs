//! Critical temperatures from the linearised gap equation g chi(q, T) = 1 (see the crate docs
//! (`crate::theory`)):
//! Tc(q) as the largest root in T (scan from the top, then Brent), the uniform Tc = Tc(0), and
//! the modulated Tc = max over q of Tc(q) with its wavevector q* (global scan over |q| and, for
//! anisotropic channels, the direction; then Brent refinement). Temperatures are k_B T in meV.
//!
//! The methods written once for any [`crate::kernels::equation::PairEquation`]: [`root`] (the
//! largest root in T), [`qline`] (the maximum over |q| along a direction) and [`lines`] (the
//! instability lines and special points of a mismatch family). The exact shell integral's own
//! two-dimensional search over q: `qgrid`, `qsearch`, `parabolic`, `tracker` and `modulated`.
//! The weak-coupling closed form's Tc and lines: [`weak`].

use crate::error::NumericalError;
use crate::kernels::susceptibility::{susceptibility, susceptibility_checked};
use crate::kernels::{Accuracy, Shell};
use crate::model::{Channel, Model};
use std::cell::Cell;

pub use crate::kernels::equation::{nested_tc, q_search_scale};
use crate::kernels::equation::{EquationError, PairEquation, ShellEquation};
use crate::solvers::optimize::XTol;
use crate::solvers::roots::RootTol;
use root::{tc_at_q, TemperatureScan};

pub mod lines;
mod modulated;
mod parabolic;
mod qgrid;
pub mod qline;
mod qsearch;
pub mod root;
mod tracker;
pub mod weak;

use qgrid::{Start, SCAN_TOL};
use qsearch::QSearch;

/// Tolerances of the critical-temperature searches.
#[derive(Debug, Clone, Copy)]
pub struct TcSolver {
    /// Accuracy of each susceptibility.
    pub acc: Accuracy,
    /// Relative tolerance of the temperature root.
    pub t_rel: f64,
    /// Lowest temperature searched for the uniform Tc, as a fraction of the nested Tc
    /// 1.134 Lambda exp(-1/lambda).
    pub uniform_floor: f64,
    /// Lowest temperature searched for the modulated Tc (the angular structure of chi(q) sharpens
    /// as T falls, so this floor is higher).
    pub modulated_floor: f64,
    /// Points of the coarse |q| scan.
    pub q_points: usize,
    /// Directions of the coarse scan over q's direction for anisotropic channels (over 180 degrees).
    pub directions: usize,
}

impl Default for TcSolver {
    fn default() -> Self {
        TcSolver {
            acc: Accuracy::default(),
            t_rel: 1e-10,
            uniform_floor: 1e-4,
            modulated_floor: 5e-3,
            q_points: 16,
            directions: 6,
        }
    }
}

/// Whether a critical-temperature search found an instability.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TcStatus {
    /// An instability was found at `tc`.
    Unstable,
    /// No instability above the temperature floor (tc = 0).
    NoInstability,
}

/// Outcome of one critical-temperature search.
#[derive(Debug, Clone, serde::Serialize)]
pub struct TcReport {
    /// k_B Tc in meV (0 when there is no instability).
    pub tc: f64,
    /// Estimated absolute error of tc in meV (susceptibility error over the slope, plus the
    /// bracket).
    pub error: f64,
    /// Whether an instability was found.
    pub status: TcStatus,
    /// Why no instability was found, where none was.
    pub reason: Option<String>,
    /// Susceptibility evaluations used.
    pub evaluations: usize,
    /// Why the search stopped.
    pub stop: TcStop,
}

/// Why a critical-temperature search stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TcStop {
    /// A root of g chi = 1 was bracketed and refined to the tolerance.
    Converged,
    /// g chi < 1 at every temperature down to the floor: no instability above it.
    BelowFloor,
    /// The pair density of states vanishes (lambda = 0): no instability at any temperature.
    NoPairDensity,
}

/// The modulated instability: Tc at the best wavevector.
#[derive(Debug, Clone, serde::Serialize)]
pub struct ModulatedTc {
    /// The Tc at q* (meV).
    pub tc: TcReport,
    /// q* in 1/nm (lab frame); along +x for an isotropic channel; zero when the uniform state wins.
    pub q: [f64; 2],
    /// chi depends only on |q| (circular pockets, rotation-invariant form factor).
    pub isotropic: bool,
    /// Rough uncertainty of |q*| in 1/nm: the maximum in q is flat, so q* is known to fewer
    /// digits than Tc.
    pub q_error: f64,
}

impl TcSolver {
    /// g chi(q, T) (q in 1/nm, T in meV): [`ShellEquation`] at accuracy `acc`.
    pub fn g_chi(
        &self,
        model: &Model,
        ch: &Channel,
        q: [f64; 2],
        t: f64,
        acc: &Accuracy,
    ) -> Result<f64, NumericalError> {
        let eq = ShellEquation::new(model, ch, *acc);
        Ok(eq.g_chi(q, t).map_err(EquationError::into_numerical)?.value)
    }

    /// A temperature above every instability of the channel (g chi(0, T) < 1 there).
    fn top_temperature(
        &self,
        model: &Model,
        ch: &Channel,
        count: &Cell<usize>,
    ) -> Result<f64, NumericalError> {
        let mut t = nested_tc(ch)
            .map(|t| 1.5 * t)
            .unwrap_or(ch.cutoff())
            .min(ch.cutoff());
        for _ in 0..40 {
            count.set(count.get() + 1);
            if self.g_chi(model, ch, [0.0, 0.0], t, &self.acc.coarse())? < 0.9 {
                return Ok(t);
            }
            t *= 2.0;
        }
        Err(NumericalError::UnstableAtTop(format!(
            "channel {}: g chi stays above 1 up to T = {t:.3e} meV",
            ch.label()
        )))
    }

    /// Error of a root T of g chi(q, T) = 1 from the checked susceptibility and the slope.
    fn root_error(
        &self,
        model: &Model,
        ch: &Channel,
        q: [f64; 2],
        t: f64,
        count: &Cell<usize>,
    ) -> Result<(f64, f64), NumericalError> {
        let shell = Shell::for_channel(model, ch, q)?;
        let checked = susceptibility_checked(&shell, t, &self.acc)?;
        let dt = 1e-4 * t;
        let up = ch.g() * susceptibility(&shell, t + dt, &self.acc)?.value;
        let dn = ch.g() * susceptibility(&shell, t - dt, &self.acc)?.value;
        count.set(count.get() + 4);
        let slope = ((up - dn) / (2.0 * dt)).abs();
        let err = ch.g() * checked.error / slope.max(1e-300) + self.t_rel * t;
        Ok((err, slope))
    }

    /// Tc(q) for a fixed wavevector.
    pub fn at_q(
        &self,
        model: &Model,
        ch: &Channel,
        q: [f64; 2],
    ) -> Result<TcReport, NumericalError> {
        let count = Cell::new(0);
        let Some(t_ref) = nested_tc(ch) else {
            return Ok(no_instability(
                "the pair density of states vanishes (the form factor is zero on the nesting line)"
                    .into(),
                0,
                TcStop::NoPairDensity,
            ));
        };
        let t_top = self.top_temperature(model, ch, &count)?;
        let floor = self.uniform_floor * t_ref;
        let scan = TemperatureScan {
            grid: TemperatureScan::geometric(t_top, floor, 0.8),
            root: RootTol::relative(self.t_rel),
            max_tol: XTol::Floor(1e-6),
            in_log: true,
            from_best: false,
        };
        let what = format!("Tc of channel {} (meV)", ch.label());
        let eq = ShellEquation::new(model, ch, self.acc);
        let found = tc_at_q(&eq, q, &what, &scan).map_err(EquationError::into_numerical)?;
        count.set(count.get() + found.evaluations);
        match found.t {
            Some(tc) => {
                let (error, _) = self.root_error(model, ch, q, tc, &count)?;
                if error > 1e-5 * tc {
                    return Err(NumericalError::NotConverged {
                        what: format!("Tc of channel {}", ch.label()),
                        iterations: count.get(),
                        last_change: error,
                        target: 1e-5 * tc,
                    });
                }
                Ok(TcReport {
                    tc,
                    error,
                    status: TcStatus::Unstable,
                    reason: None,
                    evaluations: count.get(),
                    stop: TcStop::Converged,
                })
            }
            None => Ok(no_instability(
                format!(
                    "g chi(q, T) < 1 for every T above the floor {:.3e} meV",
                    floor
                ),
                count.get(),
                TcStop::BelowFloor,
            )),
        }
    }

    /// The uniform Tc = Tc(q = 0).
    pub fn uniform(&self, model: &Model, ch: &Channel) -> Result<TcReport, NumericalError> {
        self.at_q(model, ch, [0.0, 0.0])
    }

    /// The search over q of the channel, counting evaluations in `count`.
    fn q_search<'a>(
        &'a self,
        model: &'a Model,
        ch: &'a Channel,
        iso: bool,
        count: &'a Cell<usize>,
    ) -> QSearch<'a> {
        QSearch {
            solver: self,
            model,
            ch,
            iso,
            count,
        }
    }

    /// Scale of |q| for the search: see [`q_search_scale`].
    fn q_scale(&self, model: &Model, ch: &Channel, t: f64) -> f64 {
        q_search_scale(model, ch, t)
    }

    /// max over q of g chi(q, T): global coarse scan, then refinement. Returns (q, g chi).
    pub fn best_q(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
        acc: &Accuracy,
        count: &Cell<usize>,
    ) -> Result<([f64; 2], f64), NumericalError> {
        let iso = Shell::for_channel(model, ch, [0.0, 0.0])?.isotropic;
        let grid = self.q_search(model, ch, iso, count).grid_scan(t, acc)?;
        let m = self
            .q_search(model, ch, iso, count)
            .refine_grid(t, acc, &grid, None)?;
        Ok((m.q, m.value))
    }

    /// Global maximum over q of g chi(q, T) at accuracy `self.acc`: coarse scan, then local
    /// refinement. Returns (q*, g chi(q*, T)); q* = 0 when the uniform susceptibility is largest.
    pub fn max_over_q(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
    ) -> Result<([f64; 2], f64), NumericalError> {
        let count = Cell::new(0);
        let iso = Shell::for_channel(model, ch, [0.0, 0.0])?.isotropic;
        let coarse = self.acc.coarse();
        let grid = self
            .q_search(model, ch, iso, &count)
            .grid_scan(t, &coarse)?;
        let c =
            self.q_search(model, ch, iso, &count)
                .refine_grid(t, &coarse, &grid, Some(SCAN_TOL))?;
        let zero = [0.0, 0.0];
        if c.q == zero {
            return Ok((zero, self.g_chi(model, ch, zero, t, &self.acc)?));
        }
        let qm = c.q[0].hypot(c.q[1]);
        let start = Start::at(c.q, 0.02 * qm, 0.02);
        let f = self
            .q_search(model, ch, iso, &count)
            .local_max(t, &self.acc, start)?;
        if f.q == zero {
            return Ok((zero, self.g_chi(model, ch, zero, t, &self.acc)?));
        }
        Ok((f.q, f.value))
    }

    /// Curvature d^2 chi / dq^2 at q = 0 along the unit vector `dir` (1/(meV nm^2) nm^2), by
    /// Richardson-extrapolated central differences (see [`ShellEquation::chi_q_curvature`]).
    /// Returns (curvature, error estimate).
    pub fn chi_q_curvature(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
        dir: [f64; 2],
    ) -> Result<(f64, f64), NumericalError> {
        ShellEquation::new(model, ch, self.acc).chi_q_curvature(t, dir)
    }
}

/// The report of a search that found no instability, with its reason.
fn no_instability(reason: String, evaluations: usize, stop: TcStop) -> TcReport {
    TcReport {
        stop,
        tc: 0.0,
        error: 0.0,
        status: TcStatus::NoInstability,
        reason: Some(reason),
        evaluations,
    }
}
