//! Example: a small map of critical temperatures over mismatch and cutoff, computed through the
//! library alone (configuration text -> model -> `TcSolver`), printed as a table.
//!
//! Two circular parabolic pockets of mass 0.2 at one zone point (Fermi energy 100 meV) with
//! lambda = 0.25 at every point. The rows vary the mismatch h (meV, half the Fermi-energy
//! difference, hole minus electron), the columns the cutoff Lambda (meV). Each cell gives the
//! uniform Tc and the modulated Tc in K, with a `*` where the modulated state sets in first.
//! The theory behind the numbers is in the crate docs (`nestor::theory`).
//!
//! Run with `cargo run --release --example tc_map`.

use nestor::config::ConfigSource;
use nestor::error::NestorError;
use nestor::solvers::tc::TcSolver;
use nestor::units::mev_to_kelvin;

/// Fermi energy of both pockets, meV.
const FERMI_ENERGY: f64 = 100.0;
/// Dimensionless coupling lambda = g nu at every point.
const LAMBDA: f64 = 0.25;

/// The configuration of the nested pair with mismatch `h` and cutoff `cutoff` (both meV).
fn pair_text(h: f64, cutoff: f64) -> String {
    format!(
        r#"
[[pocket]]
name = "e"
kind = "electron"
center = [0.0, 0.0]
mass = 0.2
offset = {electron_edge}

[[pocket]]
name = "h"
kind = "hole"
center = [0.0, 0.0]
mass = 0.2
offset = {hole_edge}

[[channel]]
pockets = ["e", "h"]
lambda = {LAMBDA}
cutoff = {cutoff}
"#,
        electron_edge = -FERMI_ENERGY + h,
        hole_edge = FERMI_ENERGY + h,
    )
}

/// Uniform and modulated Tc (meV) at one point of the map.
fn tc_pair(solver: &TcSolver, h: f64, cutoff: f64) -> Result<(f64, f64), NestorError> {
    let model = ConfigSource::from_text("tc map", &pair_text(h, cutoff))?.build(None)?;
    let channel = &model.channels[0];
    let uniform = solver.uniform(&model, channel)?;
    let modulated = solver.modulated(&model, channel, &uniform)?;
    Ok((uniform.tc, modulated.tc.tc))
}

fn main() -> Result<(), NestorError> {
    let solver = TcSolver::default();
    let cutoffs = [3.0, 5.0, 8.0];
    let mismatches = [0.0, 0.05, 0.1, 0.15, 0.2];
    print!("{:>8}", "h (meV)");
    for c in cutoffs {
        print!("  {:>22}", format!("Lambda = {c} meV"));
    }
    println!();
    print!("{:>8}", "");
    for _ in cutoffs {
        print!("  {:>10} {:>11}", "uniform K", "modulated K");
    }
    println!();
    for h in mismatches {
        print!("{h:>8.3}");
        for cutoff in cutoffs {
            let (uniform, modulated) = tc_pair(&solver, h, cutoff)?;
            let mark = if modulated > uniform { "*" } else { " " };
            print!(
                "  {:>10.4} {:>10.4}{mark}",
                mev_to_kelvin(uniform),
                mev_to_kelvin(modulated)
            );
        }
        println!();
    }
    println!("* the modulated (q != 0) instability sets in above the uniform one");
    Ok(())
}
