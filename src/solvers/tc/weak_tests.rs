//! Tests of the weak-coupling searches: the uniform and modulated lines and critical
//! temperatures against tabulated values, the tricritical and Lifshitz points, and the global
//! maximum over Q.

#![allow(clippy::excessive_precision, clippy::approx_constant)]

use super::*;
use crate::kernels::weak::pair_margin;

/// Check values quoted to 4 decimals (mpmath at 30 digits and the cited papers; see the crate
/// docs (`crate::theory`)): rounding allows 5e-5; 2e-4 absolute leaves room for the flat maximum in Q.
const TABLE_TOL: f64 = 2e-4;

/// Against 20-digit mpmath values of the margin itself: the target accuracy of `pair_margin`.
const MARGIN_TOL: f64 = 1e-10;

/// Agreement of two routes to the same number computed here to ~1e-12 (roots, finite
/// differences): 1e-8 absolute is far below any physics use and above their noise.
const ROUTE_TOL: f64 = 1e-8;

/// uniform_tc(0) = 1 (definition of Tc0); the uniform line at t = 0.2 is h = 0.9658
/// (mpmath 1.3 at 30 digits); uniform_tc inverts uniform_line_h.
#[test]
fn uniform_line() {
    assert_eq!(uniform_tc(0.0).unwrap(), Some(1.0));
    let h = uniform_line_h(0.2).unwrap();
    assert!((h - 0.9658).abs() < TABLE_TOL, "h = {h}");
    // Points on the upper branch (above the nose of the line, near t = 0.48).
    for &t in &[0.9, 0.7, 0.55] {
        let h = uniform_line_h(t).unwrap();
        let tc = uniform_tc(h).unwrap().unwrap();
        assert!((tc - t).abs() < ROUTE_TOL, "t = {t}, h = {h}, tc = {tc}");
        assert!(pair_margin(t, h, 0.0).unwrap().abs() < MARGIN_TOL);
    }
    assert!(uniform_line_h(1.0).is_err());
    // Far beyond the nose of the uniform line there is no uniform instability.
    assert_eq!(uniform_tc(1.5).unwrap(), None);
}

/// Below the nose the uniform line has two roots in t at fixed h: the larger one is returned,
/// and at h just below the T -> 0 end Delta0/2 the root exists and lies on the upper branch.
#[test]
fn uniform_tc_takes_the_upper_branch() {
    // Locate the nose of the uniform line (the largest h) on a grid in t.
    let (t_nose, h_nose) = (1..100)
        .map(|k| {
            let t = 0.01 * k as f64;
            (t, uniform_line_h(t).unwrap())
        })
        .fold((0.0, 0.0), |a, b| if b.1 > a.1 { b } else { a });
    // Slightly below the nose: two roots, the returned one lies above the nose temperature.
    let h = h_nose - 1e-3;
    let tc = uniform_tc(h).unwrap().unwrap();
    assert!(tc > t_nose, "tc = {tc}, nose at t = {t_nose}");
    assert!(pair_margin(tc, h, 0.0).unwrap().abs() < MARGIN_TOL);
    // Just above the nose (past the refinement of the grid): none.
    assert_eq!(uniform_tc(h_nose + 1e-3).unwrap(), None);
    // Below Delta0/2 the lower branch has gone below t = 0: a single root.
    assert!(uniform_tc(0.8).unwrap().is_some());
}

/// Tricritical point t = 0.5615, h = 1.0728 (Sarma, J. Phys. Chem. Solids 24, 1029 (1963);
/// Saint-James, Sarma, Thomas (1969)); the Lifshitz point coincides in weak coupling (Buzdin and
/// Kachkachi 1997; see the crate docs (`crate::theory`)).
#[test]
fn tricritical_and_lifshitz_points() {
    let (t, h) = tricritical().unwrap();
    assert!((t - 0.5615).abs() < TABLE_TOL, "t = {t}");
    assert!((h - 1.0728).abs() < TABLE_TOL, "h = {h}");
    assert!(quartic_weak(t, h).abs() < 1e-10);
    let (tl, hl) = lifshitz().unwrap();
    assert!(
        (tl - t).abs() < ROUTE_TOL && (hl - h).abs() < ROUTE_TOL,
        "{tl} {hl} vs {t} {h}"
    );
}

/// Modulated line at t = 0.2: h = 1.3519, Q* = 1.5023 (mpmath 1.3 at 30
/// digits).
#[test]
fn modulated_line_at_t_0_2() {
    let (h, q) = modulated_line(0.2).unwrap();
    assert!((h - 1.3519).abs() < TABLE_TOL, "h = {h}");
    assert!((q - 1.5023).abs() < TABLE_TOL, "Q* = {q}");
    let (m, q2) = modulated_point(0.2, h).unwrap();
    assert!(m.abs() < MARGIN_TOL);
    assert!((q2 - q).abs() < 1e-6);
}

/// Low-temperature modulated line: h = 1.6189 / 1.6959 / 1.7262, Q*/h = 1.0551 / 1.0275 / 1.0158
/// at t = 0.05 / 0.02 / 0.01 (mpmath 1.3 at 30 digits); the approach to the
/// T -> 0 limits h -> Delta0, Q*/h -> 1 (Burkhardt and Rainer, Ann. Phys. 3, 181 (1994); Shimahara,
/// PRB 50, 12760 (1994)) is monotonic.
#[test]
fn modulated_line_at_low_temperature() {
    let table = [
        (0.05, 1.6189, 1.0551),
        (0.02, 1.6959, 1.0275),
        (0.01, 1.7262, 1.0158),
    ];
    let (mut h_prev, mut ratio_prev) = (modulated_line(0.2).unwrap().0, f64::INFINITY);
    for (t, h_want, ratio_want) in table {
        let (h, q) = modulated_line(t).unwrap();
        assert!((h - h_want).abs() < TABLE_TOL, "t = {t}: h = {h}");
        assert!(
            (q / h - ratio_want).abs() < TABLE_TOL,
            "t = {t}: Q*/h = {}",
            q / h
        );
        assert!(
            h > h_prev && h < delta0_over_tc0(),
            "h not increasing towards Delta0"
        );
        assert!(
            q / h < ratio_prev && q / h > 1.0,
            "Q*/h not decreasing towards 1"
        );
        h_prev = h;
        ratio_prev = q / h;
    }
    // Further down in t (no table values): still monotonic, and within 1% of both limits at
    // t = 0.001 (the gaps shrink roughly like t, with a slowly growing prefactor).
    for t in [0.002, 0.001] {
        let (h, q) = modulated_line(t).unwrap();
        assert!(h > h_prev && h < delta0_over_tc0(), "t = {t}: h = {h}");
        assert!(
            q / h < ratio_prev && q / h > 1.0,
            "t = {t}: Q*/h = {}",
            q / h
        );
        h_prev = h;
        ratio_prev = q / h;
    }
    assert!(delta0_over_tc0() - h_prev < 0.01 && ratio_prev - 1.0 < 0.01);
}

/// modulated_tc inverts modulated_line (t = 0.2: h = 1.3519, Q* = 1.5023 from the table), gives
/// the uniform answer above the Lifshitz point, and none beyond h = Delta0.
#[test]
fn modulated_tc_inverts_the_line() {
    let (h, q) = modulated_line(0.2).unwrap();
    let (tc, qc) = modulated_tc(h).unwrap().unwrap();
    assert!((tc - 0.2).abs() < ROUTE_TOL, "tc = {tc}");
    assert!((qc - q).abs() < 1e-5, "Q* = {qc} vs {q}");
    // Above the Lifshitz point (h small) the uniform state is the most unstable: Q* = 0.
    let (tc, qc) = modulated_tc(0.5).unwrap().unwrap();
    assert_eq!(qc, 0.0);
    assert!((tc - uniform_tc(0.5).unwrap().unwrap()).abs() < ROUTE_TOL);
    assert_eq!(modulated_tc(0.0).unwrap(), Some((1.0, 0.0)));
    // Beyond the T -> 0 end of the modulated line, h = Delta0 = 1.7639: no instability.
    assert_eq!(modulated_tc(1.8).unwrap(), None);
}

/// The global search never settles on a local maximum: a brute-force scan of 1500 points over
/// Q in [0, 3(h + t)] finds no larger margin (beyond the quadrature noise) at points below,
/// at, and above the Lifshitz temperature and at low t.
#[test]
fn modulated_point_is_global() {
    let t_l = 0.5;
    let points = [
        (0.3, 1.2),
        (0.05, 1.6),
        (0.01, 1.72),
        (0.8, 0.5),
        (t_l, uniform_line_h(t_l).unwrap()),
    ];
    for (t, h) in points {
        let (m, q) = modulated_point(t, h).unwrap();
        let q_max = 3.0 * (h + t);
        let n = 1500;
        for k in 0..=n {
            let qk = q_max * k as f64 / n as f64;
            let mk = pair_margin(t, h, qk).unwrap();
            assert!(
                mk <= m + 1e-12,
                "t = {t}, h = {h}: m({qk}) = {mk} > m({q}) = {m}"
            );
        }
    }
}

#[test]
fn invalid_arguments_are_errors() {
    assert!(pair_margin(0.0, 1.0, 1.0).is_err());
    assert!(pair_margin(-1.0, 1.0, 1.0).is_err());
    assert!(pair_margin(0.5, f64::NAN, 1.0).is_err());
    assert!(modulated_line(1.0).is_err());
    assert!(uniform_line_h(0.0).is_err());
}
