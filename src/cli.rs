//! Command-line definitions (clap) and the dispatch of each subcommand to the library. Only this
//! file and `main.rs` know the command line.

use clap::{Args, Parser, Subcommand, ValueEnum};
use nestor::config::{parse_range, ConfigSource, Override};
use nestor::error::{InputError, NestorError};
use nestor::model::structure::Structure;
use nestor::model::Model;
use nestor::reports::pattern::{pattern_json, pattern_text, write_pattern, PatternReport};
use nestor::reports::{scan as scan_report, tables};
use nestor::solvers::ordered::{coupled_uniform, plane_wave_q_scale, spectrum, OrderedSolver};
use nestor::solvers::pattern::{
    density_waves, lowest, single_wavevector_candidates, structure_candidates, PatternSolver,
};
use nestor::solvers::tc_channel::{channel_tc, Method};
use nestor::solvers::TcSolver;
use nestor::sweeps::phase_map::{phase_diagram, PhaseOptions};
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
pub struct SolveStateArgs {
    #[command(flatten)]
    pub cfg: ConfigArgs,
    /// Temperature in K (0 allowed).
    #[arg(long, value_name = "K")]
    pub temperature: f64,
    /// Skip the plane-wave (single-wavevector) search; uniform and normal states only.
    #[arg(long)]
    pub uniform_only: bool,
    /// Also solve at fixed net carrier density (that of the configuration's normal state at
    /// T = 0): the normal or uniform phase at its own chemical potential, or their coexistence.
    #[arg(long)]
    pub fixed_density: bool,
    /// Print JSON instead of tables.
    #[arg(long)]
    pub json: bool,
}

#[derive(Args, Debug)]
pub struct PhasesArgs {
    #[command(flatten)]
    pub cfg: ConfigArgs,
    /// The parameter axis, PATH=FROM:TO:N.
    #[arg(long, value_name = "PATH=FROM:TO:N", required = true)]
    pub vary: String,
    /// Highest temperature in K (default: 1.2 times the highest Tc along the axis at its ends and
    /// middle).
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
    /// Hold the net carrier density fixed (that of the configuration's normal state at T = 0)
    /// instead of the chemical potential: uniform and normal states, with coexistence regions.
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

#[derive(Args, Debug)]
pub struct PatternArgs {
    #[command(flatten)]
    pub cfg: ConfigArgs,
    /// Temperature in K (> 0).
    #[arg(long, value_name = "K")]
    pub temperature: f64,
    /// The parameter varied to reach the modulated instability line, NAME.key (default: the
    /// hole-like pocket's offset of the channel).
    #[arg(long, value_name = "PATH")]
    pub along: Option<String>,
    /// Side of the real-space density map in nm.
    #[arg(long, default_value_t = 60.0, value_name = "NM")]
    pub fov: f64,
    /// Channel name or label (default: the first channel).
    #[arg(long)]
    pub channel: Option<String>,
    /// A further structure to rank, as wavevectors in 1/nm: "qx,qy;qx,qy;..." (repeatable).
    #[arg(long, value_name = "QX,QY;...")]
    pub wavevectors: Vec<String>,
    /// Solve the nonlinear state of every ranked structure on the line (default: the preferred
    /// one and the stripe).
    #[arg(long)]
    pub every_structure: bool,
    /// Print JSON instead of tables.
    #[arg(long)]
    pub json: bool,
    /// Output directory for the JSON report and the figures.
    #[arg(long, default_value = "nestor-out")]
    pub out: PathBuf,
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
        Command::Solve(a) => {
            let (src, model) = load(&a.cfg)?;
            if model.channels.is_empty() {
                return Err(Failure::Input(format!(
                    "{}: the configuration has no [[channel]]: nothing to solve",
                    src.origin
                )));
            }
            if !(a.temperature.is_finite() && (0.0..=1e4).contains(&a.temperature)) {
                return Err(Failure::Input(format!(
                    "--temperature {}: must lie in [0, 10000] K",
                    a.temperature
                )));
            }
            let t = nestor::units::kelvin_to_mev(a.temperature);
            let s = OrderedSolver::default();
            let mut json_channels = Vec::new();
            let mut text = String::new();
            for ch in &model.channels {
                let qs = (!a.uniform_only).then(|| plane_wave_q_scale(&model, ch, t));
                let st = s.solve(&model, ch, t, qs).map_err(NestorError::from)?;
                let spectra = st
                    .solutions
                    .iter()
                    .map(|sol| spectrum(&model, ch, sol))
                    .collect::<Result<Vec<_>, _>>()
                    .map_err(NestorError::from)?;
                let mut cj = tables::ordered_json(&model, ch, &st, &spectra);
                text += &tables::ordered_text(ch, &st, &spectra);
                if a.fixed_density {
                    let idx = model
                        .channels
                        .iter()
                        .position(|c| c.label == ch.label)
                        .unwrap_or(0);
                    let lambda = ch.lambda().max(1e-3);
                    let d0 = ch.cutoff / (1.0 / lambda).sinh();
                    let min_offset = model
                        .pockets
                        .iter()
                        .map(|p| p.offset().abs())
                        .fold(f64::INFINITY, f64::min);
                    let window = (2.0 * (ch.mismatch.abs() + d0) + 4.0 * t).min(0.5 * min_offset);
                    let cs =
                        nestor::solvers::canonical::canonical_state(&s, &model, idx, t, window)
                            .map_err(NestorError::from)?;
                    text += &format!(
                        "fixed density {:.6e}/nm^2: {}{} (chemical potential shifted by {:.5} meV, Delta = {:.5} meV)\n",
                        cs.density,
                        cs.state,
                        cs.ordered_fraction.map(|f| format!(", ordered fraction {f:.4}")).unwrap_or_default(),
                        cs.mu_shift,
                        cs.delta
                    );
                    cj["fixed_density"] = serde_json::to_value(&cs).unwrap_or_default();
                }
                json_channels.push(cj);
                text.push('\n');
            }
            // Uniform channels that share a pocket, ordered together.
            let mut coupled = Vec::new();
            for i in 0..model.channels.len() {
                for j in i + 1..model.channels.len() {
                    let (ci, cj) = (&model.channels[i], &model.channels[j]);
                    let share = [ci.a, ci.b].iter().any(|p| *p == cj.a || *p == cj.b);
                    if share && ci.spin_channels == cj.spin_channels {
                        let c =
                            coupled_uniform(&s, &model, [i, j], t).map_err(NestorError::from)?;
                        text += &format!(
                            "channels {} and {} share a pocket: they {} (uniform gaps {:.5}, {:.5} meV; Omega {:.5e} vs {:.5e} / {:.5e} alone, meV/nm^2 per spin channel); relative phase: {}\n",
                            c.channels[0], c.channels[1], c.outcome, c.deltas[0], c.deltas[1], c.omega, c.omega_single[0], c.omega_single[1], c.relative_phase
                        );
                        coupled.push(serde_json::to_value(&c).unwrap_or_default());
                    }
                }
            }
            if a.json {
                let mut v = tables::header(&src, "solve");
                v["coupled_channels"] = serde_json::Value::Array(coupled);
                v["channels"] = serde_json::Value::Array(json_channels);
                v["warnings"] = serde_json::json!(model.warnings);
                print_json(&v);
            } else {
                print!("{text}");
                println!("* = chosen state. Delta/g is the interband coherence |<c_a^+ c_b>| per nm^2 and spin channel.");
            }
            Ok(Outcome::Done)
        }
        Command::Pattern(a) => {
            let (src, model) = load(&a.cfg)?;
            run_pattern(&src, &model, &a)
        }
        Command::Phases(a) => {
            let (src, model) = load(&a.cfg)?;
            check_threads(a.threads)?;
            let range = parse_range(&a.vary)?;
            let grid = Grid::new(vec![range])?;
            run_phases(&src, &model, &grid, &a)
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
            println!("\n== phases: phase diagram of channel XG against G.offset ==");
            let pa = PhasesArgs {
                cfg: ConfigArgs {
                    config: PathBuf::from("(embedded)"),
                    set: vec![],
                },
                vary: format!(
                    "G.offset={}:{}:{}",
                    DEMO_SCAN.0,
                    DEMO_SCAN.1,
                    a.points.min(25)
                ),
                tmax: None,
                temperatures: 21,
                channel: Some("XG".into()),
                uniform_only: true,
                fixed_density: false,
                structure_marks: 3,
                out: a.out.clone(),
                threads: a.threads,
            };
            let pgrid = Grid::new(vec![parse_range(&pa.vary)?])?;
            let phases = run_phases(&src, &model, &pgrid, &pa)?;
            println!("(the demo's phase diagram shows uniform states and the modulated instability line; plane-wave states of these anisotropic channels take seconds each: run `nestor phases` without --uniform-only for them)");
            println!(
                "\n== pattern: structures on the modulated line at {DEMO_PATTERN_T} K and the state at G.offset = {DEMO_PATTERN_OFFSET} meV =="
            );
            let pattern_src = src
                .with_overrides(&[Override::parse(&format!("G.offset={DEMO_PATTERN_OFFSET}"))?])?;
            let pattern_model = pattern_src.build(None)?;
            let pa = PatternArgs {
                cfg: ConfigArgs {
                    config: PathBuf::from("(embedded)"),
                    set: vec![],
                },
                temperature: DEMO_PATTERN_T,
                along: None,
                // 25 periods of the 0.8 nm charge-density wave.
                fov: 20.0,
                channel: Some("XG".into()),
                wavevectors: vec![],
                every_structure: false,
                json: false,
                out: a.out.clone(),
            };
            let pattern = run_pattern(&pattern_src, &pattern_model, &pa)?;
            println!("\nWrote tables and figures to {}/", a.out.display());
            Ok(match (outcome, phases, pattern) {
                (Outcome::Done, Outcome::Done, Outcome::Done) => Outcome::Done,
                (Outcome::PartlyFailed(m), _, _)
                | (_, Outcome::PartlyFailed(m), _)
                | (_, _, Outcome::PartlyFailed(m)) => Outcome::PartlyFailed(m),
            })
        }
    }
}

/// The index of the channel named by `--channel` (default: the first).
fn channel_index(model: &Model, name: Option<&String>) -> Result<usize, Failure> {
    match name {
        None => Ok(0),
        Some(n) => model
            .channels
            .iter()
            .position(|c| &c.label == n || c.name.as_ref() == Some(n))
            .ok_or_else(|| {
                Failure::Input(format!(
                    "--channel {n}: no such channel; channels: {}",
                    model
                        .channels
                        .iter()
                        .map(|c| c.label.clone())
                        .collect::<Vec<_>>()
                        .join(", ")
                ))
            }),
    }
}

/// Parses `--wavevectors "qx,qy;qx,qy"` lists into structures named custom1, custom2, ...
fn user_structures(lists: &[String]) -> Result<Vec<Structure>, Failure> {
    let mut out = Vec::new();
    for (i, l) in lists.iter().enumerate() {
        let mut qs = Vec::new();
        for part in l.split(';').map(str::trim).filter(|p| !p.is_empty()) {
            let nums: Vec<&str> = part.split(',').map(str::trim).collect();
            let parsed: Option<Vec<f64>> = nums.iter().map(|x| x.parse::<f64>().ok()).collect();
            match parsed.as_deref() {
                Some([x, y]) if x.is_finite() && y.is_finite() && x.hypot(*y) <= 1e3 => {
                    qs.push([*x, *y])
                }
                _ => {
                    return Err(Failure::Input(format!(
                        "--wavevectors {l}: `{part}` is not a wavevector qx,qy in 1/nm (finite, |q| <= 1000/nm)"
                    )))
                }
            }
        }
        if qs.is_empty() || qs.len() > 12 {
            return Err(Failure::Input(format!(
                "--wavevectors {l}: give 1 to 12 wavevectors as \"qx,qy;qx,qy;...\" in 1/nm"
            )));
        }
        if qs.iter().any(|q| q[0].hypot(q[1]) == 0.0) {
            return Err(Failure::Input(format!(
                "--wavevectors {l}: a wavevector is zero (the uniform state is always compared)"
            )));
        }
        out.push(Structure {
            name: format!("custom{}", i + 1),
            wavevectors: qs,
        });
    }
    Ok(out)
}

fn run_pattern(src: &ConfigSource, model: &Model, a: &PatternArgs) -> Result<Outcome, Failure> {
    if model.channels.is_empty() {
        return Err(Failure::Input(format!(
            "{}: the configuration has no [[channel]]: nothing to compute",
            src.origin
        )));
    }
    let channel = channel_index(model, a.channel.as_ref())?;
    if !(a.temperature.is_finite() && a.temperature > 0.0 && a.temperature <= 1e4) {
        return Err(Failure::Input(format!(
            "--temperature {}: must lie in (0, 10000] K (the quartic coefficients need T > 0)",
            a.temperature
        )));
    }
    if !(a.fov.is_finite() && a.fov > 0.0 && a.fov <= 1e4) {
        return Err(Failure::Input(format!(
            "--fov {}: must lie in (0, 10000] nm",
            a.fov
        )));
    }
    let ch = &model.channels[channel];
    let path = match &a.along {
        Some(p) => p.clone(),
        None => format!("{}.offset", model.pockets[ch.b].name),
    };
    // The path must name a field of the configuration.
    let probe = Override::parse(&format!("{path}=0"))
        .map_err(|e| Failure::Input(e.0.replace("--set", "--along")))?;
    src.value_of(&probe)
        .map_err(|e| Failure::Input(format!("--along {path}: {}", e.0)))?;
    let extra = user_structures(&a.wavevectors)?;
    std::fs::create_dir_all(&a.out).map_err(|e| {
        Failure::Input(format!(
            "--out {}: cannot create the directory: {e}",
            a.out.display()
        ))
    })?;
    let t = nestor::units::kelvin_to_mev(a.temperature);
    let ps = PatternSolver::default();
    let mut problems: Vec<String> = Vec::new();
    let (line, ranking) = match ps.line_point(src, channel, &path, t) {
        Ok((line, at_line)) => {
            let structures = PatternSolver::candidate_structures(&line, &extra);
            match ps.rank(&at_line, channel, &line, &structures) {
                Ok(r) => (Some(line), r),
                Err(e) => {
                    problems.push(format!("structure ranking: {e}"));
                    (Some(line), vec![])
                }
            }
        }
        Err(NestorError::Input(e)) => return Err(Failure::Input(e.0)),
        Err(NestorError::Numerical(e)) => {
            problems.push(format!("line point: {e}"));
            (None, vec![])
        }
    };
    let os = OrderedSolver::default();
    let mut candidates = single_wavevector_candidates(model, channel, t, &os)
        .map_err(|e| Failure::Computation(e.to_string()))?;
    if line.is_some() {
        match structure_candidates(model, channel, t, &ranking, &candidates, a.every_structure) {
            Ok(mut c) => candidates.append(&mut c),
            Err(e) => problems.push(format!("multi-wavevector states: {e}")),
        }
    }
    let chosen = lowest(&candidates);
    let waves = density_waves(model, ch, &candidates[chosen]);
    let unpaired =
        nestor::reports::pattern::unpaired_correlation(&waves, &candidates[chosen], a.fov);
    let report = PatternReport {
        src,
        model,
        channel,
        line: line.as_ref(),
        line_failure: problems.first().cloned(),
        structures: &ranking,
        candidates: &candidates,
        chosen,
        waves: &waves,
        fov: a.fov,
        unpaired_correlation: unpaired,
    };
    let stem = format!("pattern_{}", ch.label);
    let written =
        write_pattern(&report, &a.out, &stem).map_err(|e| Failure::Input(e.to_string()))?;
    if a.json {
        print_json(&pattern_json(&report));
    } else {
        print!("{}", pattern_text(&report));
        for w in &written {
            println!("wrote {}", w.display());
        }
    }
    for p in &problems {
        eprintln!("nestor: warning: {p}");
    }
    if problems.is_empty() {
        Ok(Outcome::Done)
    } else {
        Ok(Outcome::PartlyFailed(problems.join("; ")))
    }
}

fn run_phases(
    src: &ConfigSource,
    model: &Model,
    grid: &Grid,
    a: &PhasesArgs,
) -> Result<Outcome, Failure> {
    let channel = channel_index(model, a.channel.as_ref())?;
    if model.channels.is_empty() {
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
    let t_max = match a.tmax {
        Some(t) if t.is_finite() && t > 0.0 && t <= 1e4 => nestor::units::kelvin_to_mev(t),
        Some(t) => {
            return Err(Failure::Input(format!(
                "--tmax {t}: must lie in (0, 10000] K"
            )))
        }
        None => {
            // 1.2 times the highest modulated Tc at the ends and the middle of the axis.
            let pinned = model.pinned_couplings();
            let mut best: f64 = 0.0;
            for i in [0, grid.len() / 2, grid.len() - 1] {
                let m = nestor::sweeps::model_at(src, &pinned, grid, i)?;
                let ch = &m.channels[channel];
                let u = tc.uniform(&m, ch).map_err(NestorError::from)?;
                best = best.max(u.tc);
                let md = tc.modulated(&m, ch, &u).map_err(NestorError::from)?;
                best = best.max(md.tc.tc);
            }
            if best <= 0.0 {
                return Err(Failure::Input(
                    "phases: no instability at the ends or the middle of the axis; give --tmax"
                        .into(),
                ));
            }
            1.2 * best
        }
    };
    std::fs::create_dir_all(&a.out).map_err(|e| {
        Failure::Input(format!(
            "--out {}: cannot create the directory: {e}",
            a.out.display()
        ))
    })?;
    let opts = PhaseOptions {
        channel,
        t_max,
        temperatures: a.temperatures,
        modulated: !a.uniform_only && !a.fixed_density,
        fixed_density: a.fixed_density,
        threads: a.threads,
        progress: std::io::stderr().is_terminal(),
    };
    let mut d = phase_diagram(src, model, grid, &opts, &tc, &OrderedSolver::default())?;
    if !a.fixed_density && a.structure_marks > 0 {
        nestor::sweeps::phase_map::mark_structures(
            src,
            grid,
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
    let stem = format!("phases_{}", model.channels[channel].label);
    let written = nestor::reports::phases::write_phases(src, model, grid, &d, &a.out, &stem)
        .map_err(|e| Failure::Input(e.to_string()))?;
    for w in &written {
        println!("wrote {}", w.display());
    }
    let k = nestor::units::mev_to_kelvin;
    match d.tricritical {
        Some(p) => println!(
            "tricritical point: {} = {:.5}, T = {:.4} K{}",
            grid.axes[0].path(),
            p.value,
            k(p.t),
            if p.on_boundary {
                ""
            } else {
                " (preempted by the modulated state)"
            }
        ),
        None => println!("tricritical point: none in range"),
    }
    match d.lifshitz {
        Some(p) => println!(
            "Lifshitz point: {} = {:.5}, T = {:.4} K{}",
            grid.axes[0].path(),
            p.value,
            k(p.t),
            if p.on_boundary {
                ""
            } else {
                " (the uniform line is not second order there)"
            }
        ),
        None => println!("Lifshitz point: none in range"),
    }
    for f in &d.special_point_failures {
        eprintln!("nestor: warning: {f}");
    }
    let failed_cols = d.columns.iter().filter(|c| c.is_err()).count();
    let failed_cells: usize = d
        .columns
        .iter()
        .filter_map(|c| c.as_ref().ok())
        .map(|c| c.cells.iter().filter(|x| x.is_err()).count())
        .sum();
    if !d.special_point_failures.is_empty() {
        return Ok(Outcome::PartlyFailed(format!(
            "{} special-point search(es) failed: a missing tricritical or Lifshitz point may not mean none in range",
            d.special_point_failures.len()
        )));
    }
    if failed_cols + failed_cells > 0 {
        return Ok(Outcome::PartlyFailed(format!(
            "{failed_cols} columns and {failed_cells} grid points failed (reasons in the CSV)"
        )));
    }
    Ok(Outcome::Done)
}

/// The demo's pattern: temperature (K) and the Dirac-point offset of pocket G (meV) at which the
/// chosen state is computed (inside the modulated region at that temperature).
const DEMO_PATTERN_T: f64 = 2.0;
const DEMO_PATTERN_OFFSET: f64 = 184.6;

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
        .map_err(|e| Failure::Input(e.to_string()))?;
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
