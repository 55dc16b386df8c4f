//! `nestor phases`: the phase diagram of one channel in the (parameter, temperature) plane,
//! written as CSV, JSON and figures, with its tricritical and Lifshitz points.

use super::args::channel_index;
use super::{check_threads, create_out, ConfigArgs, Failure, Outcome};
use clap::Args;
use nestor::config::{parse_range, ConfigSource};
use nestor::model::Model;
use nestor::solvers::ordered::OrderedSolver;
use nestor::solvers::pattern::PatternSolver;
use nestor::solvers::TcSolver;
use nestor::sweeps::defaults::default_t_max;
use nestor::sweeps::phase_map::{
    mark_structures, phase_diagram, PhaseDiagram, PhaseOptions, SpecialPoint, FIXED_DENSITY_REFUSAL,
};
use nestor::sweeps::Grid;
use std::io::IsTerminal;
use std::path::PathBuf;

/// Options of `nestor phases`.
#[derive(Args, Debug)]
pub struct PhasesArgs {
    /// The configuration and its overrides.
    #[command(flatten)]
    pub cfg: ConfigArgs,
    /// The parameter axis, PATH=FROM:TO:N.
    #[arg(long, value_name = "PATH=FROM:TO:N", required = true)]
    pub vary: String,
    /// Highest temperature in K (default: 1.2 times the highest Tc along the axis, sampled at up
    /// to nine points and refined between them).
    #[arg(long, value_name = "K")]
    pub tmax: Option<f64>,
    /// Points of the temperature axis (from 0 to tmax).
    #[arg(long, default_value_t = 41)]
    pub temperatures: usize,
    /// Channel name or label (default: the first channel).
    #[arg(long)]
    pub channel: Option<String>,
    /// Skip the plane-wave states (faster; the modulated instability line is still drawn).
    #[arg(long)]
    pub uniform_only: bool,
    /// Not supported (refused with exit code 2): the phase diagram at fixed net carrier density
    /// needs the Maxwell construction between ordered states of different density. Use
    /// `nestor solve --fixed-density` at single points.
    #[arg(long)]
    pub fixed_density: bool,
    /// Points of the modulated instability line at which the multi-wavevector structures are
    /// ranked and the preferred one's name is marked (0: none).
    #[arg(long, default_value_t = 3, value_name = "N")]
    pub structure_marks: usize,
    /// Output directory.
    #[arg(long, default_value = "nestor-out")]
    pub out: PathBuf,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long)]
    pub threads: Option<usize>,
}

/// Parses the axis and maps the phase diagram.
pub fn run(a: &PhasesArgs) -> Result<Outcome, Failure> {
    let (src, model) = a.cfg.load()?;
    check_threads(a.threads)?;
    let range = parse_range(&a.vary)?;
    let grid = Grid::new(vec![range])?;
    run_on(&src, &model, &grid, a)
}

/// The phase diagram of `model` over `grid` with the options of `a`: files written, special
/// points printed, failures counted into the outcome.
pub fn run_on(
    src: &ConfigSource,
    model: &Model,
    grid: &Grid,
    a: &PhasesArgs,
) -> Result<Outcome, Failure> {
    if a.fixed_density {
        return Err(Failure::Input(FIXED_DENSITY_REFUSAL.into()));
    }
    let channel = channel_index(model, a.channel.as_ref())?;
    if model.channels().is_empty() {
        return Err(Failure::Input(format!(
            "{}: the configuration has no [[channel]]",
            src.origin
        )));
    }
    if !(2..=401).contains(&a.temperatures) {
        return Err(Failure::Input(format!(
            "--temperatures {}: must lie in [2, 401]",
            a.temperatures
        )));
    }
    let tc = TcSolver::default();
    let t_max = t_max(src, model, grid, channel, a.tmax, &tc)?;
    create_out(&a.out)?;
    let opts = PhaseOptions {
        channel,
        t_max,
        temperatures: a.temperatures,
        modulated: !a.uniform_only,
        fixed_density: false,
        threads: a.threads,
        progress: std::io::stderr().is_terminal(),
    };
    let mut d = phase_diagram(src, model, grid, &opts, &tc, &OrderedSolver::default())?;
    if a.structure_marks > 0 {
        mark_structures(
            &nestor::sweeps::Sweep::new(src, model, grid)?,
            &mut d,
            &PatternSolver::default(),
            a.structure_marks,
            a.threads,
        );
        for m in &d.structure_marks {
            if let Some(f) = &m.failure {
                eprintln!(
                    "nestor: warning: structure ranking at {} = {}: {f}",
                    grid.axes[0].path(),
                    m.value
                );
            }
        }
    }
    let stem = format!("phases_{}", model.channels()[channel].label());
    let written = nestor::reports::phases::write_phases(src, model, grid, &d, &a.out, &stem)
        .map_err(|e| Failure::Input(e.to_string()))?;
    for w in &written {
        println!("wrote {}", w.display());
    }
    print_special_points(grid, &d);
    Ok(outcome(&d))
}

/// The top of the temperature axis (meV): `--tmax` (K) when given, else the library default.
fn t_max(
    src: &ConfigSource,
    model: &Model,
    grid: &Grid,
    channel: usize,
    tmax: Option<f64>,
    tc: &TcSolver,
) -> Result<f64, Failure> {
    match tmax {
        Some(t) if t.is_finite() && t > 0.0 && t <= 1e4 => Ok(nestor::units::kelvin_to_mev(t)),
        Some(t) => Err(Failure::Input(format!(
            "--tmax {t}: must lie in (0, 10000] K"
        ))),
        None => default_t_max(src, model, grid, channel, tc)?.ok_or_else(|| {
            Failure::Input(
                "phases: no instability at the sampled points of the axis; give --tmax".into(),
            )
        }),
    }
}

/// Prints the tricritical and Lifshitz points (K) of every branch (each side of perfect
/// nesting, named by its range when there are several) and warns of failed special-point
/// searches.
fn print_special_points(grid: &Grid, d: &PhaseDiagram) {
    let path = grid.axes[0].path();
    for b in &d.branches {
        let side = if d.branches.len() > 1 {
            let [lo, hi] = [grid.values(b.columns[0])[0], grid.values(b.columns[1])[0]];
            format!(" ({path} from {lo} to {hi})")
        } else {
            String::new()
        };
        print_point(
            grid,
            &format!("tricritical point{side}"),
            b.tricritical,
            " (preempted by the modulated state)",
        );
        print_point(
            grid,
            &format!("Lifshitz point{side}"),
            b.lifshitz,
            " (the uniform line is not second order there)",
        );
    }
    for f in &d.special_point_failures {
        eprintln!("nestor: warning: {f}");
    }
}

/// One special point: its parameter value and temperature (K), `off_boundary` appended when it
/// is not on the phase boundary.
fn print_point(grid: &Grid, name: &str, p: Option<SpecialPoint>, off_boundary: &str) {
    match p {
        Some(p) => println!(
            "{name}: {} = {:.5}, T = {:.4} K{}",
            grid.axes[0].path(),
            p.value,
            nestor::units::mev_to_kelvin(p.t),
            if p.on_boundary { "" } else { off_boundary }
        ),
        None => println!("{name}: none in range"),
    }
}

/// `PartlyFailed` when a special-point search, a column or a grid point failed.
fn outcome(d: &PhaseDiagram) -> Outcome {
    let failed_cols = d.columns.iter().filter(|c| c.is_err()).count();
    let failed_cells: usize = d
        .columns
        .iter()
        .filter_map(|c| c.as_ref().ok())
        .map(|c| c.cells.iter().filter(|x| x.is_err()).count())
        .sum();
    if !d.special_point_failures.is_empty() {
        return Outcome::PartlyFailed(format!(
            "{} special-point search(es) failed: a missing tricritical or Lifshitz point may not mean none in range",
            d.special_point_failures.len()
        ));
    }
    if failed_cols + failed_cells > 0 {
        return Outcome::PartlyFailed(format!(
            "{failed_cols} columns and {failed_cells} grid points failed (reasons in the CSV)"
        ));
    }
    Outcome::Done
}
