//! `nestor scan`: uniform and modulated Tc and |q*| over one or two swept parameters, written as
//! CSV, JSON and figures.

use super::{check_threads, create_out, ConfigArgs, Failure, Outcome, SolveOpts};
use clap::Args;
use nestor::config::{parse_range, ConfigSource};
use nestor::model::Model;
use nestor::reports::scan as scan_report;
use nestor::solvers::tc_channel::Method;
use nestor::solvers::TcSolver;
use nestor::sweeps::{lifshitz::scan_lifshitz, tc_scan::scan_tc, Grid};
use std::io::IsTerminal;
use std::path::{Path, PathBuf};

/// Options of `nestor scan`.
#[derive(Args, Debug)]
pub struct ScanArgs {
    /// The configuration and its overrides.
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
    /// The Tc solver options.
    #[command(flatten)]
    pub solve: SolveOpts,
}

/// Parses the swept ranges and runs the scan.
pub fn run(a: &ScanArgs) -> Result<Outcome, Failure> {
    let (src, model) = a.cfg.load()?;
    let s = a.solve.solver()?;
    let ranges = a
        .vary
        .iter()
        .map(|v| parse_range(v))
        .collect::<Result<Vec<_>, _>>()?;
    check_threads(a.threads)?;
    let grid = Grid::new(ranges)?;
    let job = ScanJob {
        grid: &grid,
        solver: &s,
        method: a.solve.method.into(),
        threads: a.threads,
        out: &a.out,
        stem: "scan",
    };
    job.run(&src, &model)
}

/// One scan: the grid, the solver and method, the threads and where the files go.
pub struct ScanJob<'a> {
    /// The grid of swept values.
    pub grid: &'a Grid,
    /// The Tc solver.
    pub solver: &'a TcSolver,
    /// Exact integral or weak-coupling closed form.
    pub method: Method,
    /// Worker threads (None: all cores).
    pub threads: Option<usize>,
    /// Output directory.
    pub out: &'a Path,
    /// File stem of the CSV, JSON and figures.
    pub stem: &'a str,
}

impl ScanJob<'_> {
    /// Runs the scan, writes its files and prints the summary; failed points make the outcome
    /// `PartlyFailed`.
    pub fn run(&self, src: &ConfigSource, model: &Model) -> Result<Outcome, Failure> {
        create_out(self.out)?;
        let progress = std::io::stderr().is_terminal();
        let points = scan_tc(
            src,
            model,
            self.grid,
            self.solver,
            self.method,
            self.threads,
            progress,
        )?;
        let lifshitz = scan_lifshitz(src, model, self.grid, &points, self.solver, self.threads)?;
        let scan = scan_report::ScanResult {
            points: &points,
            method: self.method,
            lifshitz: &lifshitz,
        };
        let written = scan_report::write_scan(src, model, self.grid, &scan, self.out, self.stem)
            .map_err(|e| Failure::Input(e.to_string()))?;
        for w in &written {
            println!("wrote {}", w.display());
        }
        let failed = points.iter().filter(|p| p.result.is_err()).count();
        print!(
            "{}",
            scan_report::summary(model, self.grid, &points, &lifshitz)
        );
        if failed > 0 {
            return Ok(Outcome::PartlyFailed(format!(
                "{failed} of {} points failed (their reasons are in the CSV and JSON)",
                points.len()
            )));
        }
        Ok(Outcome::Done)
    }
}
