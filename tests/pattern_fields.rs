//! The fields of view of `nestor pattern`'s density maps end to end (the planning itself is
//! unit-tested in `nestor::observables::fields`): the default field follows the wavevectors, and a
//! requested `--fov` that cannot be sampled is shrunk with a warning on stderr and in the JSON.
//! The state is the stripe of the heavy reference pair at h.offset = 6 meV, T = 0.5 K (periods
//! 99 nm, 49 nm and 33 nm).

mod common;

use common::cli::{nestor, text, TempDir};

/// Runs the pattern of the heavy pair with `extra` options; returns (JSON on stdout, stderr).
fn heavy_pattern(extra: &[&str]) -> (serde_json::Value, String) {
    let out_dir = TempDir::new("pattern-fields");
    let mut args = vec![
        "pattern",
        "configs/reference/heavy_pockets.toml",
        "--set",
        "h.offset=6.0",
        "--temperature",
        "0.5",
        "--json",
        "--out",
        out_dir.path(),
    ];
    args.extend_from_slice(extra);
    let out = nestor(&args);
    let stderr = text(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "stderr: {stderr}");
    let v = serde_json::from_slice(&out.stdout).expect("JSON on stdout");
    (v, stderr)
}

/// The longest period of the modulated density waves, nm.
fn longest_period(v: &serde_json::Value) -> f64 {
    v["density_modulation"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|w| w["period_nm"].as_f64())
        .fold(0.0, f64::max)
}

// The old default field was 60 nm whatever the period: 0.6 of the 99 nm stripe period here (and
// 0.009 of the 6.5 micrometre period of the nested pair near its Lifshitz point).
#[test]
fn default_field_holds_two_envelope_periods() {
    let (v, stderr) = heavy_pattern(&[]);
    let period = longest_period(&v);
    assert!(period > 90.0, "{period}");
    let fov = v["field_of_view_nm"].as_f64().unwrap();
    assert!(fov >= 2.0 * period, "field {fov} nm, period {period} nm");
    assert!(v["requested_field_of_view_nm"].is_null());
    assert_eq!(v["map_notes"].as_array().unwrap().len(), 0);
    assert!(!stderr.contains("--fov"), "{stderr}");
}

// A 9 micrometre field cannot hold 8 points per 33 nm period in 1024 samples: the old code drew
// it with 1024 samples (3.7 per period, aliased) without a word. Now the map is shrunk to the largest
// field that can be sampled, and stderr and the JSON say so.
#[test]
fn too_large_fov_is_shrunk_with_a_warning() {
    let (v, stderr) = heavy_pattern(&["--fov", "9000"]);
    assert!(
        stderr.contains("warning: --fov 9000 nm cannot be sampled"),
        "{stderr}"
    );
    assert!(stderr.contains("allowed (0, "), "{stderr}");
    let notes = v["map_notes"].as_array().unwrap();
    assert_eq!(notes.len(), 1);
    assert!(notes[0].as_str().unwrap().contains("--fov 9000 nm"));
    assert_eq!(v["requested_field_of_view_nm"].as_f64(), Some(9000.0));
    let map = &v["maps"][0];
    let fov = map["fov_nm"].as_f64().unwrap();
    let shortest = v["density_modulation"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|w| w["period_nm"].as_f64())
        .fold(f64::INFINITY, f64::min);
    let samples = map["samples"].as_f64().unwrap();
    assert!(fov < 9000.0);
    assert!(samples * shortest / fov >= 8.0 - 1e-9, "{map}");
}
