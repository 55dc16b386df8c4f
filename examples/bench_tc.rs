//! Benchmark of the critical-temperature path on the machine at hand: one uniform Tc, one
//! modulated Tc, an anisotropic channel, a point without instability, a 101-point curve and a
//! 41 x 41 map, at the default accuracy (each
//! susceptibility to 1e-7 relative; Tc roots to 1e-10 relative; the radial rule checked at the
//! root). Run: cargo run --release --example bench_tc [-- --quick]
//!
//! The model is the weak-coupling reference pair (two circular parabolic pockets of equal mass,
//! cutoff/E_F = 0.05, lambda = 0.25), at a mismatch beyond the Lifshitz point so that the
//! modulated search is exercised.

use nestor::config::{parse_range, ConfigSource, Override};
use nestor::solvers::tc_channel::{channel_tc, Method};
use nestor::solvers::TcSolver;
use nestor::sweeps::{tc_scan::scan_tc, Grid};
use std::time::Instant;

const CONFIG: &str = r#"
[[pocket]]
name = "e"
kind = "electron"
center = [0.0, 0.0]
mass = 0.2
offset = -100.0

[[pocket]]
name = "h"
kind = "hole"
center = [0.0, 0.0]
mass = 0.2
offset = 100.23

[[channel]]
name = "eh"
pockets = ["e", "h"]
lambda = 0.25
cutoff = 5.0
"#;

/// The demonstration surface (the same file the binary embeds).
const DEMO: &str = include_str!("../configs/demo_surface.toml");

fn main() {
    let quick = std::env::args().any(|a| a == "--quick");
    let src = ConfigSource::from_text("benchmark pair", CONFIG).unwrap();
    let m = src.build(None).unwrap();
    let ch = &m.channels()[0];
    let solver = TcSolver::default();
    let reps = 20;
    let t0 = Instant::now();
    let mut u = None;
    for _ in 0..reps {
        u = Some(solver.uniform(&m, ch).unwrap());
    }
    let u = u.unwrap();
    println!(
        "uniform Tc: {:.6} meV ({} chi evaluations), {:.3} ms each",
        u.tc,
        u.evaluations,
        t0.elapsed().as_secs_f64() * 1e3 / reps as f64
    );
    let t0 = Instant::now();
    let mut md = None;
    for _ in 0..5 {
        let u = solver.uniform(&m, ch).unwrap();
        md = Some(solver.modulated(&m, ch, &u).unwrap());
    }
    let md = md.unwrap();
    println!(
        "modulated Tc (uniform, then the search over q): {:.6} meV at |q*| = {:.5}/nm ({} chi evaluations), {:.1} ms each",
        md.tc.tc,
        md.q[0].hypot(md.q[1]),
        md.tc.evaluations,
        t0.elapsed().as_secs_f64() * 1e3 / 5.0
    );
    let _ = channel_tc(&m, ch, &solver, Method::Weak).unwrap();
    // Two harder single points: an anisotropic channel (helical Dirac pocket and an anisotropic
    // electron pocket; six directions of q), and a point with no instability at all (the scan
    // runs down to the temperature floor, where chi(q) has sharp angular structure).
    for (label, text, set) in [
        (
            "anisotropic channel XG of the demo surface at G.offset = 185",
            DEMO,
            "G.offset=185",
        ),
        (
            "no instability (reference pair at h.offset = 100.5)",
            CONFIG,
            "h.offset=100.5",
        ),
    ] {
        let src = ConfigSource::from_text(label, text)
            .unwrap()
            .with_overrides(&[Override::parse(set).unwrap()])
            .unwrap();
        let m = src.build(None).unwrap();
        let ch = &m.channels()[0];
        let t0 = Instant::now();
        let u = solver.uniform(&m, ch).unwrap();
        let md = solver.modulated(&m, ch, &u).unwrap();
        println!(
            "{label}: uniform {:.6} meV, modulated {:.6} meV ({} + {} chi evaluations), {:.0} ms",
            u.tc,
            md.tc.tc,
            u.evaluations,
            md.tc.evaluations,
            t0.elapsed().as_secs_f64() * 1e3
        );
    }
    let base = src.build(None).unwrap();
    for threads in [1, 2] {
        let grid = Grid::new(vec![parse_range("h.offset=99.9:100.3:101").unwrap()]).unwrap();
        let t0 = Instant::now();
        let pts = scan_tc(
            &src,
            &base,
            &grid,
            &solver,
            Method::Exact,
            Some(threads),
            false,
        )
        .unwrap();
        let failed = pts.iter().filter(|p| p.result.is_err()).count();
        println!(
            "101-point curve, {threads} thread(s): {:.2} s ({failed} failed)",
            t0.elapsed().as_secs_f64()
        );
        if quick {
            continue;
        }
        let grid = Grid::new(vec![
            parse_range("h.offset=99.9:100.3:41").unwrap(),
            parse_range("eh.cutoff=4.5:5.5:41").unwrap(),
        ])
        .unwrap();
        let t0 = Instant::now();
        let pts = scan_tc(
            &src,
            &base,
            &grid,
            &solver,
            Method::Exact,
            Some(threads),
            false,
        )
        .unwrap();
        let failed = pts.iter().filter(|p| p.result.is_err()).count();
        println!(
            "41 x 41 map, {threads} thread(s): {:.2} s ({failed} failed)",
            t0.elapsed().as_secs_f64()
        );
    }
}
