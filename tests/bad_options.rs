//! Bad command-line options reach the user as a clear message and exit code 2, never as a
//! panic: `--set`, `--vary`, other options and files, and the pattern options. Also checks that
//! a legal but questionable input only warns, that `--set` changes the result, and the keys of
//! `check --json`. The configuration cases are in tests/bad_input.rs.

mod common;

use common::cli::*;
use std::path::Path;

#[test]
fn bad_set() {
    let cases: &[(&str, &str, &[&str])] = &[
        (
            "unknown name",
            "zz.offset=3",
            &["zz.offset", "no pocket or channel is named `zz`"],
        ),
        (
            "non-numeric value",
            "e.offset=abc",
            &["--set e.offset=abc", "`abc` is not a number"],
        ),
        (
            "unknown key",
            "e.colour=1",
            &["`colour` is not a numeric key", "pocket keys: offset"],
        ),
        (
            "channel key on a pocket",
            "e.cutoff=3",
            &["`e` is a pocket", "its numeric keys are offset"],
        ),
        (
            "pocket key on a channel",
            "eh.offset=3",
            &["`eh` is a channel", "lambda, g, cutoff, overlap"],
        ),
        ("no value", "e.offset", &["--set e.offset", "PATH=VALUE"]),
        ("no key", "e=3", &["PATH must be NAME.key"]),
        (
            "nan value",
            "e.offset=nan",
            &["--set e.offset=nan", "must be finite"],
        ),
        (
            "centre without component",
            "e.center=1",
            &["center has two components", "center.x"],
        ),
        (
            "value out of range",
            "e.mass=-1",
            &["`mass`", "-1 is out of range", "(0, 1000]"],
        ),
        (
            "surface without a [surface] table",
            "surface.a=0.5",
            &["surface.a", "no [surface] table"],
        ),
    ];
    for (case, set, fragments) in cases {
        let out = run_with(&nested(), &["check", "{cfg}", "--set", set]);
        assert_bad(&format!("--set {case}"), &out, fragments);
    }
}

// Bad `--vary`: malformed range, N = 0, unknown key or name, the same path twice.
#[test]
fn bad_vary() {
    let cases: &[(&str, &[&str], &[&str])] = &[
        (
            "two fields",
            &["e.offset=1:2"],
            &["--vary e.offset=1:2", "PATH=FROM:TO:N"],
        ),
        (
            "N = 0",
            &["e.offset=-101:-99:0"],
            &["--vary e.offset=-101:-99:0", "N from 1 to 100000"],
        ),
        (
            "non-numeric bound",
            &["e.offset=a:-99:3"],
            &["--vary e.offset=a:-99:3", "PATH=FROM:TO:N"],
        ),
        (
            "unknown key",
            &["e.colour=1:2:3"],
            &["--vary e.colour", "`colour` is not a numeric key"],
        ),
        (
            "unknown name",
            &["zz.offset=1:2:3"],
            &["--vary zz.offset", "no pocket or channel is named `zz`"],
        ),
        (
            "same path twice",
            &["e.offset=-101:-99:2", "e.offset=-101:-99:2"],
            &["--vary", "e.offset is given twice"],
        ),
    ];
    for (case, varies, fragments) in cases {
        let out_dir = TempDir::new("scan");
        let mut args = vec!["scan", "{cfg}", "--out", out_dir.path()];
        for v in *varies {
            args.extend(["--vary", v]);
        }
        let out = run_with(&nested(), &args);
        assert_bad(&format!("--vary {case}"), &out, fragments);
    }
}

// Bad options and files: --rtol out of range or not a number, --threads 0, a missing file, tc
// without channels.
#[test]
fn bad_options_and_files() {
    for rtol in ["1", "0", "1e-20", "nan"] {
        let out = run_with(&nested(), &["tc", "{cfg}", "--rtol", rtol]);
        assert_bad(
            &format!("--rtol {rtol}"),
            &out,
            &["--rtol", "[1e-12, 1e-3]"],
        );
    }
    let out = run_with(&nested(), &["tc", "{cfg}", "--rtol", "abc"]);
    assert_bad("--rtol abc", &out, &["'abc'", "--rtol"]);
    let out_dir = TempDir::new("threads");
    let out = run_with(
        &nested(),
        &[
            "scan",
            "{cfg}",
            "--vary",
            "e.offset=-101:-99:2",
            "--threads",
            "0",
            "--out",
            out_dir.path(),
        ],
    );
    assert_bad("--threads 0", &out, &["--threads 0", "[1, 1024]"]);

    let missing = std::env::temp_dir().join(format!(
        "nestor-bad-input-{}-does-not-exist.toml",
        std::process::id()
    ));
    assert!(!Path::new(&missing).exists());
    let missing = missing.to_str().expect("UTF-8 path");
    let out = nestor(&["check", missing]);
    assert_bad(
        "missing file",
        &out,
        &["cannot read configuration", missing],
    );

    let no_channels = pocket("e", "electron", E_BODY) + &pocket("h", "hole", H_BODY);
    let out = run_with(&no_channels, &["tc", "{cfg}"]);
    assert_bad("tc without channels", &out, &["no [[channel]]"]);
}

// A shell reaching past a parabolic band bottom is legal: exit 0 with a warning on stderr.
#[test]
fn shell_past_band_bottom_warns() {
    let config = pair(
        "mass = 0.2\noffset = -3.0",
        "mass = 0.2\noffset = 3.0",
        "lambda = 0.2\ncutoff = 5.0",
    );
    let out = run_with(&config, &["check", "{cfg}"]);
    let stderr = text(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "stderr: {stderr}");
    assert!(stderr.contains("warning"), "stderr: {stderr}");
    assert!(stderr.contains("band bottom"), "stderr: {stderr}");
    assert!(!stderr.contains("panicked"), "stderr: {stderr}");
    assert!(!out.stdout.is_empty());
}

fn check_json(config: &str, sets: &[&str]) -> serde_json::Value {
    let mut args = vec!["check", "{cfg}", "--json"];
    for s in sets {
        args.extend(["--set", s]);
    }
    let out = run_with(config, &args);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", text(&out.stderr));
    serde_json::from_slice(&out.stdout).expect("check --json prints JSON")
}

fn num(v: &serde_json::Value, what: &str) -> f64 {
    v.as_f64()
        .unwrap_or_else(|| panic!("{what} is not a number: {v}"))
}

// `--set h.offset=105` moves the hole band edge and the mismatch h = (E0e + E0h)/2 to 2.5 meV.
#[test]
fn set_changes_the_result() {
    let before = check_json(&nested(), &[]);
    let after = check_json(&nested(), &["h.offset=105"]);
    assert_eq!(num(&before["pockets"][1]["offset_meV"], "offset"), 100.0);
    assert_eq!(num(&after["pockets"][1]["offset_meV"], "offset"), 105.0);
    let h0 = num(&before["channels"][0]["mismatch_meV"], "mismatch");
    let h1 = num(&after["channels"][0]["mismatch_meV"], "mismatch");
    assert!(h0.abs() < 1e-9, "mismatch before: {h0}");
    assert!((h1 - 2.5).abs() < 1e-9, "mismatch after: {h1}");
    // A channel override too: lambda is echoed back, g follows lambda / nu.
    let l = check_json(&nested(), &["eh.lambda=0.3"]);
    assert!((num(&l["channels"][0]["lambda"], "lambda") - 0.3).abs() < 1e-12);
}

// `check --json` on the demonstration surface parses and has the documented keys.
#[test]
fn check_json_has_the_keys() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("configs/demo_surface.toml");
    let config = std::fs::read_to_string(path).expect("read the demo configuration");
    let v = check_json(&config, &[]);
    let pockets = v["pockets"].as_array().expect("pockets is an array");
    let names: Vec<&str> = pockets
        .iter()
        .map(|p| p["name"].as_str().expect("pocket name"))
        .collect();
    assert_eq!(names, ["G", "X", "Y"]);
    for p in pockets {
        assert!(num(&p["density_per_nm2"], "density") > 0.0);
        assert!(num(&p["dos_per_meV_nm2"], "dos") > 0.0);
        let kf = p["kf_per_nm"].as_array().expect("kf_per_nm is an array");
        assert_eq!(kf.len(), 2);
        assert!(kf.iter().all(|k| num(k, "kf") > 0.0));
    }
    let channels = v["channels"].as_array().expect("channels is an array");
    assert_eq!(channels.len(), 2);
    for c in channels {
        let pair: Vec<&str> = c["pockets"]
            .as_array()
            .expect("channel pockets")
            .iter()
            .map(|p| p.as_str().expect("pocket name"))
            .collect();
        assert_eq!(pair.len(), 2);
        assert_eq!(pair[1], "G");
        let nu = num(&c["nu_per_meV_nm2"], "nu");
        let g = num(&c["g_meV_nm2"], "g");
        let lambda = num(&c["lambda"], "lambda");
        assert!(nu > 0.0 && g > 0.0);
        assert!((lambda - 0.35).abs() < 1e-9, "lambda {lambda}");
        assert!((g * nu - lambda).abs() < 1e-9 * lambda.max(1.0));
        assert!(num(&c["mismatch_meV"], "mismatch").is_finite());
    }
}

// `pattern`: bad temperatures, fields of view, paths, wavevector lists and channels are input
// errors naming the option and the allowed range, and nothing is written.
#[test]
fn bad_pattern_options() {
    let out_dir = TempDir::new("pattern");
    let o = out_dir.path();
    let cases: Vec<(Vec<&str>, Vec<&str>)> = vec![
        (
            vec!["--temperature", "0"],
            vec!["--temperature 0", "(0, 10000] K"],
        ),
        (
            vec!["--temperature=-1"],
            vec!["--temperature -1", "(0, 10000] K"],
        ),
        (
            vec!["--temperature", "nan"],
            vec!["--temperature", "(0, 10000] K"],
        ),
        (
            vec!["--temperature", "0.5", "--fov", "0"],
            vec!["--fov 0", "(0, 1000000] nm"],
        ),
        (
            vec!["--temperature", "0.5", "--fov=-3"],
            vec!["--fov -3", "(0, 1000000] nm"],
        ),
        (
            vec!["--temperature", "0.5", "--along", "x.offset"],
            vec!["--along x.offset", "no pocket"],
        ),
        (
            vec!["--temperature", "0.5", "--along", "offset"],
            vec!["--along"],
        ),
        (
            vec!["--temperature", "0.5", "--wavevectors", "1,2,3"],
            vec!["--wavevectors 1,2,3", "qx,qy"],
        ),
        (
            vec!["--temperature", "0.5", "--wavevectors", "0.01,0;0,0"],
            vec!["--wavevectors", "zero"],
        ),
        (
            vec!["--temperature", "0.5", "--channel", "zz"],
            vec!["--channel zz", "no such channel"],
        ),
    ];
    for (extra, fragments) in cases {
        let mut args = vec!["pattern", "{cfg}", "--out", o];
        args.extend(extra.iter().copied());
        let out = run_with(&nested(), &args);
        assert_bad(&format!("pattern {extra:?}"), &out, &fragments);
        assert!(
            !Path::new(o).exists(),
            "pattern {extra:?}: the output directory was created"
        );
    }
}
