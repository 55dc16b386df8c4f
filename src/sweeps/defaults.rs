//! Defaults of a sweep that depend on the physics along its axis (after the solvers, before the
//! phase diagram is mapped): the highest temperature of a phase diagram. Temperatures in meV.

use super::{par_map, Grid, Sweep};
use crate::config::ConfigSource;
use crate::error::NestorError;
use crate::model::Model;
use crate::solvers::optimize::{brent_max_from, XTol};
use crate::solvers::{TcSolver, TcStatus};

/// At most this many grid points are sampled before the maximum is refined.
const COARSE_POINTS: usize = 9;

/// The default top of the temperature axis of a phase diagram (k_B T, meV): 1.2 times the highest
/// uniform or modulated Tc of channel `channel` along the grid (couplings held as in every sweep,
/// [`Sweep`]). The Tc is sampled at up to nine evenly spread grid points (every point of a short
/// axis); on a 1D grid the best sample is then refined by Brent's method between its neighbouring
/// samples, so a maximum between grid points (a sweep through perfect nesting with an even number
/// of points) is covered. A failed refinement keeps the best sample. None when there is no
/// instability at any sample.
pub fn default_t_max(
    src: &ConfigSource,
    model: &Model,
    grid: &Grid,
    channel: usize,
    tc: &TcSolver,
) -> Result<Option<f64>, NestorError> {
    let sweep = Sweep::new(src, model, grid)?;
    let picks = coarse_indices(grid.len());
    let samples = par_map(picks.len(), None, false, |k| {
        let m = sweep.model_at(picks[k])?;
        highest_tc(tc, &m, channel)
    })
    .into_iter()
    .collect::<Result<Vec<f64>, NestorError>>()?;
    let Some((k, &best)) = samples.iter().enumerate().max_by(|a, b| a.1.total_cmp(b.1)) else {
        return Ok(None);
    };
    let mut best = best;
    if grid.axes.len() == 1 && best > 0.0 && picks.len() > 1 {
        let x = |j: usize| grid.values(picks[j])[0];
        let (lo, hi) = (x(k.saturating_sub(1)), x((k + 1).min(picks.len() - 1)));
        let f = |v: f64| -> Result<f64, NestorError> {
            highest_tc(tc, &sweep.model_along(v)?, channel)
        };
        let tol = XTol::Floor(1e-6 * (hi - lo).abs());
        if let Ok(m) = brent_max_from(
            "highest Tc along the axis",
            lo,
            hi,
            Some((x(k), best)),
            tol,
            f,
        ) {
            best = best.max(m.value);
        }
    }
    Ok((best > 0.0).then_some(1.2 * best))
}

/// Up to [`COARSE_POINTS`] indices spread evenly over `0..n`, both ends included (all of them
/// when n is small).
fn coarse_indices(n: usize) -> Vec<usize> {
    if n <= COARSE_POINTS {
        return (0..n).collect();
    }
    let mut out: Vec<usize> = (0..COARSE_POINTS)
        .map(|k| (k * (n - 1) + (COARSE_POINTS - 1) / 2) / (COARSE_POINTS - 1))
        .collect();
    out.dedup();
    out
}

/// The higher of the uniform and the modulated Tc of channel `channel` (meV; 0 when neither
/// exists).
fn highest_tc(tc: &TcSolver, m: &Model, channel: usize) -> Result<f64, NestorError> {
    let ch = &m.channels()[channel];
    let u = tc.uniform(m, ch)?;
    let md = tc.modulated(m, ch, &u)?;
    let unstable = |r: &crate::solvers::TcReport| {
        if r.status == TcStatus::Unstable {
            r.tc
        } else {
            0.0
        }
    };
    Ok(unstable(&u).max(unstable(&md.tc)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::config::parse_range;

    /// On the demo surface along the Dirac-point offset of G the default is 1.2 times the highest
    /// Tc of XG at the three points, so at least 1.2 times the uniform Tc at the middle one.
    #[test]
    fn default_t_max_covers_the_instabilities() {
        let src = ConfigSource::from_text("demo", include_str!("../../configs/demo_surface.toml"))
            .unwrap();
        let model = src.build(None).unwrap();
        let grid = Grid::new(vec![parse_range("G.offset=184:190:3").unwrap()]).unwrap();
        let tc = TcSolver::default();
        let t_max = default_t_max(&src, &model, &grid, 0, &tc)
            .unwrap()
            .expect("the demo surface is unstable along this axis");
        let m = Sweep::new(&src, &model, &grid)
            .unwrap()
            .model_at(1)
            .unwrap();
        let u = tc.uniform(&m, &m.channels()[0]).unwrap();
        assert!(t_max >= 1.2 * u.tc * (1.0 - 1e-12) && t_max > 0.0);
    }
}
