//! The labels of ordered states and their spectra: the normal state's stability against every
//! instability (uniform and modulated), the gapless arcs (whole Fermi surface for the normal
//! state, ends at roots of the quasiparticle energy, one arc through 0/360 degrees), `solve` above
//! every critical temperature and at T = 0, and the typed labels of states and coupled channels.

mod common;

use common::cli::{nestor, text};
use common::nested_pair;
use nestor::config::{ConfigSource, Override};
use nestor::kernels::Shell;
use nestor::model::{Channel, Model, PocketKind};
use nestor::observables::spectrum;
use nestor::solvers::ordered::{
    plane_wave_q_scale, OrderedSolver, PairOutcome, RelativePhase, Solution, Stability, StateKind,
};
use serde_json::Value;

/// An arc end is a root of the ray's lowest quasiparticle energy to this (meV): the root in angle
/// is converged far below it, the energy's slope in angle is of order Delta.
const END_ENERGY: f64 = 1e-7;

fn reference(name: &str) -> String {
    format!("{}/{name}", env!("CARGO_MANIFEST_DIR"))
}

fn load(path: &str) -> Model {
    ConfigSource::load(std::path::Path::new(&reference(path)))
        .unwrap()
        .build(None)
        .unwrap()
}

/// `nestor solve ... --json` on the reference pair: the channel's JSON.
fn solve_json(args: &[&str]) -> Value {
    let cfg = reference("configs/reference/nested_parabolic.toml");
    let mut all = vec!["solve", cfg.as_str()];
    all.extend_from_slice(args);
    all.push("--json");
    let out = nestor(&all);
    assert!(out.status.success(), "{args:?}: {}", text(&out.stderr));
    let v: Value = serde_json::from_str(&text(&out.stdout)).unwrap();
    v["channels"][0].clone()
}

/// Below the modulated Tc the normal state is unstable at q*: the old label was "metastable"
/// (only g chi(0, T) < 1 was looked at). Independent reference: h.offset = 100.3 is the mismatch
/// h = 0.15 meV = 1.44 Tc0 (Tc0 = 0.10384 meV), and T = 0.1 K = 0.083 Tc0; the weak-coupling
/// modulated line (digamma equation solved with mpmath, `theory::checks`) lies at h = 1.3519 Tc0
/// for T = 0.2 Tc0 and 1.6189 Tc0 for T = 0.05 Tc0, so the point is inside the modulated region
/// and outside the uniform one (the uniform line ends below h = 1.0855 Tc0).
#[test]
fn normal_state_below_the_modulated_tc_is_unstable() {
    let c = solve_json(&["--set", "h.offset=100.3", "--temperature", "0.1"]);
    let normal = &c["solutions"][0];
    assert_eq!(normal["state"], "normal");
    assert_eq!(normal["stability"], "unstable", "{normal}");
    assert_eq!(normal["unstable_towards"], "modulated");
    assert!(normal["instability_q_per_nm"][0].as_f64().unwrap() > 0.0);
    let chosen = &c["solutions"][c["chosen"].as_u64().unwrap() as usize];
    assert_eq!(chosen["state"], "modulated");
}

/// At 1000 K (allowed) the answer is the normal state with a reason; the old code exited 1 with
/// "the shell is empty" (the plane-wave scan reached wavevectors beyond the pockets).
#[test]
fn far_above_every_tc_the_normal_state_is_the_answer() {
    let c = solve_json(&["--temperature", "1000"]);
    assert_eq!(c["solutions"].as_array().unwrap().len(), 1, "{c}");
    let normal = &c["solutions"][0];
    assert_eq!(normal["omega_meV_per_nm2"], 0.0);
    assert_eq!(normal["stability"], "stable");
    assert_eq!(normal["gapless"], true);
    assert!(c["reason"]
        .as_str()
        .unwrap()
        .contains("above every critical temperature"));
}

/// T = 0 works with the uniform states only: at h = 0.05 meV the uniform state wins, at h = 0.3
/// meV the normal state is kept but labelled unstable towards the modulated state.
#[test]
fn zero_temperature_uniform_only() {
    let c = solve_json(&[
        "--set",
        "h.offset=100.05",
        "--temperature",
        "0",
        "--uniform-only",
    ]);
    let chosen = &c["solutions"][c["chosen"].as_u64().unwrap() as usize];
    assert_eq!(chosen["state"], "uniform");
    assert_eq!(c["solutions"][0]["unstable_towards"], "uniform");
    let c = solve_json(&[
        "--set",
        "h.offset=100.3",
        "--temperature",
        "0",
        "--uniform-only",
    ]);
    assert_eq!(c["chosen"], 0);
    assert_eq!(c["solutions"][0]["unstable_towards"], "modulated");
    assert!(c["reason"].as_str().unwrap().contains("unstable"));
}

/// The normal state is gapless on the whole Fermi surface: one arc [0, 360]. At h = 0 and T = 0
/// the old code listed scores of fragments under a degree (E = |xi| is zero only at sampled xi = 0)
/// and "gapless": false.
#[test]
fn normal_state_is_gapless_with_one_full_arc() {
    let (_, m) = nested_pair(0.25, 5.0, 100.0, 0.0);
    let ch = &m.channels()[0];
    let st = OrderedSolver::default().solve(&m, ch, 0.0, None).unwrap();
    let sp = spectrum(&m, ch, &st.solutions[0]).unwrap();
    assert!(sp.gap.is_none());
    assert_eq!(sp.gapless_arcs_deg, vec![[0.0, 360.0]]);
}

/// The lowest quasiparticle energy on the ray at `deg` degrees, on a fine grid of xi (meV).
fn ray_min(m: &Model, ch: &Channel, sol: &Solution, deg: f64) -> f64 {
    let shell = Shell::for_channel(m, ch, sol.q).unwrap();
    let u = [deg.to_radians().cos(), deg.to_radians().sin()];
    let span = sol.delta + ch.mismatch().abs();
    let d2 = sol.delta * sol.delta;
    (0..=20000)
        .map(|i| -span + 2.0 * span * i as f64 / 20000.0)
        .filter(|&xi| xi >= shell.xi_lo && xi <= shell.cutoff)
        .map(|xi| {
            let r = shell.xi_radius(u, xi).unwrap();
            let p = shell.at(shell.point_on_ray(u, r));
            (p.xi() * p.xi() + d2 * p.w).sqrt() - p.h().abs()
        })
        .fold(f64::INFINITY, f64::min)
}

/// The uniform state of two rotated ellipses at 0.3 K, gapless where the mismatch h_k exceeds the
/// gap (a Sarma state, here the stable one): its arcs end where the ray's lowest
/// quasiparticle energy vanishes, gapless inside and gapped outside. The old ends were the whole
/// degrees of the coarse rays (0 to 43, 69 to 223 and 249 to 359 degrees), not roots.
#[test]
fn sarma_arcs_end_at_roots_of_the_quasiparticle_energy() {
    let m = load("tests/golden/configs/ellipses.toml");
    let ch = &m.channels()[0];
    let t = nestor::units::kelvin_to_mev(0.3);
    let st = OrderedSolver::default().solve(&m, ch, t, None).unwrap();
    let sarma = st
        .solutions
        .iter()
        .find(|s| s.state == StateKind::Uniform)
        .expect("the uniform solution");
    let sp = spectrum(&m, ch, sarma).unwrap();
    assert_eq!(sp.gapless_arcs_deg.len(), 2, "{sp:?}");
    for [a, b] in sp.gapless_arcs_deg {
        for (end, inside) in [(a, a + 0.5), (b, b - 0.5)] {
            let e = ray_min(&m, ch, sarma, end);
            assert!(e.abs() < END_ENERGY, "end {end}: E = {e:e}");
            assert!(ray_min(&m, ch, sarma, inside) < 0.0);
            let outside = 2.0 * end - inside;
            assert!(ray_min(&m, ch, sarma, outside) > 0.0);
        }
    }
}

/// The plane wave along x below the modulated Tc is gapless on one arc through 0 degrees (from
/// about 221 to 139 degrees); the old code split it at 0/360 into two.
#[test]
fn an_arc_through_zero_degrees_is_one_arc() {
    let path = reference("configs/reference/nested_parabolic.toml");
    let m = ConfigSource::load(std::path::Path::new(&path))
        .unwrap()
        .with_overrides(&[Override::parse("h.offset=100.3").unwrap()])
        .unwrap()
        .build(None)
        .unwrap();
    let ch = &m.channels()[0];
    let t = nestor::units::kelvin_to_mev(0.1);
    let qs = plane_wave_q_scale(&m, ch, t);
    let st = OrderedSolver::default().solve(&m, ch, t, Some(qs)).unwrap();
    let pw = st.chosen();
    assert_eq!(pw.state, StateKind::Modulated);
    let sp = spectrum(&m, ch, pw).unwrap();
    assert_eq!(sp.gapless_arcs_deg.len(), 1, "{sp:?}");
    let [a, b] = sp.gapless_arcs_deg[0];
    assert!(a < 360.0 && b > 360.0, "{a} {b}");
    // Mirror-symmetric about the x axis.
    assert!((a + b - 720.0).abs() < 1e-6, "{a} {b}");
}

/// The typed labels print and serialise as the strings the tables used before.
#[test]
fn labels_are_the_serialised_strings() {
    let ser = |v: Value| v.as_str().unwrap().to_string();
    for k in [StateKind::Normal, StateKind::Uniform, StateKind::Modulated] {
        assert_eq!(k.to_string(), ser(serde_json::to_value(k).unwrap()));
    }
    for s in [
        Stability::Stable,
        Stability::Metastable,
        Stability::Unstable,
    ] {
        assert_eq!(s.to_string(), ser(serde_json::to_value(s).unwrap()));
    }
    for p in [PocketKind::Electron, PocketKind::Hole, PocketKind::Dirac] {
        assert_eq!(p.to_string(), ser(serde_json::to_value(p).unwrap()));
    }
    assert_eq!(
        serde_json::to_value(PairOutcome::Compete).unwrap(),
        "compete"
    );
    assert_eq!(
        serde_json::to_value(PairOutcome::Coexist).unwrap(),
        "coexist"
    );
    for r in [RelativePhase::Free, RelativePhase::FreeUmklappWouldPin] {
        assert_eq!(r.to_string(), ser(serde_json::to_value(r).unwrap()));
        assert!(r.to_string().starts_with("free"));
    }
}
