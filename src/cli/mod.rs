//! The command line (clap definitions and dispatch), the last stage of the pipeline: each
//! subcommand has its own file that parses its options, calls the library and maps the outcome;
//! the shared argument types are in `args`. Only this folder and `main.rs` know the command line.

mod args;
mod check;
mod demo;
mod pattern;
mod phases;
mod scan;
mod solve;
mod tc;

pub use args::{ConfigArgs, SolveOpts};
pub use check::CheckArgs;
pub use demo::DemoArgs;
pub use pattern::PatternArgs;
pub use phases::PhasesArgs;
pub use scan::ScanArgs;
pub use solve::SolveStateArgs;
pub use tc::TcArgs;

use clap::{Parser, Subcommand};
use nestor::error::{InputError, NestorError};
use std::path::Path;

#[derive(Parser, Debug)]
#[command(
    name = "nestor",
    version,
    about = "Electron-hole (excitonic) order between nearly nested Fermi-surface pockets of a 2D electron system, in mean-field theory.",
    long_about = "Electron-hole (excitonic) order between nearly nested Fermi-surface pockets of a 2D electron system, in mean-field theory.\n\nUnits: energies in meV from the common chemical potential, temperatures in K, momenta in 1/nm (each pocket's from its centre), hbar v in meV nm, masses in electron masses, the coupling g in meV nm^2 (per spin channel), densities per nm^2. The mismatch h is half the hole minus electron Fermi energy on the nesting line (h > 0: the hole pocket is larger)."
)]
/// The parsed command line.
pub struct Cli {
    #[command(subcommand)]
    /// The subcommand to run.
    pub command: Command,
}

/// The subcommands.
#[derive(Subcommand, Debug)]
pub enum Command {
    /// Derived quantities of every pocket and channel: Fermi momenta and velocities, densities,
    /// densities of states, pair density of states nu, coupling g and lambda, mismatch h.
    Check(CheckArgs),
    /// Uniform and modulated critical temperatures of every channel, with the wavevector q*.
    /// lambda is converted to g at the configuration as given (after --set).
    Tc(TcArgs),
    /// Uniform and modulated Tc and |q*| over one or two swept parameters, in parallel; writes CSV,
    /// JSON and figures, with every Lifshitz point of a 1D curve. g is held at its value in the
    /// base configuration (after --set) at every point; the output says so.
    Scan(ScanArgs),
    /// Self-consistent ordered states at one temperature: every solution of the gap equation
    /// (uniform and plane-wave), Omega, stability, the chosen state, the quasiparticle gap.
    Solve(SolveStateArgs),
    /// Phase diagram of one channel in the (parameter, temperature) plane: normal, uniform and
    /// modulated regions, second- and first-order lines, spinodal, tricritical and Lifshitz points.
    Phases(PhasesArgs),
    /// Which modulated pattern forms: the ranking of multi-wavevector structures (plane, stripe,
    /// orthogonal, triangle, square, hexagon, or listed wavevectors) on the modulated instability
    /// line at one temperature, the chosen state at the configuration as given, and its density
    /// modulation as a map beside its Fourier amplitudes.
    Pattern(PatternArgs),
    /// Runs check, tc, a scan, phases and pattern on the embedded demonstration surface.
    Demo(DemoArgs),
}

/// How a command ended when it did not fail outright.
pub enum Outcome {
    /// Everything was computed.
    Done,
    /// Some points or searches failed (the message says which); exit code 1.
    PartlyFailed(String),
}

/// Why a command failed: bad input (exit code 2) or a failed computation (exit code 1).
pub enum Failure {
    /// The message names the input at fault.
    Input(String),
    /// The message names the computation that failed.
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

/// Runs the subcommand of `cli`.
pub fn run(cli: Cli) -> Result<Outcome, Failure> {
    match cli.command {
        Command::Check(a) => check::run(&a),
        Command::Tc(a) => tc::run(&a),
        Command::Solve(a) => solve::run(&a),
        Command::Pattern(a) => pattern::run(&a),
        Command::Phases(a) => phases::run(&a),
        Command::Scan(a) => scan::run(&a),
        Command::Demo(a) => demo::run(&a),
    }
}

/// Prints a JSON value, pretty.
fn print_json(v: &serde_json::Value) {
    println!("{}", serde_json::to_string_pretty(v).unwrap_or_default());
}

/// `--threads` must lie in [1, 1024] when given.
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

/// Creates the output directory of `--out`.
fn create_out(out: &Path) -> Result<(), Failure> {
    std::fs::create_dir_all(out).map_err(|e| {
        Failure::Input(format!(
            "--out {}: cannot create the directory: {e}",
            out.display()
        ))
    })
}

/// Writes a text file atomically.
fn write_text(path: &Path, text: &str) -> Result<(), Failure> {
    nestor::reports::atomic::write_atomic(path, text.as_bytes())
        .map_err(|e| Failure::Input(format!("cannot write {}: {e}", path.display())))
}
