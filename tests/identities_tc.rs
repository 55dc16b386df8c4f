//! Form factors, symmetries and identities of the pair susceptibility and critical temperatures.

mod common;

use common::{model, tol};
use nestor::config::ConfigSource;
use nestor::kernels::susceptibility::susceptibility;
use nestor::kernels::{Accuracy, Shell};
use nestor::solvers::{TcSolver, TcStatus};
use std::f64::consts::PI;

/// Upper cone "a" (winding +1) and lower cone "b" (Dirac point at +100 meV) with winding
/// `winding_b`, both with texture phase 0, and the coupling line `coupling`.
fn dirac_pair(winding_b: i32, coupling: &str) -> String {
    common::cones_toml(0.0, winding_b, 100.0, coupling)
}

/// Upper and lower helical cones with the same texture: W = 0 in the charge channel, so there is no
/// instability at any g (the crate docs, `theory::channels`), and lambda cannot be converted (an
/// input error asking for g).
#[test]
fn same_texture_cones_have_no_charge_instability() {
    let m = model(&dirac_pair(1, "g = 5000.0"));
    let ch = &m.channels()[0];
    assert!(ch.nu().abs() < 1e-15);
    let solver = TcSolver::default();
    let u = solver.uniform(&m, ch).unwrap();
    assert_eq!(u.status, TcStatus::NoInstability);
    let md = solver.modulated(&m, ch, &u).unwrap();
    assert_eq!(md.tc.status, TcStatus::NoInstability);
    let err = ConfigSource::from_text("t", &dirac_pair(1, "lambda = 0.3"))
        .unwrap()
        .build(None)
        .unwrap_err();
    assert!(err.0.contains("give `g`"), "{}", err.0);
}

/// Opposite windings: W = sin^2(theta), whose average is 1/2, so nu_ab is half that of the same
/// cones without texture, and at fixed g the Tc is 1.134 cutoff exp(-1/(g nu_ab)) (BCS 1957 with
/// lambda = g nu_ab; exact here because W depends on angle only and the linear Dirac density of
/// states integrates out of the symmetric shell). Relative 2e-6: the integration target.
#[test]
fn opposite_windings_halve_the_pair_density_of_states() {
    let helical = model(&dirac_pair(-1, "lambda = 0.25"));
    let plain_text = dirac_pair(-1, "lambda = 0.25")
        .replace(
            "spin = { winding = 1, phase = 0.0 }",
            "spin = \"degenerate\"",
        )
        .replace(
            "spin = { winding = -1, phase = 0.0 }",
            "spin = \"degenerate\"",
        );
    let plain = model(&plain_text);
    let (h, p) = (&helical.channels()[0], &plain.channels()[0]);
    // Hand formula: nu = E_F / (2 pi (hbar v)^2) per spin channel for a cone (common practice).
    let nu1 = 100.0 / (2.0 * PI * 300.0 * 300.0);
    assert!((p.nu() / nu1 - 1.0).abs() < tol::TIGHT_INTEGRATION);
    assert!(
        (h.nu() / p.nu() - 0.5).abs() < tol::TIGHT_INTEGRATION,
        "ratio {}",
        h.nu() / p.nu()
    );
    assert_eq!(p.spin_channels(), 2.0);
    assert_eq!(h.spin_channels(), 1.0);
    let solver = TcSolver::default();
    let u = solver.uniform(&helical, h).unwrap();
    let expected = 1.133_865_9 * 5.0 * (-1.0 / (h.g() * h.nu())).exp();
    assert!(
        (u.tc / expected - 1.0).abs() < 2e-6,
        "{} vs {expected}",
        u.tc
    );
}

const ROTATABLE: &str = r#"
[[pocket]]
name = "a"
kind = "dirac"
center = [CAX, CAY]
velocity = [298.0, 302.0]
offset = -85.0
angle = ANGLE_A
spin = { winding = -1, phase = PHASE_A }

[[pocket]]
name = "b"
kind = "dirac"
center = [0.0, 0.0]
velocity = 300.0
offset = 85.2
angle = ANGLE_B
spin = { winding = 1, phase = 10.0 }

[[channel]]
pockets = ["a", "b"]
lambda = 0.35
cutoff = 5.0
"#;

fn rotated(alpha_deg: f64) -> nestor::model::Model {
    let a = alpha_deg.to_radians();
    let (cx, cy) = (1.0 * a.cos(), 1.0 * a.sin());
    // phi -> phi + (1 - w) alpha for each helical pocket (the crate docs, `theory::pockets`).
    let text = ROTATABLE
        .replace("CAX", &format!("{cx}"))
        .replace("CAY", &format!("{cy}"))
        .replace("ANGLE_A", &format!("{}", 15.0 + alpha_deg))
        .replace("ANGLE_B", &format!("{alpha_deg}"))
        .replace("PHASE_A", &format!("{}", 20.0 + 2.0 * alpha_deg));
    model(&text)
}

/// Rotating the whole configuration (centres, pocket axes, and helical phases as `theory::pockets`
/// in the crate docs prescribes) leaves nu, the mismatch and both Tc unchanged and rotates q*. The
/// unrotated and rotated problems are integrated on different grids, so agreement tests the
/// geometry; relative 1e-6 on Tc (the integration target), 1e-2 rad on the flat q* direction.
#[test]
fn tc_is_invariant_under_rotating_the_configuration() {
    let solver = TcSolver::default();
    let base = rotated(0.0);
    let ch0 = &base.channels()[0];
    let u0 = solver.uniform(&base, ch0).unwrap();
    let m0 = solver.modulated(&base, ch0, &u0).unwrap();
    for alpha in [40.0, -75.0] {
        let m = rotated(alpha);
        let ch = &m.channels()[0];
        assert!((ch.nu() / ch0.nu() - 1.0).abs() < 1e-8);
        assert!((ch.mismatch() - ch0.mismatch()).abs() < 1e-8 * ch0.mismatch().abs().max(1.0));
        let u = solver.uniform(&m, ch).unwrap();
        assert!(
            (u.tc / u0.tc - 1.0).abs() < tol::INTEGRATION,
            "alpha {alpha}: {} vs {}",
            u.tc,
            u0.tc
        );
        let md = solver.modulated(&m, ch, &u).unwrap();
        assert!((md.tc.tc / m0.tc.tc - 1.0).abs() < tol::INTEGRATION);
        let (q0, q) = (m0.q[0].hypot(m0.q[1]), md.q[0].hypot(md.q[1]));
        assert!((q - q0).abs() <= 1e-2 * q0.max(1e-9));
        if q0 > 0.0 {
            let d = (md.q[1].atan2(md.q[0]) - m0.q[1].atan2(m0.q[0]) - alpha.to_radians())
                .rem_euclid(PI);
            assert!(d.min(PI - d) < 1e-2, "direction off by {d}");
        }
    }
}

/// chi(q) = chi(-q) for the dispersions here (see the crate docs, `theory::numerics`), and chi(q)
/// -> chi(0) continuously as q -> 0 (the modulated susceptibility reduces to the uniform one):
/// relative 1e-9 at the integration accuracy, and the change at small q is quadratic.
#[test]
fn susceptibility_is_even_in_q_and_continuous_at_zero() {
    let m = rotated(0.0);
    let ch = &m.channels()[0];
    let acc = Accuracy {
        rtol: 1e-10,
        ..Accuracy::default()
    };
    let t = 0.3;
    let chi = |q: [f64; 2]| {
        susceptibility(&Shell::for_channel(&m, ch, q).unwrap(), t, &acc)
            .unwrap()
            .value
    };
    let q = [0.004, -0.0023];
    let (p, n) = (chi(q), chi([-q[0], -q[1]]));
    assert!((p / n - 1.0).abs() < tol::TIGHT_INTEGRATION);
    let c0 = chi([0.0, 0.0]);
    let d1 = chi([1e-4, 0.0]) - c0;
    let d2 = chi([2e-4, 0.0]) - c0;
    assert!((d2 / d1 - 4.0).abs() < 0.05, "ratio {}", d2 / d1);
}

/// The shell integral against an independent integrator: for the equal-mass reference pair
/// (m = 0.2 m_e) xi_k = hbar^2 k^2/(2m) + const, so the pair density of states is constant,
/// nu = m/(2 pi hbar^2) = (m/m_e) / (4 pi hbar^2/(2 m_e)) with hbar^2/(2 m_e) = 38.0998212 meV nm^2
/// (CODATA 2018), and chi(0, T) = nu int_{-Lambda}^{Lambda} dxi [f(h - xi) - f(h + xi)]/(2 xi),
/// integrated here by the quadrature crate's double-exponential rule from the plain Fermi
/// functions (relative 1e-9: both integrate to far better than that). The code's own nu is
/// checked against the hand formula first.
#[test]
fn susceptibility_agrees_with_an_independent_integrator() {
    let (_, m) = common::nested_pair(0.25, 5.0, 100.0, 0.07);
    let ch = &m.channels()[0];
    let (t, h, cutoff) = (0.06, 0.07, 5.0);
    let acc = Accuracy {
        rtol: 1e-10,
        ..Accuracy::default()
    };
    let ours = susceptibility(&Shell::for_channel(&m, ch, [0.0, 0.0]).unwrap(), t, &acc)
        .unwrap()
        .value;
    let f = |e: f64| 1.0 / ((e / t).exp() + 1.0);
    let integrand = |x: f64| {
        if x.abs() < 1e-9 {
            let e = h;
            (e / t).exp() / (t * ((e / t).exp() + 1.0).powi(2))
        } else {
            (f(h - x) - f(h + x)) / (2.0 * x)
        }
    };
    // Split at the thermal features xi = -h, 0, h so that the rule sees smooth pieces.
    let pts = [-cutoff, -h, 0.0, h, cutoff];
    let mut total = 0.0;
    for w in pts.windows(2) {
        let out = quadrature::double_exponential::integrate(integrand, w[0], w[1], 1e-13);
        assert!(out.error_estimate < 1e-10);
        total += out.integral;
    }
    let nu_hand = 0.2 / (4.0 * std::f64::consts::PI * 38.099_821_2);
    assert!(
        (ch.nu() / nu_hand - 1.0).abs() < tol::TIGHT_INTEGRATION,
        "nu {} vs m/(2 pi hbar^2) = {nu_hand}",
        ch.nu()
    );
    let reference = nu_hand * total;
    assert!(
        (ours / reference - 1.0).abs() < tol::TIGHT_INTEGRATION,
        "{ours} vs {reference}"
    );
}
