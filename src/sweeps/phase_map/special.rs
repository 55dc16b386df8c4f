//! The special points on the uniform instability line of one branch of a phase diagram (the
//! last step of [`super::phase_diagram`]): the tricritical point (quartic coefficient beta = 0)
//! and the Lifshitz point (q-curvature of chi at q = 0 changes sign), each bracketed between
//! columns (or a column and the nose of the uniform line) and refined in the parameter by
//! Brent's method. See [`crate::theory::landau`].

use super::lines::ColumnResult;
use super::{Column, SpecialPoint};
use crate::error::{NestorError, NumericalError};
use crate::kernels::grand_potential::quartic_loop;
use crate::kernels::Shell;
use crate::solvers::roots::brent_root;
use crate::solvers::{TcSolver, TcStatus};
use crate::sweeps::lifshitz::{lowest_curvature, uniform_line_at};
use crate::sweeps::Sweep;
use std::cell::RefCell;

/// Which special point is searched.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Special {
    /// beta = 0 on the uniform line.
    Tricritical,
    /// Lowest q-curvature of alpha = 0 on the uniform line.
    Lifshitz,
}

impl Special {
    fn what(self) -> &'static str {
        match self {
            Special::Tricritical => "tricritical point",
            Special::Lifshitz => "Lifshitz point",
        }
    }

    /// The quantity whose sign change marks the point, at a column on the uniform line.
    fn pick(self, c: &Column) -> Option<f64> {
        match self {
            Special::Tricritical => c.beta_uniform,
            Special::Lifshitz => c.curvature_uniform,
        }
    }
}

/// What the special-point searches share; failures are recorded, so that "none in range" is
/// not reported where a search failed.
pub(super) struct SpecialSearch<'a> {
    pub sweep: &'a Sweep<'a>,
    pub tc: &'a TcSolver,
    pub channel: usize,
    pub failures: RefCell<Vec<String>>,
}

impl SpecialSearch<'_> {
    fn fail(&self, what: &str, e: String) {
        self.failures.borrow_mut().push(format!("{what}: {e}"));
    }

    /// Whether the uniform line exists at x; a failure to decide is an error, not a "no".
    fn has_uniform(&self, x: f64) -> Result<bool, NestorError> {
        let m = self.sweep.model_along(x)?;
        let u = self.tc.uniform(&m, &m.channels()[self.channel])?;
        Ok(u.status == TcStatus::Unstable)
    }

    /// The bracket between the column `inside` on the uniform line and the nose of the line
    /// towards the column `outside` (bisection). When deciding whether the line exists at a
    /// bisection point fails, the bracket found so far (still on the line) is returned with the
    /// failure, to be recorded if no point is found in it; a failure once the nose is located to
    /// 1e-4 of the column spacing is not one (the bracket is then as good as resolved).
    fn nose_bracket(&self, start: f64, outside: f64) -> ((f64, f64), Option<String>) {
        let spacing = (outside - start).abs();
        let (mut inside, mut outside) = (start, outside);
        let mut failure = None;
        for _ in 0..30 {
            let mid = 0.5 * (inside + outside);
            match self.has_uniform(mid) {
                Ok(true) => inside = mid,
                Ok(false) => outside = mid,
                Err(_) if (outside - inside).abs() <= 1e-4 * spacing => break,
                Err(e) => {
                    failure = Some(format!(
                        "the end of the uniform line between {inside} and {outside} was not resolved: {e}"
                    ));
                    break;
                }
            }
        }
        ((start.min(inside), start.max(inside)), failure)
    }

    /// The quantity of `kind` at parameter x on the uniform line.
    fn value(&self, kind: Special, x: f64) -> Result<f64, NumericalError> {
        let (m, t) = uniform_line_at(self.sweep, self.channel, self.tc, x, kind.what())?;
        let ch = &m.channels()[self.channel];
        match kind {
            Special::Tricritical => {
                Ok(quartic_loop(&Shell::for_channel(&m, ch, [0.0, 0.0])?, t, &self.tc.acc)?.value)
            }
            Special::Lifshitz => lowest_curvature(self.tc, &m, ch, t),
        }
    }

    /// The point of `kind` at the root x: its temperature and whether it lies on the phase
    /// boundary (the tricritical point: not preempted by the modulated state; the Lifshitz
    /// point: the uniform line is second order there).
    fn locate(&self, kind: Special, x: f64) -> Result<SpecialPoint, NestorError> {
        let m = self.sweep.model_along(x)?;
        let ch = &m.channels()[self.channel];
        let u = self.tc.uniform(&m, ch)?;
        let md = self.tc.modulated(&m, ch, &u)?;
        let on_boundary = match kind {
            Special::Tricritical => !(md.q != [0.0, 0.0] && md.tc.tc > u.tc * (1.0 + 1e-6)),
            Special::Lifshitz => {
                let sh = Shell::for_channel(&m, ch, [0.0, 0.0])?;
                quartic_loop(&sh, u.tc, &self.tc.acc)?.value > 0.0
            }
        };
        Ok(SpecialPoint {
            value: x,
            t: u.tc,
            on_boundary,
        })
    }

    /// The first point of `kind` along the columns of one branch (None: none found, or the
    /// search failed, which is recorded).
    pub(super) fn refine(&self, columns: &[ColumnResult], kind: Special) -> Option<SpecialPoint> {
        let what = kind.what();
        for w in columns.windows(2) {
            let (Ok(a), Ok(b)) = (&w[0], &w[1]) else {
                continue;
            };
            let ((lo, hi), nose_failure) = match (kind.pick(a), kind.pick(b)) {
                (Some(fa), Some(fb)) if fa.signum() != fb.signum() => ((a.value, b.value), None),
                // The uniform line ends (its nose) between the two columns: the point may lie
                // between the last column and the nose.
                (Some(_), None) => self.nose_bracket(a.value, b.value),
                (None, Some(_)) => self.nose_bracket(b.value, a.value),
                _ => continue,
            };
            let x = match brent_root(what, lo, hi, 1e-8, |x| self.value(kind, x)) {
                Ok(r) => r.x,
                // No sign change between a column and the nose of the uniform line: no point,
                // unless the nose itself was not resolved (then the search is incomplete).
                Err(NumericalError::NotBracketed { .. }) => {
                    if let Some(f) = nose_failure {
                        self.fail(what, f);
                    }
                    continue;
                }
                Err(e) => {
                    self.fail(what, e.to_string());
                    continue;
                }
            };
            return match self.locate(kind, x) {
                Ok(p) => Some(p),
                Err(e) => {
                    self.fail(what, e.to_string());
                    None
                }
            };
        }
        None
    }
}
