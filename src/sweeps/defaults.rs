//! Defaults of a sweep that depend on the physics along its axis (after the solvers, before the
//! phase diagram is mapped): the highest temperature of a phase diagram. Temperatures in meV.

use super::{Grid, Sweep};
use crate::config::ConfigSource;
use crate::error::NestorError;
use crate::model::Model;
use crate::solvers::TcSolver;

/// The default top of the temperature axis of a phase diagram (k_B T, meV): 1.2 times the highest
/// uniform or modulated Tc of channel `channel` at the first, middle and last point of the grid
/// (couplings pinned at `model`, the base configuration). None when there is no instability at
/// any of the three.
pub fn default_t_max(
    src: &ConfigSource,
    model: &Model,
    grid: &Grid,
    channel: usize,
    tc: &TcSolver,
) -> Result<Option<f64>, NestorError> {
    let sweep = Sweep::new(src, model, grid)?;
    let mut best: f64 = 0.0;
    for i in [0, grid.len() / 2, grid.len() - 1] {
        let m = sweep.model_at(i)?;
        let ch = &m.channels()[channel];
        let u = tc.uniform(&m, ch).map_err(NestorError::from)?;
        best = best.max(u.tc);
        let md = tc.modulated(&m, ch, &u).map_err(NestorError::from)?;
        best = best.max(md.tc.tc);
    }
    Ok((best > 0.0).then_some(1.2 * best))
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
