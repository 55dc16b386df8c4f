//! Input rules between the configuration and the model: an override (`--set`, `--vary`,
//! `--along`) changes a value, never the kind of a pocket, the way its dispersion is given or
//! its spin structure; and a channel whose form factor kills the pair density of states says why
//! and what would pair its pockets. Each case runs the built `nestor` binary.

mod common;

use common::cli::*;

/// Two Dirac cones at the zone centre with the default textures (winding 1, phase 0): A is the
/// upper cone (Dirac point below the Fermi level), B the lower one. `extra_b` goes into B's
/// table, `ch` into the channel's.
fn cones(extra_b: &str, ch: &str) -> String {
    pocket("A", "dirac", "velocity = 300.0\noffset = -50.0")
        + &pocket(
            "B",
            "dirac",
            &format!("velocity = 300.0\noffset = 50.0\n{extra_b}"),
        )
        + &channel("A", "B", ch)
}

// `--set e.phase=10` on a spin-degenerate pocket: the old code added a helical spin table (the
// density of e halved) and exited 0.
#[test]
fn set_phase_of_a_degenerate_pocket_is_refused() {
    let out = run_with(&nested(), &["check", "{cfg}", "--set", "e.phase=10"]);
    assert_bad(
        "--set e.phase",
        &out,
        &[
            "e.phase",
            "pocket e is spin-degenerate",
            "texture phase exists only for a helical pocket",
            "spin = { winding = ..., phase = ... }",
        ],
    );
    // The same pocket written as `spin = "degenerate"`.
    let explicit = pair(
        "mass = 0.2\noffset = -100.0\nspin = \"degenerate\"",
        H_BODY,
        CH_BODY,
    );
    let out = run_with(&explicit, &["check", "{cfg}", "--set", "e.phase=10"]);
    assert_bad(
        "--set e.phase, explicit",
        &out,
        &["pocket e is spin-degenerate"],
    );
}

// `--vary` and `--along` give the same message through the typed parameters.
#[test]
fn vary_and_along_phase_of_a_degenerate_pocket_are_refused() {
    let out = run_with(
        &nested(),
        &[
            "scan",
            "{cfg}",
            "--vary",
            "h.phase=0:90:3",
            "--out",
            "/nonexistent",
        ],
    );
    assert_bad(
        "--vary h.phase",
        &out,
        &["h.phase", "pocket h is spin-degenerate"],
    );
    let out = run_with(
        &nested(),
        &[
            "pattern",
            "{cfg}",
            "--temperature",
            "0.5",
            "--along",
            "h.phase",
        ],
    );
    assert_bad(
        "--along h.phase",
        &out,
        &["h.phase", "pocket h is spin-degenerate"],
    );
}

// A helical pocket keeps taking a phase, and a Dirac pocket without `spin` (helical, winding 1)
// too; the phase changes the result.
#[test]
fn set_phase_of_a_helical_pocket_is_allowed() {
    let base = cones("", "g = 100.0\ncutoff = 5.0");
    let out = run_with(&base, &["check", "{cfg}", "--set", "B.phase=180", "--json"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let turned = text(&out.stdout);
    let out = run_with(&base, &["check", "{cfg}", "--json"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert_ne!(turned, text(&out.stdout), "the phase must change the model");
}

// Keys that would change how a pocket's dispersion is given: the old code inserted them and
// failed later with a message about the file ("give either `mass` + `offset`, or `kf` + `vf`,
// not both") that did not name the override.
#[test]
fn set_cannot_add_dispersion_keys() {
    for (set, fragments) in [
        (
            "e.kf=0.7",
            &[
                "e.kf",
                "pocket e (electron) has no `kf`",
                "`mass` + `offset`",
            ][..],
        ),
        ("e.velocity=300", &["e.velocity", "has no `velocity`"][..]),
    ] {
        let out = run_with(&nested(), &["check", "{cfg}", "--set", set]);
        assert_bad(&format!("--set {set}"), &out, fragments);
    }
    let kf = pair("kf = 0.7\nvf = 276.0", H_BODY, CH_BODY);
    for set in ["e.mass=0.3", "e.mass.x=0.3", "e.offset=-90"] {
        let out = run_with(&kf, &["check", "{cfg}", "--set", set]);
        assert_bad(
            &format!("--set {set}"),
            &out,
            &[
                "has no",
                "given by `kf` + `vf`",
                "never the kind of a pocket",
            ],
        );
    }
    // Values the entry has may change.
    let out = run_with(&kf, &["check", "{cfg}", "--set", "e.kf=0.72"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
}

// Two cones with the default textures: the old code said only "the pair density of states of
// this channel vanishes ... give `g` instead". The message now says why and what pairs them.
#[test]
fn cones_of_equal_texture_say_why_and_what_pairs_them() {
    check_bad(
        "default textures",
        &cones("", "lambda = 0.2\ncutoff = 5.0"),
        &[
            "channel \"AB\"",
            "`lambda`",
            "equal winding and texture phase",
            "no pair density of states",
            "opposite windings",
            "texture phase",
            "spin_matrix = \"z\", \"x\" or \"y\"",
            "give `g`",
        ],
    );
    // Each suggestion does pair them.
    for (case, b, ch) in [
        ("opposite winding", "spin = { winding = -1 }", ""),
        ("phase 180", "spin = { winding = 1, phase = 180 }", ""),
        ("spin z", "", "spin_matrix = \"z\""),
        ("spin x", "", "spin_matrix = \"x\""),
        ("spin y", "", "spin_matrix = \"y\""),
    ] {
        let cfg = TempConfig::new(
            "cones",
            &cones(b, &format!("lambda = 0.2\ncutoff = 5.0\n{ch}")),
        );
        let out = nestor(&["check", cfg.path()]);
        assert_eq!(out.status.code(), Some(0), "{case}: {}", text(&out.stderr));
    }
}
