//! `nestor demo`: check, tc, a scan, phases and pattern on the embedded demonstration surface,
//! with tables and figures written to one directory.

use super::args::warn;
use super::pattern::PatternArgs;
use super::phases::PhasesArgs;
use super::scan::ScanJob;
use super::{check_threads, create_out, write_text, ConfigArgs, Failure, Outcome};
use clap::Args;
use nestor::config::{parse_range, ConfigSource, Override};
use nestor::model::Model;
use nestor::reports::tables;
use nestor::solvers::tc_channel::Method;
use nestor::solvers::TcSolver;
use nestor::sweeps::Grid;
use std::path::PathBuf;

/// The embedded demonstration surface.
pub const DEMO_CONFIG: &str = include_str!("../../configs/demo_surface.toml");

/// The demo's pattern: temperature (K) and the Dirac-point offset of pocket G (meV) at which the
/// chosen state is computed (inside the modulated region at that temperature).
const DEMO_PATTERN_T: f64 = 2.0;
const DEMO_PATTERN_OFFSET: f64 = 184.6;

/// The demo scan range of the Dirac point of pocket G, meV.
const DEMO_SCAN: (f64, f64) = (184.0, 190.0);

/// Options of `nestor demo`.
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

/// Runs every step of the demo; the outcome is the first partial failure among scan, phases and
/// pattern.
pub fn run(a: &DemoArgs) -> Result<Outcome, Failure> {
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
    create_out(&a.out)?;
    let s = TcSolver::default();
    tables_step(a, &src, &model, &s)?;
    println!("\n== scan: Tc against the Dirac-point offset of pocket G ==");
    let range = parse_range(&format!(
        "G.offset={}:{}:{}",
        DEMO_SCAN.0, DEMO_SCAN.1, a.points
    ))?;
    let grid = Grid::new(vec![range])?;
    let job = ScanJob {
        grid: &grid,
        solver: &s,
        method: Method::Exact,
        threads: a.threads,
        out: &a.out,
        stem: "demo",
    };
    let outcome = job.run(&src, &model)?;
    let phases = phases_step(a, &src, &model)?;
    let pattern = pattern_step(a, &src)?;
    println!("\nWrote tables and figures to {}/", a.out.display());
    Ok(match (outcome, phases, pattern) {
        (Outcome::Done, Outcome::Done, Outcome::Done) => Outcome::Done,
        (Outcome::PartlyFailed(m), _, _)
        | (_, Outcome::PartlyFailed(m), _)
        | (_, _, Outcome::PartlyFailed(m)) => Outcome::PartlyFailed(m),
    })
}

/// The check and Tc tables, printed and written as JSON.
fn tables_step(
    a: &DemoArgs,
    src: &ConfigSource,
    model: &Model,
    s: &TcSolver,
) -> Result<(), Failure> {
    println!("== check: the demonstration surface ==");
    print!("{}", tables::check_text(model));
    let check = tables::check_json(src, model);
    write_text(
        &a.out.join("check.json"),
        &serde_json::to_string_pretty(&check).unwrap_or_default(),
    )?;
    println!("\n== tc: critical temperatures ==");
    let results = super::tc::all_channels(model, s, Method::Exact)?;
    print!("{}", tables::tc_text(model, &results));
    let tcj = tables::tc_json(src, model, &results);
    write_text(
        &a.out.join("tc.json"),
        &serde_json::to_string_pretty(&tcj).unwrap_or_default(),
    )
}

/// The phase diagram of channel XG against G.offset (uniform states and the modulated line).
fn phases_step(a: &DemoArgs, src: &ConfigSource, model: &Model) -> Result<Outcome, Failure> {
    println!("\n== phases: phase diagram of channel XG against G.offset ==");
    let pa = PhasesArgs {
        cfg: embedded(),
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
    let phases = super::phases::run_on(src, model, &pgrid, &pa)?;
    println!("(the demo's phase diagram shows uniform states and the modulated instability line; plane-wave states of these anisotropic channels take seconds each: run `nestor phases` without --uniform-only for them)");
    Ok(phases)
}

/// The pattern on the modulated line at the demo temperature and the state at the demo offset.
fn pattern_step(a: &DemoArgs, src: &ConfigSource) -> Result<Outcome, Failure> {
    println!(
        "\n== pattern: structures on the modulated line at {DEMO_PATTERN_T} K and the state at G.offset = {DEMO_PATTERN_OFFSET} meV =="
    );
    let pattern_src =
        src.with_overrides(&[Override::parse(&format!("G.offset={DEMO_PATTERN_OFFSET}"))?])?;
    let pattern_model = pattern_src.build(None)?;
    let pa = PatternArgs {
        cfg: embedded(),
        temperature: DEMO_PATTERN_T,
        along: None,
        // 25 periods of the 0.8 nm charge-density wave.
        fov: Some(20.0),
        channel: Some("XG".into()),
        wavevectors: vec![],
        every_structure: false,
        json: false,
        out: a.out.clone(),
    };
    super::pattern::run_on(&pattern_src, &pattern_model, &pa)
}

/// The configuration arguments standing for the embedded surface.
fn embedded() -> ConfigArgs {
    ConfigArgs {
        config: PathBuf::from("(embedded)"),
        set: vec![],
    }
}
