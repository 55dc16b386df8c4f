//! Example: a small map of critical temperatures over mismatch and cutoff, computed through the
//! library alone, without a configuration file: the model is built in code from pocket and
//! channel specs, and each point of the map is a typed parameter point of that frozen model
//! (`Model::with`), printed as a table.
//!
//! Two circular parabolic pockets of mass 0.2 at one zone point (band edges -100 and +100 meV, so
//! Fermi energy 100 meV), lambda = 0.25 at every point. The rows vary the mismatch h (meV, half
//! the Fermi-energy difference, hole minus electron: both band edges move up by h), the columns
//! the cutoff Lambda (meV). Each cell gives the uniform Tc and the modulated Tc in K, with a `*`
//! where the modulated state sets in first. The theory behind the numbers is in the crate docs
//! (`nestor::theory`).
//!
//! Run with `cargo run --release --example tc_map`.

use nestor::error::NestorError;
use nestor::model::{
    ChannelSpec, CouplingInput, DispersionSpec, Model, Param, PocketKind, PocketSpec, SpinMatrix,
    SpinSpec,
};
use nestor::solvers::tc::{TcReport, TcSolver, TcStatus};
use nestor::units::mev_to_kelvin;

/// A spin-degenerate circular parabolic pocket at the zone centre.
fn pocket(name: &str, kind: PocketKind, mass: f64, offset: f64) -> PocketSpec {
    PocketSpec {
        name: name.into(),
        kind,
        center: [0.0, 0.0],
        angle_deg: 0.0,
        dispersion: DispersionSpec::Mass {
            mass: [mass, mass],
            offset,
        },
        spin: SpinSpec::Degenerate,
    }
}

/// The nested reference pair, built in code (validated by `Model::new`).
fn reference_pair() -> Result<Model, NestorError> {
    let channel = ChannelSpec {
        name: Some("eh".into()),
        pockets: [0, 1],
        coupling: CouplingInput::Lambda(0.25),
        cutoff: 5.0,
        spin_matrix: SpinMatrix::Identity,
        overlap: 1.0,
    };
    let pockets = vec![
        pocket("e", PocketKind::Electron, 0.2, -100.0),
        pocket("h", PocketKind::Hole, 0.2, 100.0),
    ];
    Ok(Model::new(pockets, vec![channel], None)?)
}

/// Uniform and modulated Tc (meV) of the pair with mismatch `h` and cutoff `cutoff` (both meV),
/// lambda = 0.25 (converted to g at the point); None where there is no instability above the
/// temperature floor.
fn tc_pair(
    base: &Model,
    solver: &TcSolver,
    h: f64,
    cutoff: f64,
) -> Result<(Option<f64>, Option<f64>), NestorError> {
    let model = base.with(&[
        (Param::Offset { pocket: 0 }, -100.0 + h),
        (Param::Offset { pocket: 1 }, 100.0 + h),
        (Param::Cutoff { channel: 0 }, cutoff),
        (Param::Lambda { channel: 0 }, 0.25),
    ])?;
    let channel = &model.channels()[0];
    let uniform = solver.uniform(&model, channel)?;
    let modulated = solver.modulated(&model, channel, &uniform)?;
    let found = |r: &TcReport| (r.status == TcStatus::Unstable).then_some(r.tc);
    Ok((found(&uniform), found(&modulated.tc)))
}

fn main() -> Result<(), NestorError> {
    let base = reference_pair()?;
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
            let kelvin =
                |t: Option<f64>| t.map_or("none".into(), |t| format!("{:.4}", mev_to_kelvin(t)));
            print!("  {:>10} {:>10}{mark}", kelvin(uniform), kelvin(modulated));
        }
        println!();
    }
    println!("* the modulated (q != 0) instability sets in above the uniform one");
    println!("none: no instability above the temperature floor");
    Ok(())
}
