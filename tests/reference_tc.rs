//! Critical temperatures from the exact shell integral against published weak-coupling results
//! (the crate docs, `theory::checks`) and against the digamma closed form.
//!
//! The reference model: two circular parabolic pockets of equal mass at one zone point, with
//! cutoff/E_F = 0.05. Its pair density of states is exactly constant and h_k = h everywhere, so the
//! exact uniform Tc equation differs from the digamma equation only by terms of order
//! exp(-(Lambda - |h|)/T) (< 1e-15 here): the comparison tests the numerics at their own
//! accuracy. For q != 0 band curvature enters at order (q/kF)^2 (the crate docs,
//! `theory::checks`: about 1e-3 relative in q*).

mod common;

use common::tol;
use common::*;
use nestor::solvers::roots::brent_root;
use nestor::solvers::tc::weak;
use nestor::solvers::{TcSolver, TcStatus};

/// Tc0 / cutoff = (2 e^gamma / pi) exp(-1/lambda) = 1.133866 exp(-1/lambda)
/// (Bardeen, Cooper, Schrieffer, Phys. Rev. 108, 1175 (1957)).
#[test]
fn nested_tc_is_bcs() {
    let solver = TcSolver::default();
    for lambda in [0.2, 0.25, 0.3] {
        let (_, m) = nested_pair(lambda, 5.0, 100.0, 0.0);
        let ch = &m.channels()[0];
        let r = solver.uniform(&m, ch).unwrap();
        let expected = 1.133_866 * 5.0 * (-1.0 / lambda).exp();
        assert!(
            (r.tc / expected - 1.0).abs() < tol::TC_SAME_MODEL,
            "lambda {lambda}: Tc {} vs {expected}",
            r.tc
        );
        // The reported error estimate is honest and small.
        assert!(r.error < 1e-6 * r.tc);
    }
}

/// Uniform Tc(h)/Tc0 against the digamma equation ln(Tc0/T) = Re psi(1/2 + i h/(2 pi T)) - psi(1/2)
/// (Sarma, J. Phys. Chem. Solids 24, 1029 (1963); the crate docs, `theory::susceptibility`), solved
/// independently by kernels::weak (checked there against mpmath).
#[test]
fn uniform_tc_follows_the_digamma_equation() {
    let solver = TcSolver::default();
    let lambda = 0.25;
    let tc0 = 1.133_865_9 * 5.0 * (-1.0f64 / lambda).exp();
    for h in [0.3, 0.6, 0.9, 1.0] {
        let (_, m) = nested_pair(lambda, 5.0, 100.0, h * tc0);
        let r = solver.uniform(&m, &m.channels()[0]).unwrap();
        let t = weak::uniform_tc(h).unwrap().unwrap();
        assert!(
            (r.tc / tc0 - t).abs() < tol::TC_SAME_MODEL,
            "h = {h} Tc0: exact {} vs digamma {t}",
            r.tc / tc0
        );
    }
}

/// Modulated line at T = 0.2 Tc0: h = 1.3519 Tc0, v q*/2 = 1.5023 Tc0 (section 8, computed with
/// mpmath; Burkhardt and Rainer, Ann. Phys. 3, 181 (1994); Shimahara, PRB 50, 12760 (1994)), and at
/// T = 0.05 Tc0: h = 1.6189 Tc0, v q*/(2h) = 1.0551. Uniform line at 0.2 Tc0: h = 0.9658 Tc0.
#[test]
fn modulated_line_matches_published_values() {
    let solver = TcSolver::default();
    let lambda = 0.25;
    let tc0 = 1.133_865_9 * 5.0 * (-1.0f64 / lambda).exp();
    let (_, m0) = nested_pair(lambda, 5.0, 100.0, 0.0);
    let v = m0.pockets()[0].fermi_velocity_along([1.0, 0.0]);
    for (t, h_ref, q_ref) in [(0.2, 1.3519, 1.5023), (0.05, 1.6189, 1.0551 * 1.6189)] {
        let temp = t * tc0;
        let margin = |h: f64| {
            let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, h * tc0);
            let (_, v) = solver.max_over_q(&m, &m.channels()[0], temp)?;
            Ok(v - 1.0)
        };
        let h = brent_root("modulated line", h_ref - 0.05, h_ref + 0.05, 1e-9, margin)
            .unwrap()
            .x;
        let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, h * tc0);
        let (q, _) = solver.max_over_q(&m, &m.channels()[0], temp).unwrap();
        let big_q = v * q[0].hypot(q[1]) / 2.0 / tc0;
        assert!((h - h_ref).abs() < tol::TABLE, "T = {t} Tc0: h = {h}");
        assert!(
            (big_q / q_ref - 1.0).abs() < tol::Q_STAR,
            "T = {t} Tc0: v q*/2 = {big_q}"
        );
    }
    // Uniform line at 0.2 Tc0.
    let temp = 0.2 * tc0;
    let h = brent_root("uniform line", 0.93, 1.0, 1e-9, |h| {
        let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, h * tc0);
        Ok(solver.g_chi(&m, &m.channels()[0], [0.0, 0.0], temp, &solver.acc)? - 1.0)
    })
    .unwrap()
    .x;
    assert!(
        (h - 0.9658).abs() < tol::TABLE,
        "uniform line at 0.2 Tc0: h = {h}"
    );
}

/// Lifshitz point: the q-curvature of chi at q = 0 changes sign on the uniform line at
/// T = 0.5615 Tc0, h = 1.0728 Tc0 in weak coupling, coinciding with Sarma's tricritical point
/// (Buzdin and Kachkachi, Phys. Lett. A 225, 341 (1997); the citation is not checked against the
/// paper). Second route for the coincidence: expanding the digamma Tc equation to second order in
/// Q = v q/2 gives a q^2 coefficient proportional to <cos^2 theta> Re psi''(1/2 + i h/(2 pi t)),
/// the same function of (t, h) as the quartic coefficient beta (the crate docs,
/// `theory::landau`); both vanish at one point of the line. `weak::lifshitz` finds it from finite
/// differences of the angular average of the margin, `weak::tricritical` from the polygamma
/// closed form of beta: two numerical routes that must agree to their root tolerances.
#[test]
fn lifshitz_point_on_the_uniform_line() {
    let (t_l, h_l) = weak::lifshitz().unwrap();
    let (t_t, h_t) = weak::tricritical().unwrap();
    assert!((t_l - t_t).abs() < 1e-6 && (h_l - h_t).abs() < 1e-6);
    assert!((t_t - 0.5615).abs() < tol::TABLE && (h_t - 1.0728).abs() < tol::TABLE);
    let solver = TcSolver::default();
    let lambda = 0.25;
    let tc0 = 1.133_865_9 * 5.0 * (-1.0f64 / lambda).exp();
    let (_, m0) = nested_pair(lambda, 5.0, 100.0, 0.0);
    let curvature_on_line = |h: f64| {
        let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, h * tc0);
        let ch = &m.channels()[0];
        let u = solver.uniform(&m, ch)?;
        assert_eq!(u.status, TcStatus::Unstable);
        let (c, err) = solver.chi_q_curvature(&m, ch, u.tc, [1.0, 0.0])?;
        // The natural scale of the curvature is nu (v/T)^2; the difference error is far below it.
        let v = m.pockets()[0].fermi_velocity_along([1.0, 0.0]);
        assert!(
            err < 1e-6 * ch.nu() * (v / u.tc).powi(2),
            "curvature error {err}"
        );
        Ok(c)
    };
    let h = brent_root("Lifshitz point", 1.0, 1.08, 1e-8, curvature_on_line)
        .unwrap()
        .x;
    let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, h * tc0);
    let t = solver.uniform(&m, &m.channels()[0]).unwrap().tc / tc0;
    assert!(
        (t - 0.5615).abs() < tol::SPECIAL_POINT,
        "Lifshitz T = {t} Tc0"
    );
    assert!(
        (h - 1.0728).abs() < tol::SPECIAL_POINT,
        "Lifshitz h = {h} Tc0"
    );
    // The exact model's Lifshitz point against the weak-coupling one.
    assert!((t - t_l).abs() < tol::SPECIAL_POINT && (h - h_l).abs() < tol::SPECIAL_POINT);
}

/// The uniform Tc is even in h for equal masses (particle-hole symmetry of the model), and the
/// modulated Tc is too; beyond the Lifshitz point the modulated Tc exceeds the uniform one.
///
/// The mismatch must lie where both signs have a uniform instability and the modulated one wins:
/// on the weak-coupling uniform line h(T) reaches its largest value, 1.0855 Tc0, at T = 0.48 Tc0
/// (the nose of the line; mpmath 1.3, `findroot` on ln(1/t) = Re psi(1/2 + i h/(2 pi t)) -
/// psi(1/2) for t = 0.01, 0.02, ..., 0.99), and the Lifshitz point lies at h = 1.0728 Tc0,
/// T = 0.5615 Tc0. At h = +-1.08 Tc0 the largest root of the uniform equation is about 0.53 Tc0,
/// below the Lifshitz temperature, so a modulated state sets in above it.
#[test]
fn mismatch_sign_symmetry_and_modulated_above_uniform() {
    let solver = TcSolver::default();
    let lambda = 0.25;
    let tc0 = 1.133_865_9 * 5.0 * (-1.0f64 / lambda).exp();
    let (_, m0) = nested_pair(lambda, 5.0, 100.0, 0.0);
    let h_ref = 1.08;
    let uniform_weak = weak::uniform_tc(h_ref).unwrap().unwrap();
    assert!(
        uniform_weak > 0.5 && uniform_weak < 0.5615,
        "{uniform_weak}"
    );
    let mut tcs = Vec::new();
    for h in [h_ref, -h_ref] {
        let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, h * tc0);
        let ch = &m.channels()[0];
        let u = solver.uniform(&m, ch).unwrap();
        assert_eq!(u.status, TcStatus::Unstable, "h {h}: {u:?}");
        // The exact uniform Tc is the weak-coupling one: this model is exactly the weak one at
        // q = 0 (up to exp(-(Lambda - |h|)/T)).
        assert!(
            (u.tc / tc0 - uniform_weak).abs() < tol::TC_SAME_MODEL,
            "h {h}: uniform {} vs digamma {uniform_weak}",
            u.tc / tc0
        );
        let md = solver.modulated(&m, ch, &u).unwrap();
        assert_eq!(md.tc.status, TcStatus::Unstable);
        assert!(md.q[0] > 0.0);
        assert!(
            md.tc.tc > u.tc + md.tc.error + u.error,
            "h {h}: modulated {} not above uniform {}",
            md.tc.tc,
            u.tc
        );
        // Weak-coupling modulated Tc (independent closed form) agrees to the band-curvature level.
        let (tw, _) = weak::modulated_tc(h.abs()).unwrap().unwrap();
        assert!(
            (md.tc.tc / tc0 - tw).abs() < tol::BAND_CURVATURE,
            "h {h}: {} vs {tw}",
            md.tc.tc / tc0
        );
        tcs.push((u.tc, md.tc.tc));
    }
    // Both uniform temperatures are non-zero, so this compares two numbers of size 0.53 Tc0.
    assert!(tcs[0].0 > 0.5 * tc0 && tcs[1].0 > 0.5 * tc0);
    assert!((tcs[0].0 / tcs[1].0 - 1.0).abs() < tol::INTEGRATION);
    assert!((tcs[0].1 / tcs[1].1 - 1.0).abs() < tol::INTEGRATION);
}
