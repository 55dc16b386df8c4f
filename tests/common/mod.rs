//! Shared builders of reference configurations for the integration tests.
#![allow(dead_code)]

use nestor::config::{ConfigSource, PinnedCouplings};
use nestor::model::Model;

/// Two circular parabolic pockets of mass 0.2 at one zone point: electron band edge -E_F + h,
/// hole band edge E_F + h, so that the mismatch is h (meV) and the pair density of states is
/// constant. `lambda` fixes g at this configuration.
pub fn nested_pair(lambda: f64, cutoff: f64, e_f: f64, h: f64) -> (ConfigSource, Model) {
    let text = format!(
        r#"
[[pocket]]
name = "e"
kind = "electron"
center = [0.0, 0.0]
mass = 0.2
offset = {ea}

[[pocket]]
name = "h"
kind = "hole"
center = [0.0, 0.0]
mass = 0.2
offset = {eb}

[[channel]]
name = "eh"
pockets = ["e", "h"]
lambda = {lambda}
cutoff = {cutoff}
"#,
        ea = -e_f + h,
        eb = e_f + h
    );
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

/// Builds a model from TOML text.
pub fn model(text: &str) -> Model {
    ConfigSource::from_text("test", text)
        .unwrap()
        .build(None)
        .unwrap()
}

/// Upper and lower helical Dirac cones with opposite windings at one zone point (hbar v = 300
/// meV nm, Dirac points at -100 meV and `offset_b`), the first with texture phase `phase_a`
/// (degrees): W = sin^2 of the angle, a complex vertex M_ab when `phase_a` != 0.
pub fn opposite_cones(phase_a: f64, offset_b: f64, lambda: f64) -> Model {
    model(&format!(
        r#"
[[pocket]]
name = "a"
kind = "dirac"
center = [0.0, 0.0]
velocity = 300.0
offset = -100.0
spin = {{ winding = 1, phase = {phase_a} }}

[[pocket]]
name = "b"
kind = "dirac"
center = [0.0, 0.0]
velocity = 300.0
offset = {offset_b}
spin = {{ winding = -1, phase = 0.0 }}

[[channel]]
pockets = ["a", "b"]
lambda = {lambda}
cutoff = 5.0
"#
    ))
}
