//! Benchmark of the pattern path on the machine at hand: the line point, the ranking of the six
//! named structures at one temperature (four-insertion loops with the real dispersions to 1e-6
//! relative, and the weak-coupling closed form), and one nonlinear multi-harmonic solve per
//! structure kind. Run: cargo run --release --example bench_pattern
//!
//! The model is the weak-coupling reference pair (two circular parabolic pockets of equal mass,
//! cutoff/E_F = 0.05, lambda = 0.25, Tc0 = 0.1038 meV), at T = 0.3 Tc0 and T = 0.1 Tc0.

use nestor::config::{ConfigSource, Override};
use nestor::kernels::weak_structures::structure_quadruples_weak;
use nestor::model::structure::Structure;
use nestor::solvers::pattern::PatternSolver;
use nestor::solvers::pattern_state::{solve_structure, HarmonicCheck, PatternOptions};
use nestor::solvers::relative_phases::best_phases;
use nestor::solvers::tc::weak::modulated_line;
use std::time::Instant;

const CONFIG: &str = include_str!("../configs/reference/nested_parabolic.toml");

fn main() {
    let src = ConfigSource::from_text("reference pair", CONFIG).expect("reference configuration");
    let tc0 = 1.133_865_9 * 5.0 * (-4.0f64).exp();
    let ps = PatternSolver::default();
    for tt in [0.3, 0.1] {
        let t = tt * tc0;
        let start = Instant::now();
        let (line, at) = ps.line_point(&src, 0, "h.offset", t).expect("line point");
        let t_line = start.elapsed();
        let structures = PatternSolver::candidate_structures(&line, &[]);
        let start = Instant::now();
        let ranked = ps.rank(&at, 0, &line, &structures).expect("ranking");
        let t_rank = start.elapsed();
        let best = ranked.iter().find(|r| r.preferred).map(|r| r.name.clone());
        println!(
            "T = {tt} Tc0: line point {t_line:.2?}; exact ranking of six structures {t_rank:.2?} (preferred {best:?})"
        );
        let (h, q) = modulated_line(tt).expect("weak line");
        let start = Instant::now();
        let mut names = Vec::new();
        for s in Structure::all_named([q, 0.0]) {
            let d = structure_quadruples_weak(tt, h, &s.wavevectors).expect("weak loops");
            let c = best_phases(s.len(), &d.quadruples, &d.values);
            names.push((s.name.clone(), c.quartic / (s.len() * s.len()) as f64));
        }
        let t_weak = start.elapsed();
        let weak_best = names
            .iter()
            .min_by(|a, b| a.1.total_cmp(&b.1))
            .map(|x| x.0.clone());
        println!(
            "  weak-coupling ranking of six structures {t_weak:.2?} (preferred {weak_best:?})"
        );
    }
    // Nonlinear solves inside the modulated region: h = 1.15 Tc0 at T = 0.3 Tc0.
    let t = 0.3 * tc0;
    let o = Override::parse(&format!("h.offset={}", 100.0 + 2.0 * 1.15 * tc0)).expect("override");
    let m = src
        .with_overrides(&[o])
        .and_then(|s| s.build(None))
        .expect("model");
    let (_, qq) = modulated_line(0.3).expect("weak line");
    let v = 2.0 * 38.099_821_2 / 0.2 * (100.0f64 / (38.099_821_2 / 0.2)).sqrt();
    let q = 2.0 * qq * tc0 / v;
    for (name, order, check) in [
        ("stripe", 3, HarmonicCheck::Resolve),
        ("square", 2, HarmonicCheck::Evaluate),
        ("hexagon", 2, HarmonicCheck::Evaluate),
    ] {
        let s = Structure::named(name, [q, 0.0]).expect("structure");
        let opts = PatternOptions {
            order,
            harmonic_check: check,
            ..PatternOptions::default()
        };
        let start = Instant::now();
        let st = solve_structure(
            &m,
            0,
            &s.wavevectors,
            &vec![0.0; s.len()],
            t,
            0.5 * tc0,
            &opts,
        );
        let el = start.elapsed();
        match st {
            Ok(st) => println!(
                "nonlinear {name} (m = {order}, {check:?} at m + 1): {el:.2?}, {} iterations, Omega {:.4e} meV/nm^2, harmonic change {:.1e}, grid change {:.1e}",
                st.iterations, st.omega, st.harmonic_change, st.grid_change
            ),
            Err(e) => println!("nonlinear {name}: failed after {el:.2?}: {e}"),
        }
    }
}
