//! The point of the modulated instability line at one temperature, reached by varying one
//! configuration parameter (NAME.key) with the couplings pinned: the model along that parameter,
//! the bracketing search and its refinement, and the line point's maxima of chi. First step of
//! the pattern search; the ranking in the parent module works on its result.

use super::{LinePoint, PatternSolver};
use crate::config::{ConfigSource, Override};
use crate::error::{InputError, NestorError, NumericalError};
use crate::kernels::Shell;
use crate::model::{Model, Param};
use crate::solvers::roots::brent_root;
use crate::solvers::tc::nested_tc;

/// The model `base` with `param` set to `value`, couplings pinned at `base` (unless `param` is
/// the channel's coupling itself).
pub fn model_with(base: &Model, param: Param, value: f64) -> Result<Model, InputError> {
    base.with(&[(param, value)])
}

/// Resolves `path` (NAME.key, NAME.key.x) against the model built from `src`: the typed
/// parameter and its value there (the start of the line search).
pub fn path_value(
    src: &ConfigSource,
    base: &Model,
    path: &str,
) -> Result<(Param, f64), InputError> {
    let param = Override::parse(&format!("{path}=0"))?.resolve(&src.origin, base)?;
    Ok((param, base.value(param)))
}

/// Steps outwards from `v0` on both sides (`step`, up to `max_steps` steps) until the sign of
/// `margin` changes: the bracket, or None. A value where the model cannot be built (an input
/// error: no line beyond it on that side) ends that side; a numerical failure is returned.
fn bracket_outwards<F>(
    margin: &F,
    v0: f64,
    step: f64,
    max_steps: usize,
) -> Result<Option<(f64, f64)>, NestorError>
where
    F: Fn(f64) -> Result<f64, NestorError>,
{
    let f0 = margin(v0)?;
    if f0 == 0.0 {
        return Ok(Some((v0, v0)));
    }
    // The last value and margin on each side (None once a side cannot be built).
    let mut last: [Option<(f64, f64)>; 2] = [Some((v0, f0)), Some((v0, f0))];
    for k in 1..=max_steps {
        for (i, side) in [1.0, -1.0].into_iter().enumerate() {
            let Some((prev, fp)) = last[i] else {
                continue;
            };
            let v = v0 + side * step * k as f64;
            let fv = match margin(v) {
                Ok(fv) => fv,
                Err(NestorError::Input(_)) => {
                    last[i] = None;
                    continue;
                }
                Err(e) => return Err(e),
            };
            if (fp > 0.0) != (fv > 0.0) {
                return Ok(Some((prev, v)));
            }
            last[i] = Some((v, fv));
        }
    }
    Ok(None)
}

impl PatternSolver {
    /// The point on the modulated instability line at temperature t (meV) reached by varying
    /// `path` from its value in `base`: the nearest value where max_q g chi(q, t) = 1, found by
    /// stepping outwards from the base value on both sides until the sign changes and refining
    /// with Brent's method. Returns the line point and the model there.
    pub fn line_point(
        &self,
        base: &ConfigSource,
        channel: usize,
        path: &str,
        t: f64,
    ) -> Result<(LinePoint, Model), NestorError> {
        let model0 = base.build(None)?;
        let ch0 = model0.channels().get(channel).ok_or_else(|| {
            NumericalError::BadArgument(format!("channel index {channel} out of range"))
        })?;
        let (param, v0) = path_value(base, &model0, path)?;
        let energy_like = path.ends_with(".offset");
        let tc_scale = nested_tc(ch0).unwrap_or(t).max(t);
        let step = if energy_like {
            0.5 * tc_scale
        } else {
            0.02 * v0.abs().max(1e-2)
        };
        let at = |v: f64| {
            model_with(&model0, param, v)
                .map_err(|e| InputError::new(format!("{}: {e}", base.origin)))
        };
        let margin = |v: f64| -> Result<f64, NestorError> {
            let m = at(v)?;
            let (_, gchi) = self.tc.max_over_q(&m, &m.channels()[channel], t)?;
            Ok(gchi - 1.0)
        };
        const MAX_STEPS: usize = 60;
        let (lo, hi) = bracket_outwards(&margin, v0, step, MAX_STEPS)?.ok_or_else(|| {
            NumericalError::NotBracketed {
                what: format!(
                    "modulated instability line at T = {t:.5} meV along {path} (max_q g chi = 1)"
                ),
                lo: v0 - step * MAX_STEPS as f64,
                hi: v0 + step * MAX_STEPS as f64,
            }
        })?;
        let value = if lo == hi {
            lo
        } else {
            let what = "modulated instability line";
            let r = brent_root(what, lo, hi, self.value_rel, |v| match margin(v) {
                Ok(x) => Ok(x),
                Err(NestorError::Numerical(n)) => Err(n),
                Err(NestorError::Input(reason)) => Err(NumericalError::Stopped {
                    what: what.to_string(),
                    at: v,
                    reason,
                }),
            });
            match r {
                Ok(r) => r.x,
                // An input error inside the bracket stays an input error.
                Err(NumericalError::Stopped { reason, .. }) => return Err(reason.into()),
                Err(e) => return Err(e.into()),
            }
        };
        let model = at(value)?;
        let (q, _) = self.tc.max_over_q(&model, &model.channels()[channel], t)?;
        let line = self.line_point_at(&model, channel, path, value, v0, t, q)?;
        Ok((line, model))
    }

    /// The line point of `model` (already on the line at temperature t, with the most unstable
    /// wavevector q): the channel's mismatch and the symmetry-equivalent maxima of chi.
    #[allow(clippy::too_many_arguments)]
    pub fn line_point_at(
        &self,
        model: &Model,
        channel: usize,
        path: &str,
        value: f64,
        base_value: f64,
        t: f64,
        q: [f64; 2],
    ) -> Result<LinePoint, NumericalError> {
        let ch = &model.channels()[channel];
        let q_star = q[0].hypot(q[1]);
        let isotropic = Shell::for_channel(model, ch, [0.0, 0.0])?.isotropic;
        let maxima = if q_star == 0.0 {
            vec![]
        } else if isotropic {
            vec![q]
        } else {
            self.maxima(model, ch, q, t)?
        };
        Ok(LinePoint {
            path: path.to_string(),
            value,
            base_value,
            t,
            mismatch: ch.mismatch(),
            q_star,
            maxima,
            isotropic,
        })
    }
}
