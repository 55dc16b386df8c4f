//! Example: a small map of critical temperatures over mismatch and cutoff, computed through the
//! library alone (configuration file and overrides -> model -> `TcSolver`), printed as a table.
//!
//! The reference pair of `configs/reference/nested_parabolic.toml` (two circular parabolic pockets
//! of mass 0.2 at one zone point, Fermi energy 100 meV), changed at each point with the same
//! overrides that `--set` applies, with lambda = 0.25 at every point. The rows vary the mismatch
//! h (meV, half the Fermi-energy difference, hole minus electron), the columns the cutoff Lambda
//! (meV). Each cell gives the
//! uniform Tc and the modulated Tc in K, with a `*` where the modulated state sets in first.
//! The theory behind the numbers is in the crate docs (`nestor::theory`).
//!
//! Run with `cargo run --release --example tc_map`.

use nestor::config::{ConfigSource, Override};
use nestor::error::NestorError;
use nestor::solvers::tc::TcSolver;
use nestor::units::mev_to_kelvin;

/// The reference pair: pockets "e" and "h" (mass 0.2, band edges -100 and +100 meV), channel "eh"
/// with lambda = 0.25.
const REFERENCE: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/configs/reference/nested_parabolic.toml"
);

/// Uniform and modulated Tc (meV) of the reference pair with mismatch `h` and cutoff `cutoff`
/// (both meV): both band edges move up by h, and lambda is converted to g at each point.
fn tc_pair(
    base: &ConfigSource,
    solver: &TcSolver,
    h: f64,
    cutoff: f64,
) -> Result<(f64, f64), NestorError> {
    let overrides = [
        Override::parse(&format!("e.offset={}", -100.0 + h))?,
        Override::parse(&format!("h.offset={}", 100.0 + h))?,
        Override::parse(&format!("eh.cutoff={cutoff}"))?,
    ];
    let model = base.with_overrides(&overrides)?.build(None)?;
    let channel = &model.channels()[0];
    let uniform = solver.uniform(&model, channel)?;
    let modulated = solver.modulated(&model, channel, &uniform)?;
    Ok((uniform.tc, modulated.tc.tc))
}

fn main() -> Result<(), NestorError> {
    let base = ConfigSource::load(std::path::Path::new(REFERENCE))?;
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
            let (uniform, modulated) = tc_pair(&base, &solver, h, cutoff)?;
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
