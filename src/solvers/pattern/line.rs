//! The point of the modulated instability line at one temperature, reached by varying one
//! configuration parameter (NAME.key) with the couplings pinned: the model along that parameter,
//! the bracketing search and its refinement, and the line point's maxima of chi. First step of
//! the pattern search; the ranking in the parent module works on its result.

use super::{LinePoint, PatternSolver};
use crate::config::{ConfigSource, Override, PinnedCouplings};
use crate::error::{NestorError, NumericalError};
use crate::kernels::Shell;
use crate::model::Model;
use crate::solvers::roots::brent_root;
use crate::solvers::tc::nested_tc;

/// The model with `path` set to `value`, couplings pinned.
pub fn model_with(
    base: &ConfigSource,
    pinned: &PinnedCouplings,
    path: &str,
    value: f64,
) -> Result<Model, NestorError> {
    let o = Override::parse(&format!("{path}={value}"))?;
    let unpinned: Vec<String> = if o.key == "lambda" || o.key == "g" {
        vec![o.target.clone()]
    } else {
        vec![]
    };
    Ok(base
        .with_overrides(&[o])?
        .build_with(Some(pinned), &unpinned)?)
}

/// The value of `path` in a configuration (for the start of the line search).
pub fn path_value(base: &ConfigSource, path: &str) -> Result<f64, NestorError> {
    let o = Override::parse(&format!("{path}=0"))?;
    base.value_of(&o).map_err(NestorError::from)
}

impl PatternSolver {
    // Over 80 lines: the outward bracketing and the Brent refinement share the margin closure
    // and its mapping of input errors, and are kept in one piece with it.
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
        let pinned = model0.pinned_couplings();
        let ch0 = model0.channels.get(channel).ok_or_else(|| {
            NumericalError::Invalid(format!("channel index {channel} out of range"))
        })?;
        let v0 = path_value(base, path)?;
        let energy_like = path.ends_with(".offset");
        let tc_scale = nested_tc(ch0).unwrap_or(t).max(t);
        let step = if energy_like {
            0.5 * tc_scale
        } else {
            0.02 * v0.abs().max(1e-2)
        };
        let margin = |v: f64| -> Result<f64, NestorError> {
            let m = model_with(base, &pinned, path, v)?;
            let (_, gchi) = self.tc.max_over_q(&m, &m.channels[channel], t)?;
            Ok(gchi - 1.0)
        };
        let f0 = margin(v0)?;
        let mut bracket = None;
        if f0 == 0.0 {
            bracket = Some((v0, v0));
        }
        const MAX_STEPS: usize = 60;
        // The last value and margin on each side (None once a side cannot be built).
        let mut last: [Option<(f64, f64)>; 2] = [Some((v0, f0)), Some((v0, f0))];
        'outer: for k in 1..=MAX_STEPS {
            if bracket.is_some() {
                break;
            }
            for (i, side) in [1.0, -1.0].into_iter().enumerate() {
                let Some((prev, fp)) = last[i] else {
                    continue;
                };
                let v = v0 + side * step * k as f64;
                // A value where the model cannot be built ends that side of the search.
                let Ok(fv) = margin(v) else {
                    last[i] = None;
                    continue;
                };
                if (fp > 0.0) != (fv > 0.0) {
                    bracket = Some((prev, v));
                    break 'outer;
                }
                last[i] = Some((v, fv));
            }
        }
        let (lo, hi) = bracket.ok_or_else(|| NumericalError::NotBracketed {
            what: format!(
                "modulated instability line at T = {t:.5} meV along {path} (max_q g chi = 1)"
            ),
            lo: v0 - step * MAX_STEPS as f64,
            hi: v0 + step * MAX_STEPS as f64,
        })?;
        let value =
            if lo == hi {
                lo
            } else {
                let mut err = None;
                let r = brent_root("modulated instability line", lo, hi, self.value_rel, |v| {
                    match margin(v) {
                        Ok(x) => Ok(x),
                        Err(NestorError::Numerical(n)) => Err(n),
                        Err(NestorError::Input(i)) => {
                            err = Some(i.clone());
                            Err(NumericalError::Invalid(i.0))
                        }
                    }
                });
                if let Some(i) = err {
                    return Err(i.into());
                }
                r?.x
            };
        let model = model_with(base, &pinned, path, value)?;
        let (q, _) = self.tc.max_over_q(&model, &model.channels[channel], t)?;
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
        let ch = &model.channels[channel];
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
            mismatch: ch.mismatch,
            q_star,
            maxima,
            isotropic,
        })
    }
}
