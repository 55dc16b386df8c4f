//! Canonical mode (fixed net carrier density, the crate docs, `theory::ordered`).

mod common;

use common::nested_pair_fixed_g;
use nestor::solvers::canonical::{canonical_state, normal_carriers, CanonicalKind};
use nestor::solvers::ordered::OrderedSolver;

/// At T -> 0 the gapped uniform state of the equal-mass pair is exactly compensated (net carrier
/// density 0: it is incompressible), while the normal state at mismatch h has -4 D h (D the
/// density of states per spin and pocket). With the density of the normal state at h0 held fixed,
/// the grand-canonical first-order jump at h = Delta0/sqrt(2) (Clogston 1962) becomes a coexistence
/// of the normal phase at that field and the compensated ordered phase for |h0| < Delta0/sqrt(2),
/// with ordered fraction 1 - h0 sqrt(2)/Delta0 (lever rule; derived here, common practice).
/// Beyond it the normal state is the canonical state. Tolerance 1e-3 (finite cutoff, T = 1e-3 Tc0).
#[test]
fn clogston_jump_becomes_coexistence_at_fixed_density() {
    let (_, m0) = common::nested_pair(0.25, 5.0, 100.0, 0.0);
    let d0 = 5.0 / 4f64.sinh();
    let tc0 = 1.133_865_9 * 5.0 * (-4.0f64).exp();
    let os = OrderedSolver::default();
    let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, 0.5 * d0);
    let dos = m.pockets()[0].dos() / 2.0;
    assert!((normal_carriers(&m, 0.0) / (-4.0 * dos * 0.5 * d0) - 1.0).abs() < 1e-9);
    let st = canonical_state(&os, &m, 0, 1e-3 * tc0, 2.0 * d0).unwrap();
    assert_eq!(st.state, CanonicalKind::Coexistence);
    let [nn, nu] = st.coexistence_densities.unwrap();
    assert!(
        (nn / (-4.0 * dos * d0 / 2f64.sqrt()) - 1.0).abs() < 1e-3,
        "normal density {nn}"
    );
    assert!(nu.abs() < 1e-3 * nn.abs(), "ordered density {nu}");
    let x = st.ordered_fraction.unwrap();
    assert!((x - (1.0 - 0.5 * 2f64.sqrt())).abs() < 1e-3, "fraction {x}");
    let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, 0.9 * d0);
    let st = canonical_state(&os, &m, 0, 1e-3 * tc0, 2.0 * d0).unwrap();
    assert_eq!(st.state, CanonicalKind::Normal);
}
