//! The general N x N mean field (nalgebra's Hermitian eigensolver) against the single-channel
//! 2 x 2 closed form, and two symmetry-related channels that share a pocket.

mod common;

use common::{channel_toml, nested_pair, pocket_toml, tol};
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
            (general / closed - 1.0).abs() < tol::INTEGRATION,
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
    assert!((x / y - 1.0).abs() < tol::INTEGRATION, "{x} vs {y}");
    let single = omega_uniform_channels(&m, &[0], &[0.4], t, &acc)
        .unwrap()
        .value;
    assert!((x / single - 1.0).abs() < tol::INTEGRATION);
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

/// One hole pocket b at the zone centre paired with two electron pockets a1, a2 at other zone
/// points, all circular with mass 0.2 and nested with b (each measured from its own centre), in
/// two channels with the same cutoff and couplings g1, g2 (per spin channel).
fn shared_hole_pocket(lambda_1: f64, lambda_2: f64) -> nestor::model::Model {
    let electron = "mass = 0.2\noffset = -100.0";
    common::model(
        &(pocket_toml("b", "hole", [0.0, 0.0], "mass = 0.2\noffset = 100.0")
            + &pocket_toml("a1", "electron", [5.0, 0.0], electron)
            + &pocket_toml("a2", "electron", [0.0, 5.0], electron)
            + &channel_toml("a1", "b", &format!("lambda = {lambda_1}\ncutoff = 5.0"))
            + &channel_toml("a2", "b", &format!("lambda = {lambda_2}\ncutoff = 5.0"))),
    )
}

/// Two channels sharing the hole pocket b, with identical partners a1 and a2 (same dispersion
/// measured from their own centres, same shell). At each k the 3 x 3 mean-field Hamiltonian
///
/// ```text
/// [[eps_a, 0, D1], [0, eps_a, D2], [D1, D2, eps_b]]
/// ```
///
/// couples b only to the combination (D1 a1 + D2 a2)/D, D = sqrt(D1^2 + D2^2); the orthogonal
/// combination keeps the normal energy eps_a and drops out of Omega. Hence
///
/// ```text
/// Omega(D1, D2) = D1^2/g1 + D2^2/g2 + F(D),
/// ```
///
/// with F the quasiparticle part of the single-channel Omega. At fixed D the sum
/// D1^2/g1 + D2^2/g2 is smallest with all of D in the channel of larger g: for g1 > g2 the
/// channels compete, the weaker gap vanishes, and the minimum is the stronger channel's own
/// (gap and Omega). For g1 = g2, Omega depends on D alone: any split of the same D costs the
/// same, which is checked on the kernel directly.
#[test]
fn coupled_channels_report_coexistence_or_competition() {
    // lambda = g nu with the same nu in both channels: g1 > g2.
    let m = shared_hole_pocket(0.3, 0.25);
    assert!(m.channels()[0].g() > m.channels()[1].g());
    let os = nestor::solvers::ordered::OrderedSolver::default();
    // 0.05 meV: below both channels' Tc0 (0.20 and 0.10 meV).
    let t = 0.05;
    let c = nestor::solvers::ordered::coupled_uniform(&os, &m, [0, 1], t).unwrap();
    assert_eq!(
        c.outcome,
        nestor::solvers::ordered::PairOutcome::Compete,
        "{c:?}"
    );
    assert!(c.omega_single[0] < c.omega_single[1] && c.omega_single[1] < 0.0);
    let alone = os.solve(&m, &m.channels()[0], t, None).unwrap();
    let delta_1 = alone.chosen().delta;
    assert!(delta_1 > 0.0);
    assert!(
        (c.deltas[0] / delta_1 - 1.0).abs() < 1e-4,
        "{:?} vs {delta_1}",
        c.deltas
    );
    assert!(c.deltas[1] < 1e-3 * delta_1, "{:?}", c.deltas);
    assert!(
        (c.omega / c.omega_single[0] - 1.0).abs() < tol::INTEGRATION,
        "{} vs {}",
        c.omega,
        c.omega_single[0]
    );

    // Equal couplings: Omega depends on sqrt(D1^2 + D2^2) only.
    let m = shared_hole_pocket(0.25, 0.25);
    let acc = Accuracy::default();
    let d = 0.12;
    let omega = |d1: f64, d2: f64| {
        omega_uniform_channels(&m, &[0, 1], &[d1, d2], t, &acc)
            .unwrap()
            .value
    };
    let single = omega(d, 0.0);
    let split = omega(d * 0.6, d * 0.8);
    assert!(single < 0.0);
    assert!(
        (split / single - 1.0).abs() < tol::INTEGRATION,
        "{split} vs {single}"
    );
}
