//! The general N x N mean field (nalgebra's Hermitian eigensolver) against the single-channel
//! 2 x 2 closed form, and two symmetry-related channels that share a pocket.

mod common;

use common::nested_pair;
use nestor::config::ConfigSource;
use nestor::kernels::grand_potential::grand_potential;
use nestor::kernels::multichannel::omega_uniform_channels;
use nestor::kernels::{Accuracy, Shell};

fn demo() -> nestor::model::Model {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/configs/demo_surface.toml"
    ))
    .unwrap();
    ConfigSource::from_text("demo", &text)
        .unwrap()
        .build(None)
        .unwrap()
}

/// With one channel the N x N route (numerical eigenvalues) reproduces the 2 x 2 closed form
/// E = h +- sqrt(xi^2 + Delta^2 W) (an independent route: matrix diagonalisation instead of the
/// formula), for degenerate, helical-degenerate and helical-helical (opposite windings) pairs.
/// Relative 1e-6: both integrate to 1e-7 on different panels.
#[test]
fn one_channel_reduces_to_the_closed_form() {
    let helical = common::opposite_cones(30.0, 100.3, 0.25);
    let (_, nested) = nested_pair(0.25, 5.0, 100.0, 0.05);
    let acc = Accuracy::default();
    for (m, delta, t) in [
        (&nested, 0.12, 0.05),
        (&demo(), 0.4, 0.3),
        (&helical, 0.1, 0.04),
    ] {
        let ch = &m.channels()[0];
        let shell = Shell::for_channel(m, ch, [0.0, 0.0]).unwrap();
        let closed = grand_potential(&shell, ch.g(), ch.mismatch(), delta, t, &acc)
            .unwrap()
            .value;
        let general = omega_uniform_channels(m, &[0], &[delta], t, &acc)
            .unwrap()
            .value;
        assert!(
            (general / closed - 1.0).abs() < 1e-6,
            "{general} vs {closed}"
        );
    }
}

/// The demo's two channels (X and Y electron pockets with the zone-centre Dirac pocket) are
/// related by the fourfold rotation: ordering either one alone gives the same Omega, and switching
/// the second gap off recovers the single-channel Omega. Relative 1e-6.
#[test]
fn symmetry_related_channels_sharing_a_pocket() {
    let m = demo();
    let acc = Accuracy::default();
    let t = 0.3;
    let x = omega_uniform_channels(&m, &[0, 1], &[0.4, 0.0], t, &acc)
        .unwrap()
        .value;
    let y = omega_uniform_channels(&m, &[0, 1], &[0.0, 0.4], t, &acc)
        .unwrap()
        .value;
    assert!((x / y - 1.0).abs() < 1e-6, "{x} vs {y}");
    let single = omega_uniform_channels(&m, &[0], &[0.4], t, &acc)
        .unwrap()
        .value;
    assert!((x / single - 1.0).abs() < 1e-6);
    // Both at once: a finite, converged number (whether they coexist is reported by the solver).
    let both = omega_uniform_channels(&m, &[0, 1], &[0.4, 0.4], t, &acc).unwrap();
    assert!(
        both.value.is_finite() && both.error < 1e-4 * both.value.abs(),
        "{both:?}"
    );
    eprintln!(
        "Omega: one channel {x:.6e}, both {:.6e} meV/nm^2 per spin channel",
        both.value
    );
}

/// The two symmetry-related demo channels have equal single-channel Omega, and ordering them
/// together never does worse than either alone (the coupled minimum starts from each single
/// solution); the outcome (coexist or compete) and the relative phase are reported.
#[test]
fn coupled_channels_report_coexistence_or_competition() {
    let m = demo();
    let os = nestor::solvers::ordered::OrderedSolver::default();
    let t = nestor::units::kelvin_to_mev(3.0);
    let c = nestor::solvers::ordered::coupled_uniform(&os, &m, [0, 1], t).unwrap();
    assert!((c.omega_single[0] / c.omega_single[1] - 1.0).abs() < 1e-6);
    assert!(c.omega <= c.omega_single[0].min(c.omega_single[1]) * (1.0 - 1e-9));
    assert!(c.outcome == "coexist" || c.outcome == "compete");
    if c.outcome == "compete" {
        assert!(c.deltas[0].min(c.deltas[1]) < 1e-3 * c.deltas[0].max(c.deltas[1]));
    }
    assert!(c.relative_phase.contains("free"));
}
