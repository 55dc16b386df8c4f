//! Critical temperatures from the exact shell integral against published weak-coupling results
//! (physics.md section 8) and against the digamma closed form.
//!
//! The reference model: two circular parabolic pockets of equal mass at one zone point, with
//! cutoff/E_F = 0.05. Its pair density of states is exactly constant and h_k = h everywhere, so
//! the exact uniform Tc equation differs from the digamma equation only by terms of order
//! exp(-(Lambda - |h|)/T) (< 1e-15 here): the comparison tests the numerics at their own accuracy.
//! For q != 0 band curvature enters at order (q/kF)^2 (physics.md: about 1e-3 relative in q*).

mod common;

use common::*;
use nestor::solvers::roots::brent_root;
use nestor::solvers::tc::weak;
use nestor::solvers::{TcSolver, TcStatus};

/// Tolerances (relative unless said otherwise), each with its reason.
mod tol {
    /// Exact-integral Tc where the model is exactly the weak-coupling one: the integration target
    /// (chi to 1e-7 relative gives Tc to about 1e-7/lambda).
    pub const TC_SAME_MODEL: f64 = 2e-6;
    /// Published 4-5 digit values (section 8 table): half a unit of the last digit, plus room.
    pub const TABLE_ABS: f64 = 3e-4;
    /// q* on the modulated line: the maximum is flat and band curvature shifts q* by ~1e-3
    /// relative at cutoff/E_F = 0.05 (physics.md section 8).
    pub const Q_STAR: f64 = 3e-3;
    /// The Lifshitz temperature: finite cutoff/E_F separates it from the tricritical point by
    /// ~4e-4 in T/Tc0 at cutoff/E_F = 0.05 (physics.md section 8); the table gives 4 digits.
    pub const LIFSHITZ_T_ABS: f64 = 2e-3;
}

/// Tc0 / cutoff = (2 e^gamma / pi) exp(-1/lambda) = 1.133866 exp(-1/lambda)
/// (Bardeen, Cooper, Schrieffer, Phys. Rev. 108, 1175 (1957)).
#[test]
fn nested_tc_is_bcs() {
    let solver = TcSolver::default();
    for lambda in [0.2, 0.25, 0.3] {
        let (_, m) = nested_pair(lambda, 5.0, 100.0, 0.0);
        let ch = &m.channels[0];
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
/// (Sarma, J. Phys. Chem. Solids 24, 1029 (1963); physics.md section 3), solved independently by
/// kernels::weak (checked there against mpmath).
#[test]
fn uniform_tc_follows_the_digamma_equation() {
    let solver = TcSolver::default();
    let lambda = 0.25;
    let tc0 = 1.133_865_9 * 5.0 * (-1.0f64 / lambda).exp();
    for h in [0.3, 0.6, 0.9, 1.0] {
        let (_, m) = nested_pair(lambda, 5.0, 100.0, h * tc0);
        let r = solver.uniform(&m, &m.channels[0]).unwrap();
        let t = weak::uniform_tc(h).unwrap().unwrap();
        assert!(
            (r.tc / tc0 - t).abs() < tol::TC_SAME_MODEL,
            "h = {h} Tc0: exact {} vs digamma {t}",
            r.tc / tc0
        );
    }
}

/// Modulated line at T = 0.2 Tc0: h = 1.3519 Tc0, v q*/2 = 1.5023 Tc0 (section 8, computed with
/// mpmath; Burkhardt and Rainer, Ann. Phys. 3, 181 (1994); Shimahara, PRB 50, 12760 (1994)),
/// and at T = 0.05 Tc0: h = 1.6189 Tc0, v q*/(2h) = 1.0551. Uniform line at 0.2 Tc0: h = 0.9658 Tc0.
#[test]
fn modulated_line_matches_published_values() {
    let solver = TcSolver::default();
    let lambda = 0.25;
    let tc0 = 1.133_865_9 * 5.0 * (-1.0f64 / lambda).exp();
    let (_, m0) = nested_pair(lambda, 5.0, 100.0, 0.0);
    let v = m0.pockets[0].fermi_velocity_along([1.0, 0.0]);
    for (t, h_ref, q_ref) in [(0.2, 1.3519, 1.5023), (0.05, 1.6189, 1.0551 * 1.6189)] {
        let temp = t * tc0;
        let margin = |h: f64| {
            let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, h * tc0);
            let (_, v) = solver.max_over_q(&m, &m.channels[0], temp)?;
            Ok(v - 1.0)
        };
        let h = brent_root("modulated line", h_ref - 0.05, h_ref + 0.05, 1e-9, margin)
            .unwrap()
            .x;
        let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, h * tc0);
        let (q, _) = solver.max_over_q(&m, &m.channels[0], temp).unwrap();
        let big_q = v * q[0].hypot(q[1]) / 2.0 / tc0;
        assert!((h - h_ref).abs() < tol::TABLE_ABS, "T = {t} Tc0: h = {h}");
        assert!(
            (big_q / q_ref - 1.0).abs() < tol::Q_STAR,
            "T = {t} Tc0: v q*/2 = {big_q}"
        );
    }
    // Uniform line at 0.2 Tc0.
    let temp = 0.2 * tc0;
    let h = brent_root("uniform line", 0.93, 1.0, 1e-9, |h| {
        let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, h * tc0);
        Ok(solver.g_chi(&m, &m.channels[0], [0.0, 0.0], temp, &solver.acc)? - 1.0)
    })
    .unwrap()
    .x;
    assert!(
        (h - 0.9658).abs() < tol::TABLE_ABS,
        "uniform line at 0.2 Tc0: h = {h}"
    );
}

/// Lifshitz point: the q-curvature of chi at q = 0 changes sign on the uniform line at
/// T = 0.5615 Tc0, h = 1.0728 Tc0 in weak coupling (coinciding with Sarma's tricritical point;
/// Buzdin and Kachkachi, Phys. Lett. A 225, 341 (1997), citation from memory).
#[test]
fn lifshitz_point_on_the_uniform_line() {
    let solver = TcSolver::default();
    let lambda = 0.25;
    let tc0 = 1.133_865_9 * 5.0 * (-1.0f64 / lambda).exp();
    let (_, m0) = nested_pair(lambda, 5.0, 100.0, 0.0);
    let curvature_on_line = |h: f64| {
        let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, h * tc0);
        let ch = &m.channels[0];
        let u = solver.uniform(&m, ch)?;
        assert_eq!(u.status, TcStatus::Unstable);
        let (c, err) = solver.chi_q_curvature(&m, ch, u.tc, [1.0, 0.0])?;
        // The natural scale of the curvature is nu (v/T)^2; the difference error is far below it.
        let v = m.pockets[0].fermi_velocity_along([1.0, 0.0]);
        assert!(
            err < 1e-6 * ch.nu * (v / u.tc).powi(2),
            "curvature error {err}"
        );
        Ok(c)
    };
    let h = brent_root("Lifshitz point", 1.0, 1.08, 1e-8, curvature_on_line)
        .unwrap()
        .x;
    let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, h * tc0);
    let t = solver.uniform(&m, &m.channels[0]).unwrap().tc / tc0;
    assert!(
        (t - 0.5615).abs() < tol::LIFSHITZ_T_ABS,
        "Lifshitz T = {t} Tc0"
    );
    assert!((h - 1.0728).abs() < 2e-3, "Lifshitz h = {h} Tc0");
}

/// The uniform Tc is even in h for equal masses (particle-hole symmetry of the model), and the
/// modulated Tc is too; beyond the Lifshitz point the modulated Tc exceeds the uniform one.
#[test]
fn mismatch_sign_symmetry_and_modulated_above_uniform() {
    let solver = TcSolver::default();
    let lambda = 0.25;
    let tc0 = 1.133_865_9 * 5.0 * (-1.0f64 / lambda).exp();
    let (_, m0) = nested_pair(lambda, 5.0, 100.0, 0.0);
    let mut tcs = Vec::new();
    for h in [1.15, -1.15] {
        let (_, m) = nested_pair_fixed_g(&m0, 5.0, 100.0, h * tc0);
        let ch = &m.channels[0];
        let u = solver.uniform(&m, ch).unwrap();
        let md = solver.modulated(&m, ch, &u).unwrap();
        assert_eq!(md.tc.status, TcStatus::Unstable);
        assert!(md.q[0] > 0.0);
        if u.status == TcStatus::Unstable {
            assert!(md.tc.tc > u.tc);
        }
        // Weak-coupling modulated Tc (independent closed form) agrees to the band-curvature level.
        let (tw, _) = weak::modulated_tc(h.abs()).unwrap().unwrap();
        assert!(
            (md.tc.tc / tc0 - tw).abs() < 1e-3,
            "h {h}: {} vs {tw}",
            md.tc.tc / tc0
        );
        tcs.push((u.tc, md.tc.tc));
    }
    assert!((tcs[0].0 - tcs[1].0).abs() <= 1e-6 * tcs[0].0.max(1e-12));
    assert!((tcs[0].1 / tcs[1].1 - 1.0).abs() < 1e-6);
}
