//! Shared builders of reference configurations for the integration tests.
#![allow(dead_code)]

pub mod cli;
pub mod tol;

use nestor::config::{ConfigSource, PinnedCouplings};
use nestor::model::Model;

/// Two circular parabolic pockets of mass 0.2 at one zone point: electron band edge -E_F + h,
/// hole band edge E_F + h, so that the mismatch is h (meV) and the pair density of states is
/// constant. `lambda` fixes g at this configuration.
pub fn nested_pair(lambda: f64, cutoff: f64, e_f: f64, h: f64) -> (ConfigSource, Model) {
    let text = pocket_toml(
        "e",
        "electron",
        [0.0, 0.0],
        &format!("mass = 0.2\noffset = {}", -e_f + h),
    ) + &pocket_toml(
        "h",
        "hole",
        [0.0, 0.0],
        &format!("mass = 0.2\noffset = {}", e_f + h),
    ) + &channel_toml("e", "h", &format!("lambda = {lambda}\ncutoff = {cutoff}"));
    let src = ConfigSource::from_text("nested pair", &text).unwrap();
    let m = src.build(None).unwrap();
    (src, m)
}

/// The same pair with mismatch h and g fixed to that of `base` (as in a sweep).
pub fn nested_pair_fixed_g(base: &Model, cutoff: f64, e_f: f64, h: f64) -> (ConfigSource, Model) {
    let (src, _) = nested_pair(0.25, cutoff, e_f, h);
    let m = src
        .build(Some(&PinnedCouplings(vec![base.channels()[0].g()])))
        .unwrap();
    (src, m)
}

/// One `[[pocket]]` table of a configuration: its name, kind, centre (1/nm, in the surface zone)
/// and the remaining keys as TOML lines.
pub fn pocket_toml(name: &str, kind: &str, center: [f64; 2], body: &str) -> String {
    format!(
        "[[pocket]]\nname = \"{name}\"\nkind = \"{kind}\"\ncenter = [{:?}, {:?}]\n{body}\n\n",
        center[0], center[1]
    )
}

/// One `[[channel]]` table named after its pockets (electron-like `a` first, hole-like `b`), with
/// the remaining keys as TOML lines.
pub fn channel_toml(a: &str, b: &str, body: &str) -> String {
    format!("[[channel]]\nname = \"{a}{b}\"\npockets = [\"{a}\", \"{b}\"]\n{body}\n\n")
}

/// Builds a model from TOML text.
pub fn model(text: &str) -> Model {
    ConfigSource::from_text("test", text)
        .unwrap()
        .build(None)
        .unwrap()
}

/// Two helical Dirac cones at one zone point (hbar v = 300 meV nm): "a" with its Dirac point at
/// -100 meV (electron-like), winding +1 and texture phase `phase_a` (degrees), and "b" with its
/// Dirac point at `offset_b` (hole-like for `offset_b` > 0), winding `winding_b` and phase 0; one
/// channel "ab" with a cutoff of 5 meV and the coupling line `coupling` (`g = ...` or
/// `lambda = ...`).
pub fn cones_toml(phase_a: f64, winding_b: i32, offset_b: f64, coupling: &str) -> String {
    let cone = |offset: f64, winding: i32, phase: f64| {
        format!(
            "velocity = 300.0\noffset = {offset:?}\nspin = {{ winding = {winding}, phase = {phase:?} }}"
        )
    };
    pocket_toml("a", "dirac", [0.0, 0.0], &cone(-100.0, 1, phase_a))
        + &pocket_toml("b", "dirac", [0.0, 0.0], &cone(offset_b, winding_b, 0.0))
        + &channel_toml("a", "b", &format!("{coupling}\ncutoff = 5.0"))
}

/// Upper and lower helical Dirac cones with opposite windings at one zone point (hbar v = 300
/// meV nm, Dirac points at -100 meV and `offset_b`), the first with texture phase `phase_a`
/// (degrees): W = sin^2 of the angle, a complex vertex M_ab when `phase_a` != 0.
pub fn opposite_cones(phase_a: f64, offset_b: f64, lambda: f64) -> Model {
    model(&cones_toml(
        phase_a,
        -1,
        offset_b,
        &format!("lambda = {lambda}"),
    ))
}
