//! `nestor scan` and `nestor tc` through the binary: a scan point is `tc --set` at the held
//! coupling (one visible coupling rule), and a curve through perfect nesting reports both Lifshitz points.

use nestor::units::mev_to_kelvin;
use serde_json::Value;
use std::path::PathBuf;
use std::process::Command;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Runs nestor with `args` from the crate root; panics with its stderr on failure.
fn nestor(args: &[&str]) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_nestor"))
        .args(args)
        .current_dir(root())
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

/// Runs `nestor scan CONFIG --vary VARY` into a fresh directory; returns its JSON and CSV.
fn scan(config: &str, vary: &str, name: &str) -> (Value, String) {
    let dir = std::env::temp_dir().join(format!("nestor-scan-cli-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    nestor(&[
        "scan",
        config,
        "--vary",
        vary,
        "--out",
        dir.to_str().unwrap(),
    ]);
    let read = |f: &str| std::fs::read_to_string(dir.join(f)).unwrap();
    let (json, csv) = (
        serde_json::from_str(&read("scan.json")).unwrap(),
        read("scan.csv"),
    );
    std::fs::remove_dir_all(&dir).ok();
    (json, csv)
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * a.abs().max(b.abs())
}

/// One coupling rule, visible in both outputs. On the demo surface (Dirac pockets: the pair
/// density of states changes with G.offset) a scan holds the g of its base configuration and says
/// so (`coupling_held` = g with that value at every point), while `tc` converts the lambda it was
/// given and says so. The scan point G.offset = 186 is reproduced by `tc` on the same file with
/// each channel's coupling given as the held g and `--set G.offset=186`. Before the rule was made
/// visible the two outputs disagreed (3.5497 K from the scan, 3.7368 K from `tc --set` for XG)
/// with nothing saying why.
#[test]
fn a_scan_point_is_tc_at_the_held_coupling() {
    let (scan, _) = scan("configs/demo_surface.toml", "G.offset=186:187:2", "agree");
    let point = &scan["points"][0];
    assert_eq!(point["values"][0].as_f64(), Some(186.0));
    let channels = point["channels"].as_array().unwrap();
    let mut text = std::fs::read_to_string(root().join("configs/demo_surface.toml")).unwrap();
    let base: Value =
        serde_json::from_str(&nestor(&["tc", "configs/demo_surface.toml", "--json"])).unwrap();
    for (ch, b) in channels.iter().zip(base["channels"].as_array().unwrap()) {
        assert_eq!(ch["coupling_held"]["key"], "g", "{ch}");
        let g = ch["coupling_held"]["value"].as_f64().unwrap();
        assert!(
            close(g, b["g_meV_nm2"].as_f64().unwrap()),
            "g held = base g"
        );
        assert_eq!(b["coupling_held"]["key"], "lambda");
        // Give this channel g instead of lambda (the demo gives lambda = 0.35 per channel).
        text = text.replacen("lambda = 0.35", &format!("g = {g:?}"), 1);
    }
    let dir = std::env::temp_dir().join(format!("nestor-held-g-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("held_g.toml");
    std::fs::write(&file, &text).unwrap();
    let tc: Value = serde_json::from_str(&nestor(&[
        "tc",
        file.to_str().unwrap(),
        "--set",
        "G.offset=186",
        "--json",
    ]))
    .unwrap();
    std::fs::remove_dir_all(&dir).ok();
    for (x, y) in tc["channels"].as_array().unwrap().iter().zip(channels) {
        for key in ["tc_uniform_K", "tc_modulated_K", "lambda", "g_meV_nm2"] {
            let (u, v) = (x[key].as_f64().unwrap(), y[key].as_f64().unwrap());
            assert!(close(u, v), "{key}: tc {u}, scan {v}");
        }
        assert_eq!(x["coupling_held"], y["coupling_held"]);
    }
}

/// A curve through perfect nesting has a Lifshitz point on each side, where the q^2 coefficient
/// of 1/g - chi vanishes on the uniform line. Reference, independent of the code: in weak
/// coupling the Lifshitz point coincides with the tricritical point, h = 1.0728 Tc0 at
/// T = 0.5615 Tc0 (Sarma 1963; Buzdin and Kachkachi 1997, cited from memory), with
/// Tc0 = 1.1339 x 5 meV x e^-4 = 0.10384 meV = 1.205 K and h = (h.offset - 100)/2 here: h.offset
/// = 100 -+ 0.2228 meV, T = 0.6766 K. The tolerance 1e-3 is twice the band-curvature separation
/// of the two points at cutoff/E_F = 0.05 (about 4e-4 in T/Tc0) and ten times below the old
/// error. The old scan reported one interval midpoint per curve, 99.7875 meV at an
/// interpolated 0.7562 K.
#[test]
fn every_lifshitz_point_of_a_curve_is_found() {
    let (scan, csv) = scan(
        "configs/reference/nested_parabolic.toml",
        "h.offset=99.6:100.45:18",
        "lifshitz",
    );
    let l = &scan["lifshitz"][0];
    let pts = l["points"].as_array().unwrap();
    assert_eq!(pts.len(), 2, "{l}");
    // The weak-coupling reference of the comment above, from its published numbers.
    let tc0 = 1.1338659 * 5.0 * (-4.0f64).exp();
    let (h, t_ref) = (1.0728 * tc0, mev_to_kelvin(0.5615 * tc0));
    for (p, want) in pts.iter().zip([100.0 - 2.0 * h, 100.0 + 2.0 * h]) {
        let (x, t) = (
            p["value"].as_f64().unwrap(),
            p["temperature_K"].as_f64().unwrap(),
        );
        assert!((x - want).abs() < 1e-3, "{x} vs {want}");
        assert!((t - t_ref).abs() < 1e-3, "{t} vs {t_ref}");
    }
    assert_eq!(l["value"], pts[0]["value"]);
    assert_eq!(l["temperature_K"], pts[0]["temperature_K"]);
    let comments = csv
        .lines()
        .filter(|s| s.contains("Lifshitz point at"))
        .count();
    assert_eq!(comments, 2, "{csv}");
}
