//! Critical temperatures over a parameter grid: per point and channel, the uniform and modulated
//! Tc and q*, by the exact integral or the weak-coupling closed form.

use super::{par_map, Grid, Sweep};
use crate::config::ConfigSource;
use crate::error::{InputError, NestorError};
use crate::model::Model;
use crate::solvers::tc_channel::{channel_tc, ChannelTc, Method};
use crate::solvers::TcSolver;

/// Result at one grid point: per channel, or the reason the point failed.
#[derive(Debug, Clone)]
pub struct ScanPoint {
    pub values: Vec<f64>,
    pub result: Result<Vec<ChannelTc>, NestorError>,
}

/// Runs the scan. The base configuration fixes g (lambda is converted there).
pub fn scan_tc(
    base: &ConfigSource,
    base_model: &Model,
    grid: &Grid,
    solver: &TcSolver,
    method: Method,
    threads: Option<usize>,
    progress: bool,
) -> Result<Vec<ScanPoint>, InputError> {
    if base_model.channels().is_empty() {
        return Err(InputError::new(format!(
            "{}: the configuration has no [[channel]]: nothing to scan",
            base.origin
        )));
    }
    // Resolve the paths up front so that a bad PATH fails before the sweep.
    let sweep = Sweep::new(base, base_model, grid)?;
    Ok(par_map(grid.len(), threads, progress, |i| {
        let values = grid.values(i);
        let result = sweep.model_at(i).map_err(NestorError::from).and_then(|m| {
            m.channels()
                .iter()
                .map(|ch| channel_tc(&m, ch, solver, method))
                .collect::<Result<Vec<_>, NestorError>>()
        });
        ScanPoint { values, result }
    }))
}
