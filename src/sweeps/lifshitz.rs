//! Lifshitz points along a 1D sweep (after the Tc solvers, before the reports): where the q^2
//! coefficient of alpha(q) = 1/g - chi(q, T) at q = 0, taken on the uniform instability line,
//! changes sign, so that q* leaves zero continuously ([`crate::theory::landau`]). Every sign
//! change between neighbouring samples is refined by Brent's method in the swept parameter; a
//! curve may hold several points (a sweep through perfect nesting has one on each side).

use super::tc_scan::ScanPoint;
use super::{par_map, Grid, Sweep};
use crate::config::ConfigSource;
use crate::error::{InputError, NestorError, NumericalError};
use crate::kernels::Shell;
use crate::model::{Channel, Model};
use crate::solvers::roots::brent_root;
use crate::solvers::{TcSolver, TcStatus};

/// What the searches of this module are called in their errors.
const WHAT: &str = "Lifshitz point";

/// Relative tolerance in the swept parameter of the Brent refinement.
const X_REL: f64 = 1e-8;

/// The q^2 coefficient of alpha(q) = 1/g - chi(q, T) at q = 0 and temperature `t` (meV), in
/// meV^-1 nm^-2 nm^2 (per spin channel): along x for an isotropic channel, otherwise the lowest
/// eigenvalue of the 2x2 Hessian (from the curvatures along x, y and the diagonal). Negative:
/// the uniform state is unstable towards small q.
pub fn lowest_curvature(
    tc: &TcSolver,
    m: &Model,
    ch: &Channel,
    t: f64,
) -> Result<f64, NumericalError> {
    let iso = Shell::for_channel(m, ch, [0.0, 0.0])?.isotropic;
    let (cx, _) = tc.chi_q_curvature(m, ch, t, [1.0, 0.0])?;
    if iso {
        return Ok(-cx);
    }
    let (cy, _) = tc.chi_q_curvature(m, ch, t, [0.0, 1.0])?;
    let r = std::f64::consts::FRAC_1_SQRT_2;
    let (cd, _) = tc.chi_q_curvature(m, ch, t, [r, r])?;
    // Hessian of alpha = 1/g - chi: -[[cx, cxy], [cxy, cy]] with cd = (cx + cy)/2 + cxy.
    let cxy = cd - 0.5 * (cx + cy);
    let (a, b, c) = (-cx, -cxy, -cy);
    let mean = 0.5 * (a + c);
    let disc = (0.25 * (a - c) * (a - c) + b * b).sqrt();
    Ok(mean - disc)
}

/// One Lifshitz point of a curve.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct LifshitzPoint {
    /// The swept parameter there, in the units of its configuration key.
    pub value: f64,
    /// The uniform critical temperature there (k_B T, meV).
    pub t: f64,
}

/// The Lifshitz points of one channel along a curve, in increasing order of the parameter, and
/// the refinements that failed (so that a missing point is not read as "none").
#[derive(Debug, Clone, Default, PartialEq)]
pub struct LifshitzSearch {
    /// The points found.
    pub points: Vec<LifshitzPoint>,
    /// One message per failed refinement.
    pub failures: Vec<String>,
}

/// The model at parameter `x` of the first axis of `sweep` and the uniform Tc (meV) of channel
/// `channel` there; an error naming `what` (the search) when the uniform line does not exist at
/// `x` or the model cannot be built there.
pub fn uniform_line_at(
    sweep: &Sweep,
    channel: usize,
    tc: &TcSolver,
    x: f64,
    what: &str,
) -> Result<(Model, f64), NumericalError> {
    let m = sweep
        .model_along(x)
        .map_err(|reason| NumericalError::Stopped {
            what: what.to_string(),
            at: x,
            reason,
        })?;
    let u = tc.uniform(&m, &m.channels()[channel])?;
    if u.status != TcStatus::Unstable {
        return Err(NumericalError::NoUniformInstability {
            what: what.to_string(),
            at: x,
        });
    }
    Ok((m, u.tc))
}

/// The uniform Tc (meV) and the q^2 coefficient there of channel `channel` at parameter `x` of
/// the first axis of `sweep`; an error when the uniform line does not exist at `x`.
pub fn curvature_on_uniform_line(
    sweep: &Sweep,
    channel: usize,
    tc: &TcSolver,
    x: f64,
) -> Result<(f64, f64), NumericalError> {
    let (m, t) = uniform_line_at(sweep, channel, tc, x, WHAT)?;
    Ok((t, lowest_curvature(tc, &m, &m.channels()[channel], t)?))
}

/// Every Lifshitz point between neighbouring samples `(x, curvature on the uniform line or None
/// where there is no uniform line)` (sorted in x), each refined by Brent's method on
/// [`curvature_on_uniform_line`]: between two samples on the line whose curvatures differ in
/// sign, and between the last sample on the line and the line's end (its nose, found by
/// bisection) when the curvature there has the other sign.
pub fn lifshitz_points(
    sweep: &Sweep,
    channel: usize,
    tc: &TcSolver,
    samples: &[(f64, Option<f64>)],
) -> LifshitzSearch {
    let mut out = LifshitzSearch::default();
    for w in samples.windows(2) {
        let ((xa, ka), (xb, kb)) = (w[0], w[1]);
        let bracket = match (ka, kb) {
            (Some(ca), Some(cb)) => (ca.signum() != cb.signum()).then_some(Ok((xa, xb))),
            (Some(c), None) => nose_bracket(sweep, channel, tc, (xa, c), xb).transpose(),
            (None, Some(c)) => nose_bracket(sweep, channel, tc, (xb, c), xa).transpose(),
            (None, None) => None,
        };
        let Some(bracket) = bracket else {
            continue;
        };
        let eval = |x: f64| curvature_on_uniform_line(sweep, channel, tc, x).map(|(_, c)| c);
        let found = bracket
            .and_then(|(lo, hi)| brent_root(WHAT, lo, hi, X_REL, eval))
            .and_then(|r| {
                curvature_on_uniform_line(sweep, channel, tc, r.x).map(|(t, _)| (r.x, t))
            });
        match found {
            Ok((value, t)) => out.points.push(LifshitzPoint { value, t }),
            Err(e) => out
                .failures
                .push(format!("Lifshitz point between {xa} and {xb}: {e}")),
        }
    }
    out
}

/// Bisections that locate the end of the uniform line between two samples.
const NOSE_BISECTIONS: usize = 40;

/// The bracket between `on` = (x, curvature) on the uniform line and the line's end towards
/// `off` (where there is no line), when the curvature changes sign in between; None otherwise.
fn nose_bracket(
    sweep: &Sweep,
    channel: usize,
    tc: &TcSolver,
    on: (f64, f64),
    off: f64,
) -> Result<Option<(f64, f64)>, NumericalError> {
    let (mut inside, mut outside) = (on.0, off);
    for _ in 0..NOSE_BISECTIONS {
        let mid = 0.5 * (inside + outside);
        match uniform_line_at(sweep, channel, tc, mid, WHAT) {
            Ok(_) => inside = mid,
            Err(NumericalError::NoUniformInstability { .. }) => outside = mid,
            Err(e) => return Err(e),
        }
    }
    if inside == on.0 {
        return Ok(None);
    }
    let (_, c_end) = curvature_on_uniform_line(sweep, channel, tc, inside)?;
    Ok((c_end.signum() != on.1.signum()).then_some((on.0.min(inside), on.0.max(inside))))
}

/// The Lifshitz points of every channel along a 1D Tc scan (empty for a 2D grid): the
/// curvature at every scan point on the uniform line (in parallel, at the exact uniform Tc),
/// then [`lifshitz_points`]. The couplings follow the sweep's rule ([`Sweep`]).
pub fn scan_lifshitz(
    base: &ConfigSource,
    base_model: &Model,
    grid: &Grid,
    points: &[ScanPoint],
    tc: &TcSolver,
    threads: Option<usize>,
) -> Result<Vec<LifshitzSearch>, InputError> {
    if grid.axes.len() != 1 {
        return Ok(vec![]);
    }
    let sweep = Sweep::new(base, base_model, grid)?;
    let n_ch = base_model.channels().len();
    // Per point and channel: the curvature on the uniform line (None: no line, or failed).
    let curvatures: Vec<Vec<Option<f64>>> = par_map(points.len(), threads, false, |i| {
        let Ok(m) = sweep.model_at(i) else {
            return vec![None; n_ch];
        };
        (0..n_ch)
            .map(|c| {
                let on_line = points[i]
                    .result
                    .as_ref()
                    .ok()
                    .and_then(|r| r.get(c))
                    .is_some_and(|r| r.uniform.status == TcStatus::Unstable);
                if !on_line {
                    return None;
                }
                uniform_curvature(tc, &m, &m.channels()[c]).ok().flatten()
            })
            .collect()
    });
    Ok((0..n_ch)
        .map(|c| {
            let samples: Vec<(f64, Option<f64>)> = points
                .iter()
                .zip(&curvatures)
                .map(|(p, k)| (p.values[0], k[c]))
                .collect();
            lifshitz_points(&sweep, c, tc, &samples)
        })
        .collect())
}

/// The q^2 coefficient at the exact uniform Tc of a channel (None when there is no uniform
/// instability).
fn uniform_curvature(tc: &TcSolver, m: &Model, ch: &Channel) -> Result<Option<f64>, NestorError> {
    let u = tc.uniform(m, ch)?;
    if u.status != TcStatus::Unstable {
        return Ok(None);
    }
    Ok(Some(lowest_curvature(tc, m, ch, u.tc)?))
}
