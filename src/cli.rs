//! Command-line definitions (clap) and the dispatch of each subcommand to the library. Only this
//! file and `main.rs` know the command line.

use clap::{Args, Parser, Subcommand, ValueEnum};
use nestor::config::{parse_range, ConfigSource, Override};
use nestor::error::{InputError, NestorError};
use nestor::model::Model;
use nestor::reports::{scan as scan_report, tables};
use nestor::solvers::tc_channel::{channel_tc, Method};
use nestor::solvers::TcSolver;
use nestor::sweeps::{tc_scan::scan_tc, Grid};
use std::io::IsTerminal;
use std::path::{Path, PathBuf};

/// The embedded demonstration surface.
pub const DEMO_CONFIG: &str = include_str!("../configs/demo_surface.toml");

#[derive(Parser, Debug)]
#[command(
    name = "nestor",
    version,
    about = "Electron-hole (excitonic) order between nearly nested Fermi-surface pockets of a 2D electron system, in mean-field theory.",
    long_about = "Electron-hole (excitonic) order between nearly nested Fermi-surface pockets of a 2D electron system, in mean-field theory.\n\nUnits: energies in meV from the common chemical potential, temperatures in K, momenta in 1/nm (each pocket's from its centre), hbar v in meV nm, masses in electron masses, the coupling g in meV nm^2 (per spin channel), densities per nm^2. The mismatch h is half the hole minus electron Fermi energy on the nesting line (h > 0: the hole pocket is larger)."
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Derived quantities of every pocket and channel: Fermi momenta and velocities, densities,
    /// densities of states, pair density of states nu, coupling g and lambda, mismatch h.
    Check(CheckArgs),
    /// Uniform and modulated critical temperatures of every channel, with the wavevector q*.
    Tc(TcArgs),
    /// Uniform and modulated Tc and |q*| over one or two swept parameters, in parallel; writes CSV,
    /// JSON and figures.
    Scan(ScanArgs),
    /// Runs check, tc and a scan on the embedded demonstration surface.
    Demo(DemoArgs),
}

#[derive(Args, Debug)]
pub struct ConfigArgs {
    /// Configuration file (TOML: [[pocket]] and [[channel]] tables).
    pub config: PathBuf,
    /// Override one numeric field, NAME.key=VALUE (repeatable), e.g. --set B.offset=105 or
    /// --set ab.cutoff=4 (NAME is a pocket's or a channel's name; two-component keys take .x/.y).
    #[arg(long = "set", value_name = "PATH=VALUE")]
    pub set: Vec<String>,
}

#[derive(Args, Debug)]
pub struct CheckArgs {
    #[command(flatten)]
    pub cfg: ConfigArgs,
    /// Print JSON instead of a table.
    #[arg(long)]
    pub json: bool,
}

#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum MethodArg {
    /// Full 2D momentum integral over the shell with the real dispersions.
    Exact,
    /// Weak-coupling digamma closed form (circular pockets, equal velocities; fast, approximate).
    Weak,
}

impl From<MethodArg> for Method {
    fn from(m: MethodArg) -> Method {
        match m {
            MethodArg::Exact => Method::Exact,
            MethodArg::Weak => Method::Weak,
        }
    }
}

#[derive(Args, Debug, Clone)]
pub struct SolveOpts {
    /// How chi is computed.
    #[arg(long, value_enum, default_value = "exact")]
    pub method: MethodArg,
    /// Relative accuracy target of each susceptibility integral (1e-12 to 1e-3).
    #[arg(long, default_value_t = 1e-7, value_name = "REL")]
    pub rtol: f64,
}

#[derive(Args, Debug)]
pub struct TcArgs {
    #[command(flatten)]
    pub cfg: ConfigArgs,
    #[command(flatten)]
    pub solve: SolveOpts,
    /// Print JSON instead of a table.
    #[arg(long)]
    pub json: bool,
}

#[derive(Args, Debug)]
pub struct ScanArgs {
    #[command(flatten)]
    pub cfg: ConfigArgs,
    /// Swept parameter PATH=FROM:TO:N (once for a curve, twice for a map), e.g.
    /// --vary B.offset=95:115:41.
    #[arg(long, value_name = "PATH=FROM:TO:N", required = true)]
    pub vary: Vec<String>,
    /// Output directory for CSV, JSON and figures.
    #[arg(long, default_value = "nestor-out")]
    pub out: PathBuf,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long)]
    pub threads: Option<usize>,
    #[command(flatten)]
    pub solve: SolveOpts,
}

#[derive(Args, Debug)]
pub struct DemoArgs {
    /// Output directory for tables and figures.
    #[arg(long, default_value = "nestor-demo")]
    pub out: PathBuf,
    /// Worker threads for the scan (default: all cores).
    #[arg(long)]
    pub threads: Option<usize>,
    /// Points of the demo's Tc curve.
    #[arg(long, default_value_t = 31)]
    pub points: usize,
}

pub enum Outcome {
    Done,
    PartlyFailed(String),
}

pub enum Failure {
    Input(String),
    Computation(String),
}

impl From<InputError> for Failure {
    fn from(e: InputError) -> Self {
        Failure::Input(e.0)
    }
}

impl From<NestorError> for Failure {
    fn from(e: NestorError) -> Self {
        match e {
            NestorError::Input(i) => Failure::Input(i.0),
            NestorError::Numerical(n) => Failure::Computation(n.to_string()),
        }
    }
}

fn load(cfg: &ConfigArgs) -> Result<(ConfigSource, Model), Failure> {
    let src = ConfigSource::load(&cfg.config)?;
    let overrides = cfg
        .set
        .iter()
        .map(|s| Override::parse(s))
        .collect::<Result<Vec<_>, _>>()?;
    let src = src.with_overrides(&overrides)?;
    let model = src.build(None)?;
    warn(&model);
    Ok((src, model))
}

fn warn(model: &Model) {
    for w in &model.warnings {
        eprintln!("nestor: warning: {w}");
    }
}

fn solver(opts: &SolveOpts) -> Result<TcSolver, Failure> {
    if !(opts.rtol >= 1e-12 && opts.rtol <= 1e-3) {
        return Err(Failure::Input(format!(
            "--rtol {}: must lie in [1e-12, 1e-3]",
            opts.rtol
        )));
    }
    let mut s = TcSolver::default();
    s.acc.rtol = opts.rtol;
    Ok(s)
}

fn print_json(v: &serde_json::Value) {
    println!("{}", serde_json::to_string_pretty(v).unwrap_or_default());
}

pub fn run(cli: Cli) -> Result<Outcome, Failure> {
    match cli.command {
        Command::Check(a) => {
            let (src, model) = load(&a.cfg)?;
            if a.json {
                print_json(&tables::check_json(&src, &model));
            } else {
                print!("{}", tables::check_text(&model));
            }
            Ok(Outcome::Done)
        }
        Command::Tc(a) => {
            let (src, model) = load(&a.cfg)?;
            if model.channels.is_empty() {
                return Err(Failure::Input(format!(
                    "{}: the configuration has no [[channel]]: nothing to compute",
                    src.origin
                )));
            }
            let s = solver(&a.solve)?;
            let results = model
                .channels
                .iter()
                .map(|ch| channel_tc(&model, ch, &s, a.solve.method.into()))
                .collect::<Result<Vec<_>, _>>()?;
            if a.json {
                print_json(&tables::tc_json(&src, &model, &results));
            } else {
                print!("{}", tables::tc_text(&model, &results));
            }
            Ok(Outcome::Done)
        }
        Command::Scan(a) => {
            let (src, model) = load(&a.cfg)?;
            let s = solver(&a.solve)?;
            let ranges = a
                .vary
                .iter()
                .map(|v| parse_range(v))
                .collect::<Result<Vec<_>, _>>()?;
            check_threads(a.threads)?;
            let grid = Grid::new(ranges)?;
            run_scan(
                &src,
                &model,
                &grid,
                &s,
                a.solve.method.into(),
                a.threads,
                &a.out,
                "scan",
            )
        }
        Command::Demo(a) => {
            check_threads(a.threads)?;
            if !(2..=2001).contains(&a.points) {
                return Err(Failure::Input(format!(
                    "--points {}: must lie in [2, 2001]",
                    a.points
                )));
            }
            let src = ConfigSource::from_text(
                "embedded demo surface (configs/demo_surface.toml)",
                DEMO_CONFIG,
            )?;
            let model = src.build(None)?;
            warn(&model);
            std::fs::create_dir_all(&a.out).map_err(|e| {
                Failure::Input(format!(
                    "--out {}: cannot create the directory: {e}",
                    a.out.display()
                ))
            })?;
            println!("== check: the demonstration surface ==");
            print!("{}", tables::check_text(&model));
            let check = tables::check_json(&src, &model);
            write_text(
                &a.out.join("check.json"),
                &serde_json::to_string_pretty(&check).unwrap_or_default(),
            )?;
            println!("\n== tc: critical temperatures ==");
            let s = TcSolver::default();
            let results = model
                .channels
                .iter()
                .map(|ch| channel_tc(&model, ch, &s, Method::Exact))
                .collect::<Result<Vec<_>, _>>()?;
            print!("{}", tables::tc_text(&model, &results));
            let tcj = tables::tc_json(&src, &model, &results);
            write_text(
                &a.out.join("tc.json"),
                &serde_json::to_string_pretty(&tcj).unwrap_or_default(),
            )?;
            println!("\n== scan: Tc against the Dirac-point offset of pocket G ==");
            let range = parse_range(&format!(
                "G.offset={}:{}:{}",
                DEMO_SCAN.0, DEMO_SCAN.1, a.points
            ))?;
            let grid = Grid::new(vec![range])?;
            let outcome = run_scan(
                &src,
                &model,
                &grid,
                &s,
                Method::Exact,
                a.threads,
                &a.out,
                "demo",
            )?;
            println!("\nWrote tables and figures to {}/", a.out.display());
            Ok(outcome)
        }
    }
}

/// The demo scan range of the Dirac point of pocket G, meV.
const DEMO_SCAN: (f64, f64) = (184.0, 190.0);

fn check_threads(t: Option<usize>) -> Result<(), Failure> {
    if let Some(n) = t {
        if !(1..=1024).contains(&n) {
            return Err(Failure::Input(format!(
                "--threads {n}: must lie in [1, 1024]"
            )));
        }
    }
    Ok(())
}

fn write_text(path: &Path, text: &str) -> Result<(), Failure> {
    nestor::reports::atomic::write_atomic(path, text.as_bytes())
        .map_err(|e| Failure::Input(format!("cannot write {}: {e}", path.display())))
}

#[allow(clippy::too_many_arguments)]
fn run_scan(
    src: &ConfigSource,
    model: &Model,
    grid: &Grid,
    s: &TcSolver,
    method: Method,
    threads: Option<usize>,
    out: &Path,
    stem: &str,
) -> Result<Outcome, Failure> {
    std::fs::create_dir_all(out).map_err(|e| {
        Failure::Input(format!(
            "--out {}: cannot create the directory: {e}",
            out.display()
        ))
    })?;
    let progress = std::io::stderr().is_terminal();
    let points = scan_tc(src, model, grid, s, method, threads, progress)?;
    let written = scan_report::write_scan(src, model, grid, &points, method, out, stem)
        .map_err(Failure::Input)?;
    for w in &written {
        println!("wrote {}", w.display());
    }
    let failed = points.iter().filter(|p| p.result.is_err()).count();
    print!("{}", scan_report::summary(model, grid, &points));
    if failed > 0 {
        return Ok(Outcome::PartlyFailed(format!(
            "{failed} of {} points failed (their reasons are in the CSV and JSON)",
            points.len()
        )));
    }
    Ok(Outcome::Done)
}
