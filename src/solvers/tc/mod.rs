//! Critical temperatures from the linearised gap equation g chi(q, T) = 1 (physics.md section 3):
//! Tc(q) as the largest root in T (scan from the top, then Brent), the uniform Tc = Tc(0), and
//! the modulated Tc = max over q of Tc(q) with its wavevector q* (global scan over |q| and, for
//! anisotropic channels, the direction; then Brent refinement). Temperatures are k_B T in meV.

use crate::error::NumericalError;
use crate::kernels::susceptibility::{susceptibility, susceptibility_checked};
use crate::kernels::{Accuracy, Shell};
use crate::model::{Channel, Model};
use crate::solvers::optimize::brent_max;
use crate::solvers::roots::brent_root;
use std::cell::Cell;

mod modulated;
mod parabolic;
mod qgrid;
mod qsearch;
pub mod root;
mod tracker;
pub mod weak;

use qgrid::{Start, SCAN_TOL};

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
    pub status: TcStatus,
    /// Why no instability was found, where none was.
    pub reason: Option<String>,
    /// Susceptibility evaluations used.
    pub evaluations: usize,
}

/// The modulated instability: Tc at the best wavevector.
#[derive(Debug, Clone, serde::Serialize)]
pub struct ModulatedTc {
    pub tc: TcReport,
    /// q* in 1/nm (lab frame); along +x for an isotropic channel; zero when the uniform state wins.
    pub q: [f64; 2],
    /// chi depends only on |q| (circular pockets, rotation-invariant form factor).
    pub isotropic: bool,
    /// Rough uncertainty of |q*| in 1/nm: the maximum in q is flat, so q* is known to fewer
    /// digits than Tc.
    pub q_error: f64,
}

/// Scale of |q| (1/nm) for searches over the wavevector: 2 (|h| + 2T)/v, with v the smallest
/// Fermi velocity of the channel's pockets over a few directions and |h| the largest |h_k| on the
/// nesting line (v q/2 ~ h is where the modulated instability lies).
pub fn q_search_scale(model: &Model, ch: &Channel, t: f64) -> f64 {
    let (a, b) = (&model.pockets[ch.a], &model.pockets[ch.b]);
    let mut v = f64::INFINITY;
    for d in [[1.0, 0.0], [0.0, 1.0], [0.6, 0.8], [-0.8, 0.6]] {
        v = v
            .min(a.fermi_velocity_along(d))
            .min(b.fermi_velocity_along(d));
    }
    let h = ch
        .mismatch
        .abs()
        .max(ch.mismatch_range[0].abs())
        .max(ch.mismatch_range[1].abs());
    2.0 * (h + 2.0 * t) / v
}

/// The nested Tc 1.134 Lambda exp(-1/lambda) in meV (BCS weak coupling), the reference scale of
/// the searches; None when lambda = 0.
pub fn nested_tc(ch: &Channel) -> Option<f64> {
    let l = ch.lambda();
    if l > 0.0 {
        Some(crate::kernels::weak::bcs_tc_prefactor() * ch.cutoff * (-1.0 / l).exp())
    } else {
        None
    }
}

impl TcSolver {
    /// g chi(q, T).
    pub fn g_chi(
        &self,
        model: &Model,
        ch: &Channel,
        q: [f64; 2],
        t: f64,
        acc: &Accuracy,
    ) -> Result<f64, NumericalError> {
        let shell = Shell::for_channel(model, ch, q)?;
        Ok(ch.g * susceptibility(&shell, t, acc)?.value)
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
            .unwrap_or(ch.cutoff)
            .min(ch.cutoff);
        for _ in 0..40 {
            count.set(count.get() + 1);
            if self.g_chi(model, ch, [0.0, 0.0], t, &self.acc.coarse())? < 0.9 {
                return Ok(t);
            }
            t *= 2.0;
        }
        Err(NumericalError::Invalid(format!(
            "channel {}: g chi stays above 1 up to T = {t:.3e} meV",
            ch.label
        )))
    }

    /// Largest root in T of `f` (f < 0 at `t_top`), scanning down to `t_floor`, then Brent.
    /// Where no sign change is found the maximum over T is located before concluding.
    fn largest_root<F>(
        &self,
        what: &str,
        t_top: f64,
        t_floor: f64,
        x_rel: f64,
        mut f: F,
    ) -> Result<Option<(f64, f64, f64)>, NumericalError>
    where
        F: FnMut(f64) -> Result<f64, NumericalError>,
    {
        let ratio = 0.8;
        let mut prev = (t_top, f(t_top)?);
        if prev.1 >= 0.0 {
            return Err(NumericalError::Invalid(format!(
                "{what}: unstable at the top temperature {t_top:.4e} meV"
            )));
        }
        let mut best = prev;
        let mut grid = vec![prev];
        let mut t = t_top;
        while t > t_floor {
            t = (t * ratio).max(t_floor);
            let v = f(t)?;
            grid.push((t, v));
            if v >= 0.0 {
                let r = brent_root(what, t, prev.0, x_rel, &mut f)?;
                return Ok(Some((r.x, t, prev.0)));
            }
            if v > best.1 {
                best = (t, v);
            }
            prev = (t, v);
            if t <= t_floor {
                break;
            }
        }
        // No sign change on the grid: the curve may poke above zero between two grid points
        // (the uniform line bends back near its nose). Maximise over ln T around the best point.
        let i = grid.iter().position(|p| p.0 == best.0).unwrap_or(0);
        if i == 0 || i + 1 >= grid.len() {
            return Ok(None);
        }
        let (lo, hi) = (grid[i + 1].0.ln(), grid[i - 1].0.ln());
        let m = brent_max(what, lo, hi, 1e-6, |x| f(x.exp()))?;
        if m.value >= 0.0 {
            let tm = m.x.exp();
            let r = brent_root(what, tm, grid[i - 1].0, x_rel, &mut f)?;
            return Ok(Some((r.x, tm, grid[i - 1].0)));
        }
        Ok(None)
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
        let up = ch.g * susceptibility(&shell, t + dt, &self.acc)?.value;
        let dn = ch.g * susceptibility(&shell, t - dt, &self.acc)?.value;
        count.set(count.get() + 4);
        let slope = ((up - dn) / (2.0 * dt)).abs();
        let err = ch.g * checked.error / slope.max(1e-300) + self.t_rel * t;
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
            ));
        };
        let t_top = self.top_temperature(model, ch, &count)?;
        let floor = self.uniform_floor * t_ref;
        let shell = Shell::for_channel(model, ch, q)?;
        let found = self.largest_root(
            &format!("Tc of channel {}", ch.label),
            t_top,
            floor,
            self.t_rel,
            |t| {
                count.set(count.get() + 1);
                Ok(ch.g * susceptibility(&shell, t, &self.acc)?.value - 1.0)
            },
        )?;
        match found {
            Some((tc, _, _)) => {
                let (error, _) = self.root_error(model, ch, q, tc, &count)?;
                if error > 1e-5 * tc {
                    return Err(NumericalError::NotConverged {
                        what: format!("Tc of channel {}", ch.label),
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
                })
            }
            None => Ok(no_instability(
                format!(
                    "g chi(q, T) < 1 for every T above the floor {:.3e} meV",
                    floor
                ),
                count.get(),
            )),
        }
    }

    /// The uniform Tc = Tc(q = 0).
    pub fn uniform(&self, model: &Model, ch: &Channel) -> Result<TcReport, NumericalError> {
        self.at_q(model, ch, [0.0, 0.0])
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
        let grid = self.grid_scan(model, ch, t, acc, iso, count)?;
        let m = self.refine_grid(model, ch, t, acc, iso, &grid, None, count)?;
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
        let grid = self.grid_scan(model, ch, t, &coarse, iso, &count)?;
        let c = self.refine_grid(model, ch, t, &coarse, iso, &grid, Some(SCAN_TOL), &count)?;
        let zero = [0.0, 0.0];
        if c.q == zero {
            return Ok((zero, self.g_chi(model, ch, zero, t, &self.acc)?));
        }
        let qm = c.q[0].hypot(c.q[1]);
        let f = self.local_max(
            model,
            ch,
            t,
            &self.acc,
            iso,
            Start::at(c.q, 0.02 * qm, 0.02),
            &count,
        )?;
        if f.q == zero {
            return Ok((zero, self.g_chi(model, ch, zero, t, &self.acc)?));
        }
        Ok((f.q, f.value))
    }

    /// Curvature d^2 chi / dq^2 at q = 0 along the unit vector `dir` (1/(meV nm^2) nm^2), by
    /// Richardson-extrapolated central differences (chi(q) = chi(-q)) with steps well below T/v.
    /// Returns (curvature, error estimate).
    pub fn chi_q_curvature(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
        dir: [f64; 2],
    ) -> Result<(f64, f64), NumericalError> {
        let acc = Accuracy {
            rtol: 1e-12,
            ..self.acc
        };
        let v = {
            let (a, b) = (&model.pockets[ch.a], &model.pockets[ch.b]);
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

fn no_instability(reason: String, evaluations: usize) -> TcReport {
    TcReport {
        tc: 0.0,
        error: 0.0,
        status: TcStatus::NoInstability,
        reason: Some(reason),
        evaluations,
    }
}
