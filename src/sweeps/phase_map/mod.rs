//! The phase diagram of one channel in the (parameter, temperature) plane: per parameter value
//! (in parallel) the instability lines and the chosen state on a temperature grid
//! (`column`); the axis split into branches where it crosses perfect nesting; then per branch
//! the first-order line (equal Omega of the uniform and normal minima), the spinodal where the
//! uniform minimum disappears (`lines`), and the tricritical (beta = 0) and Lifshitz
//! (q-curvature = 0) points on the uniform instability line, each refined in the parameter by
//! Brent's method (`special`). Theory: [`crate::theory::landau`].

mod column;
mod lines;
mod special;
mod structures;

pub use column::AT_TC_NUDGE;
pub use structures::{mark_structures, StructureMark};

use super::{par_map, Grid, Sweep};
use crate::config::ConfigSource;
use crate::error::{InputError, NestorError};
use crate::model::Model;
use crate::solvers::ordered::{OrderedSolver, StateKind};
use crate::solvers::TcSolver;
use lines::{branch_bounds, first_order_and_spinodal};
use special::{Special, SpecialSearch};

/// One grid cell: the chosen grand-canonical state and the minima it competes with.
#[derive(Debug, Clone)]
pub struct Cell {
    /// The chosen state.
    pub state: StateKind,
    /// Its gap, meV.
    pub delta: f64,
    /// Its wavevector, 1/nm.
    pub q: [f64; 2],
    /// Omega of the chosen state per spin channel, meV/nm^2.
    pub omega: f64,
    /// Lowest Omega among uniform minima (None when there is none).
    pub uniform_omega: Option<f64>,
    /// Lowest Omega among the other minima (normal, plane wave); None when there is none.
    pub other_omega: Option<f64>,
    /// Whether the normal state is a local minimum (alpha > 0).
    pub normal_minimum: bool,
    /// How the cell was solved when not at its grid temperature (a temperature on the
    /// instability line is solved a relative [`AT_TC_NUDGE`] away from it).
    pub note: Option<String>,
}

/// One column (parameter value) of the diagram.
#[derive(Debug, Clone)]
pub struct Column {
    /// The swept parameter's value.
    pub value: f64,
    /// The channel's mismatch h on the nesting line, meV (its sign tells the branch).
    pub mismatch: f64,
    /// Uniform instability temperature (meV; 0 when none).
    pub t_uniform: f64,
    /// The quartic coefficient on the uniform line (None when there is no line).
    pub beta_uniform: Option<f64>,
    /// q-curvature of chi at q = 0 on the uniform line (lowest eigenvalue for anisotropic
    /// channels), 1/(meV nm^2) nm^2.
    pub curvature_uniform: Option<f64>,
    /// Modulated instability temperature, meV (0 when none).
    pub t_modulated: f64,
    /// Its wavevector, 1/nm.
    pub q_star: [f64; 2],
    /// The cells, one per temperature of the diagram.
    pub cells: Vec<Result<Cell, NestorError>>,
}

/// A special point on the uniform instability line.
#[derive(Debug, Clone, Copy)]
pub struct SpecialPoint {
    /// The swept parameter's value.
    pub value: f64,
    /// meV
    pub t: f64,
    /// Whether it lies on the actual phase boundary (not preempted by another state).
    pub on_boundary: bool,
}

/// One side of perfect nesting: a stretch of the axis on which the mismatch keeps its sign,
/// with its own lines and special points.
#[derive(Debug, Clone)]
pub struct Branch {
    /// First and last column index (inclusive); a column at perfect nesting belongs to both
    /// branches it separates.
    pub columns: [usize; 2],
    /// First-order line (parameter, T meV).
    pub first_order: Vec<(f64, f64)>,
    /// Where the uniform minimum disappears (parameter, T meV).
    pub spinodal: Vec<(f64, f64)>,
    /// The tricritical point of this branch.
    pub tricritical: Option<SpecialPoint>,
    /// The Lifshitz point of this branch.
    pub lifshitz: Option<SpecialPoint>,
}

/// The phase diagram of one channel.
#[derive(Debug, Clone)]
pub struct PhaseDiagram {
    /// Index of the channel.
    pub channel: usize,
    /// The temperature axis, meV.
    pub temperatures: Vec<f64>,
    /// The columns in axis order.
    pub columns: Vec<Result<Column, NestorError>>,
    /// The branches in axis order (one unless the axis crosses perfect nesting).
    pub branches: Vec<Branch>,
    /// Special-point searches that failed (so that a missing point is not read as "none").
    pub special_point_failures: Vec<String>,
    /// The preferred structure at points of the modulated instability line (filled by
    /// [`mark_structures`]).
    pub structure_marks: Vec<StructureMark>,
}

/// Options of the phase-diagram computation.
#[derive(Debug, Clone, Copy)]
pub struct PhaseOptions {
    /// Index of the channel.
    pub channel: usize,
    /// Highest temperature, meV.
    pub t_max: f64,
    /// Points of the temperature axis.
    pub temperatures: usize,
    /// Compute plane-wave states where the modulated instability lies above the uniform one.
    pub modulated: bool,
    /// Canonical mode (fixed net carrier density): not supported by the phase diagram, which
    /// refuses it with an input error (phase separation between ordered states of different
    /// density is not constructed); single points: [`crate::solvers::canonical`].
    pub fixed_density: bool,
    /// Worker threads (None: all cores).
    pub threads: Option<usize>,
    /// Show a progress bar.
    pub progress: bool,
}

/// Why the phase diagram does not take a fixed density.
pub const FIXED_DENSITY_REFUSAL: &str = "phases --fixed-density is not supported: at fixed density the ordered region needs the Maxwell construction between ordered states of different density, which is not implemented; map the grand-canonical diagram (without --fixed-density), or solve single points at fixed density with `nestor solve --fixed-density` (normal, uniform or normal-uniform coexistence; it reports \"undetermined\" where ordered states of different density would separate)";

/// The temperature axis (meV): `n` rows up to `t_max`, the lowest at a quarter step above
/// T = 0, where Omega at q != 0 has kinks in angle.
fn temperature_axis(t_max: f64, n: usize) -> Vec<f64> {
    let n_t = n.max(2);
    (0..n_t)
        .map(|j| t_max * (j as f64).max(0.25) / (n_t - 1) as f64)
        .collect()
}

/// Checks the grid and the options.
fn check_inputs(base_model: &Model, grid: &Grid, opts: &PhaseOptions) -> Result<(), InputError> {
    if grid.axes.len() != 1 {
        return Err(InputError::new(
            "phases: give exactly one --vary range (the temperature is the other axis)",
        ));
    }
    if opts.channel >= base_model.channels().len() {
        return Err(InputError::new(
            "phases: the configuration has no such channel",
        ));
    }
    if opts.fixed_density {
        return Err(InputError::new(FIXED_DENSITY_REFUSAL));
    }
    Ok(())
}

/// Computes the phase diagram over a 1D grid of the parameter.
pub fn phase_diagram(
    base: &ConfigSource,
    base_model: &Model,
    grid: &Grid,
    opts: &PhaseOptions,
    tc: &TcSolver,
    os: &OrderedSolver,
) -> Result<PhaseDiagram, InputError> {
    check_inputs(base_model, grid, opts)?;
    let sweep = Sweep::new(base, base_model, grid)?;
    let temps = temperature_axis(opts.t_max, opts.temperatures);
    let columns: Vec<Result<Column, NestorError>> =
        par_map(grid.len(), opts.threads, opts.progress, |i| {
            let value = grid.values(i)[0];
            sweep
                .model_at(i)
                .map_err(NestorError::from)
                .and_then(|m| column::column(&m, opts, &temps, tc, os, value))
        });
    let search = SpecialSearch {
        sweep: &sweep,
        tc,
        channel: opts.channel,
        failures: Default::default(),
    };
    let branches = branch_bounds(&columns)
        .into_iter()
        .map(|[a, b]| {
            let cols = &columns[a..=b];
            let (first_order, spinodal) = first_order_and_spinodal(cols, &temps);
            Branch {
                columns: [a, b],
                first_order,
                spinodal,
                tricritical: search.refine(cols, Special::Tricritical),
                lifshitz: search.refine(cols, Special::Lifshitz),
            }
        })
        .collect();
    let special_point_failures = search.failures.into_inner();
    Ok(PhaseDiagram {
        channel: opts.channel,
        temperatures: temps,
        columns,
        branches,
        special_point_failures,
        structure_marks: vec![],
    })
}
