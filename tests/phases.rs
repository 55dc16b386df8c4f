//! The phase diagram: tricritical and Lifshitz points found separately on the uniform line, the
//! first-order line at low temperature, and the `solve` / `phases` command-line outputs.

mod common;

use common::{nested_pair, tol};
use nestor::config::{parse_range, ConfigSource};
use nestor::solvers::ordered::OrderedSolver;
use nestor::solvers::TcSolver;
use nestor::sweeps::phase_map::{phase_diagram, PhaseOptions};
use nestor::sweeps::Grid;
use std::process::Command;

const TC0: f64 = 1.133_865_9 * 5.0 * 0.018_315_638_888_734_18; // 1.1339 cutoff e^-4

/// On the weak-coupling reference pair the tricritical point (beta = 0) lies at T = 0.5615 Tc0,
/// h = 1.0728 Tc0 (Sarma 1963; Saint-James, Sarma, Thomas 1969) and the Lifshitz point
/// (q-curvature = 0) coincides with it (Buzdin and Kachkachi 1997, citation not checked against
/// the paper; the coincidence is derived in the crate docs, `theory::landau`, and the Lifshitz
/// point is compared here with `weak::lifshitz`, found from the angular average of the
/// weak-coupling margin; finite cutoff/E_F separates the two points by ~4e-4 in T,
/// `theory::checks`). Both are found by separate root searches. Among uniform and normal states the first-order line at low T approaches h = Delta0/sqrt(2) (Clogston
/// 1962, Chandrasekhar 1962). Tolerances: 2e-3 in T/Tc0 and h/Tc0; 5e-3 relative on the Clogston
/// field (the lowest row is at T = 0.05 Tc0, and the line is interpolated between columns).
#[test]
fn tricritical_lifshitz_and_first_order_line() {
    let (src, m) = nested_pair(0.25, 5.0, 100.0, 0.0);
    // h = (offset - 100)/2 from 1.01 to 1.31 Tc0.
    let (lo, hi) = (100.0 + 2.0 * 1.01 * TC0, 100.0 + 2.0 * 1.31 * TC0);
    let grid = Grid::new(vec![parse_range(&format!("h.offset={lo}:{hi}:13")).unwrap()]).unwrap();
    let opts = PhaseOptions {
        channel: 0,
        t_max: 0.8 * TC0,
        temperatures: 5,
        modulated: false,
        fixed_density: false,
        threads: None,
        progress: false,
    };
    let d = phase_diagram(
        &src,
        &m,
        &grid,
        &opts,
        &TcSolver::default(),
        &OrderedSolver::default(),
    )
    .unwrap();
    let h_of = |x: f64| (x - 100.0) / 2.0 / TC0;
    let tcp = d.branches[0].tricritical.expect("a tricritical point");
    assert!(
        (tcp.t / TC0 - 0.5615).abs() < tol::SPECIAL_POINT,
        "T_tcp = {}",
        tcp.t / TC0
    );
    assert!(
        (h_of(tcp.value) - 1.0728).abs() < tol::SPECIAL_POINT,
        "h_tcp = {}",
        h_of(tcp.value)
    );
    let lp = d.branches[0].lifshitz.expect("a Lifshitz point");
    assert!((lp.t / TC0 - 0.5615).abs() < tol::SPECIAL_POINT);
    assert!((h_of(lp.value) - h_of(tcp.value)).abs() < 1e-3);
    let (t_weak, h_weak) = nestor::solvers::tc::weak::lifshitz().unwrap();
    assert!((lp.t / TC0 - t_weak).abs() < tol::SPECIAL_POINT);
    assert!((h_of(lp.value) - h_weak).abs() < tol::SPECIAL_POINT);
    // The lowest row of the first-order line.
    let t_low = d.temperatures[0];
    let (x, _) = d.branches[0]
        .first_order
        .iter()
        .copied()
        .find(|&(_, t)| t == t_low)
        .expect("a first-order point at the lowest temperature");
    let delta0 = 5.0 / 4f64.sinh();
    assert!(
        (h_of(x) * TC0 / (delta0 / 2f64.sqrt()) - 1.0).abs() < 5e-3,
        "h1 = {} Tc0",
        h_of(x)
    );
}

fn run(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_nestor"))
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Runs `phases` on the reference pair with `args` after the configuration, writing into a
/// fresh directory named after `tag`: exit code, standard output and error, the directory.
fn run_phases(tag: &str, args: &[&str]) -> (i32, String, String, std::path::PathBuf) {
    let cfg = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/configs/reference/nested_parabolic.toml"
    );
    let dir = std::env::temp_dir().join(format!("nestor-{tag}-{}", std::process::id()));
    let mut all = vec!["phases", cfg];
    all.extend_from_slice(args);
    all.extend(["--out", dir.to_str().unwrap()]);
    let (code, out, err) = run(&all);
    (code, out, err, dir)
}

/// The JSON report of `phases` in `dir`.
fn phases_json(dir: &std::path::Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(dir.join("phases_eh.json")).unwrap()).unwrap()
}

/// `solve --json` lists every solution with the keys of the interface and marks the chosen one;
/// bad temperatures are rejected with exit code 2.
#[test]
fn solve_command_outputs() {
    let cfg = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/configs/reference/nested_parabolic.toml"
    );
    let (code, out, err) = run(&[
        "solve",
        cfg,
        "--temperature",
        "0.3",
        "--set",
        "h.offset=100.26",
        "--json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let ch = &v["channels"][0];
    let sols = ch["solutions"].as_array().unwrap();
    assert!(sols.len() >= 3);
    for s in sols {
        for k in [
            "state",
            "delta_meV",
            "q_per_nm",
            "omega_meV_per_nm2",
            "stability",
        ] {
            assert!(!s[k].is_null(), "missing {k}");
        }
    }
    let chosen = ch["chosen"].as_u64().unwrap() as usize;
    assert_eq!(sols[chosen]["stability"], "stable");
    // Beyond the Clogston field at low T, the plane wave is chosen (the crate docs,
    // `theory::checks`).
    assert_eq!(sols[chosen]["state"], "modulated");
    let (code, _, err) = run(&["solve", cfg, "--temperature", "-1"]);
    assert_eq!(code, 2);
    assert!(err.contains("--temperature"));
}

/// `phases` writes the tables and the figure, and its JSON holds the lines as point lists and
/// the tricritical and Lifshitz objects.
#[test]
fn phases_command_outputs() {
    let (code, _, err, dir) = run_phases(
        "phases",
        &[
            "--vary",
            "h.offset=100.18:100.30:7",
            "--temperatures",
            "4",
            "--uniform-only",
        ],
    );
    assert_eq!(code, 0, "{err}");
    let v = phases_json(&dir);
    for k in [
        "uniform_instability",
        "modulated_instability",
        "first_order",
        "spinodal_uniform",
    ] {
        assert!(v["lines"][k].is_array(), "{k}");
    }
    // The special points are found by root searches, not on the grid: both lie at
    // T = 0.5615 Tc0, h = 1.0728 Tc0 (offset = 100 + 2 h meV) in weak coupling (see
    // `tricritical_lifshitz_and_first_order_line`). The tricritical point lies on the phase
    // boundary; the Lifshitz point, with the modulated states left out, is reported off it.
    let tc0_kelvin = nestor::units::mev_to_kelvin(TC0);
    for (k, on_boundary) in [("tricritical", true), ("lifshitz", false)] {
        let t = v[k]["temperature_K"].as_f64().expect(k) / tc0_kelvin;
        let h = (v[k]["value"].as_f64().expect(k) - 100.0) / 2.0 / TC0;
        assert!((t - 0.5615).abs() < tol::SPECIAL_POINT, "{k}: T = {t} Tc0");
        assert!((h - 1.0728).abs() < tol::SPECIAL_POINT, "{k}: h = {h} Tc0");
        assert_eq!(v[k]["on_phase_boundary"], on_boundary, "{k}");
    }
    // Every line point is a number inside the scanned window: offsets 100.18..100.30 meV,
    // temperatures between 0 and Tc0 (the largest uniform Tc, at h = 0).
    for k in [
        "uniform_instability",
        "modulated_instability",
        "first_order",
    ] {
        let points = v["lines"][k].as_array().unwrap();
        assert!(!points.is_empty(), "{k} is empty");
        for p in points {
            let t = p["temperature_K"].as_f64().expect(k);
            let x = p["value"].as_f64().expect(k);
            assert!(t > 0.0 && t < tc0_kelvin, "{k}: T = {t} K");
            assert!(
                (100.18 - 1e-9..=100.30 + 1e-9).contains(&x),
                "{k}: offset {x}"
            );
        }
    }
    // The uniform instability falls as the mismatch grows.
    let uniform = v["lines"]["uniform_instability"].as_array().unwrap();
    for w in uniform.windows(2) {
        assert!(w[1]["value"].as_f64() > w[0]["value"].as_f64());
        assert!(w[1]["temperature_K"].as_f64() < w[0]["temperature_K"].as_f64());
    }
    assert!(dir.join("phases_eh.png").exists() && dir.join("phases_eh.svg").exists());
    let _ = std::fs::remove_dir_all(&dir);
}

/// Bad options of `phases` and `solve` give exit code 2 and a message naming the option.
#[test]
fn bad_phase_options_are_rejected() {
    let cfg = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/configs/reference/nested_parabolic.toml"
    );
    for (args, fragment) in [
        (
            vec![
                "phases",
                cfg,
                "--vary",
                "h.offset=100:100.3:5",
                "--temperatures=1",
            ],
            "--temperatures",
        ),
        (
            vec!["phases", cfg, "--vary", "h.offset=100:100.3:5", "--tmax=-2"],
            "--tmax",
        ),
        (
            vec![
                "phases",
                cfg,
                "--vary",
                "h.offset=100:100.3:5",
                "--channel",
                "zz",
            ],
            "--channel zz",
        ),
        (
            vec!["phases", cfg, "--vary", "h.colour=100:100.3:5"],
            "colour",
        ),
        (vec!["solve", cfg, "--temperature", "nan"], "--temperature"),
    ] {
        let (code, out, err) = run(&args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(err.contains(fragment), "{args:?}: {err}");
        assert!(out.is_empty() && !err.contains("panicked"));
    }
}

/// A sweep through perfect nesting (h.offset = 100 meV) has one first-order line, tricritical
/// and Lifshitz point on each side, stored per branch. The old code merged both sides into one
/// `first_order` list alternating between them ((99.742, 0.036 K), (100.258, 0.036 K),
/// (99.745, 0.145 K), ...) and reported only the left-hand tricritical and Lifshitz points.
/// The reference pair is symmetric in h: the two sides mirror each other about 100 meV
/// (to the root tolerance, 1e-6 meV).
#[test]
fn sweep_through_nesting_keeps_the_sides_apart() {
    let (code, out, err, dir) = run_phases(
        "branches",
        &[
            "--vary",
            "h.offset=99.6:100.4:17",
            "--temperatures",
            "11",
            "--uniform-only",
            "--structure-marks",
            "0",
        ],
    );
    assert_eq!(code, 0, "{err}");
    let v = phases_json(&dir);
    let branches = v["branches"].as_array().expect("branches");
    assert_eq!(branches.len(), 2);
    let mut points = Vec::new();
    for (b, side) in branches.iter().zip([-1.0, 1.0]) {
        let first_order = b["lines"]["first_order"].as_array().unwrap();
        assert!(!first_order.is_empty());
        for p in first_order {
            let x = p["value"].as_f64().unwrap();
            assert!(
                (x - 100.0) * side > 0.0,
                "first-order point {x} on the wrong side"
            );
        }
        for k in ["tricritical", "lifshitz"] {
            let x = b[k]["value"].as_f64().unwrap_or_else(|| panic!("{k}: {b}"));
            assert!((x - 100.0) * side > 0.0, "{k} at {x}");
            points.push((k, x, b[k]["temperature_K"].as_f64().unwrap()));
        }
    }
    for k in ["tricritical", "lifshitz"] {
        let p: Vec<_> = points.iter().filter(|p| p.0 == k).collect();
        assert!((p[0].1 + p[1].1 - 200.0).abs() < 1e-6, "{k}: {p:?}");
        assert!((p[0].2 / p[1].2 - 1.0).abs() < 1e-6, "{k}: {p:?}");
    }
    assert!(v.get("lines").is_none() && v.get("tricritical").is_none());
    assert_eq!(out.matches("tricritical point (h.offset from").count(), 2);
    let _ = std::fs::remove_dir_all(&dir);
}

/// `phases --fixed-density` is refused (exit code 2) with a message naming what is missing and
/// what works instead. The old code ran it and wrote Omega = NaN into every CSV row, with
/// cells flipping between "undetermined" and "uniform" inside the ordered region.
#[test]
fn phases_at_fixed_density_is_refused() {
    let (code, out, err, dir) = run_phases(
        "fixed",
        &[
            "--vary",
            "h.offset=100:100.3:3",
            "--temperatures",
            "3",
            "--fixed-density",
        ],
    );
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("--fixed-density") && err.contains("Maxwell"),
        "{err}"
    );
    assert!(err.contains("solve --fixed-density"), "{err}");
    assert!(out.is_empty() && !dir.join("phases_eh.csv").exists());
}

/// A grid temperature on the uniform instability line itself, where the normal state is not a
/// minimum (alpha < 0 by rounding) and the gap root lies below the gap grid's resolution, or an
/// integral over the flat Omega does not converge, is solved a relative `AT_TC_NUDGE` away and
/// says so in its note. The old code failed the cell there ("Omega has no minimum on the gap
/// grid ... refine the grid", or here "shell integral ... not converged") and the whole `phases`
/// run exited with code 1. The demonstration surface's XG channel at its uniform Tc is such a
/// point (the solver alone still fails there).
#[test]
fn grid_temperature_at_tc_is_solved_nearby() {
    let cfg = concat!(env!("CARGO_MANIFEST_DIR"), "/configs/demo_surface.toml");
    let src = ConfigSource::load(std::path::Path::new(cfg)).unwrap();
    let m = src.build(None).unwrap();
    let (tc, os) = (TcSolver::default(), OrderedSolver::default());
    let ch = &m.channels()[0];
    let t_at = tc.uniform(&m, ch).unwrap().tc;
    let old = os.solve(&m, ch, t_at, None);
    assert!(old.is_err(), "{old:?}");
    let grid = Grid::new(vec![parse_range("G.offset=188:188.001:2").unwrap()]).unwrap();
    let opts = PhaseOptions {
        channel: 0,
        t_max: t_at,
        temperatures: 2,
        modulated: false,
        fixed_density: false,
        threads: None,
        progress: false,
    };
    let d = phase_diagram(&src, &m, &grid, &opts, &tc, &os).unwrap();
    assert_eq!(d.temperatures[1], t_at);
    let column = d.columns[0].as_ref().unwrap();
    let cell = column.cells[1].as_ref().expect("the cell at Tc is solved");
    assert!(cell.note.as_deref().unwrap().contains("instability line"));
    assert!(cell.delta < 1e-2 * t_at, "Delta = {}", cell.delta);
}
