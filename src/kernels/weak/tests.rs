//! Tests of the weak-coupling kernel: the pair margin against mpmath and an independent
//! Matsubara sum, the Q-curvature and the quartic coefficient by independent routes, and the BCS
//! constants against literature values.

// Reference values are pasted with all the digits the reference library printed (some of them
// are close to pi/2), so the digit-count and approximate-constant lints do not apply.
#![allow(clippy::excessive_precision, clippy::approx_constant)]

use super::*;

/// Against 20-digit mpmath values of the margin itself: the target accuracy of `pair_margin`.
const MARGIN_TOL: f64 = 1e-10;

/// The Euler-Mascheroni constant from its definition, without the crate's constant:
/// H_n - ln n - 1/(2n) + 1/(12 n^2) - 1/(120 n^4) at n = 1000 (the next term is below 1e-19).
fn euler_gamma_from_harmonic_sum() -> f64 {
    let n = 1000;
    let harmonic: f64 = (1..=n).rev().map(|k| 1.0 / k as f64).sum();
    let x = n as f64;
    harmonic - x.ln() - 1.0 / (2.0 * x) + 1.0 / (12.0 * x * x) - 1.0 / (120.0 * x.powi(4))
}

/// Literature values (BCS 1957; 2 e^gamma / pi = 1.1338659..., pi e^-gamma = 1.7638769...)
/// to their 8 quoted digits, and both constants against gamma computed independently
/// (to 1e-14, the rounding of the sums).
#[test]
fn constants() {
    assert!((bcs_tc_prefactor() - 1.133_865_9).abs() < 1e-7);
    assert!((delta0_over_tc0() - 1.763_876_9).abs() < 1e-7);
    let gamma = euler_gamma_from_harmonic_sum();
    assert!((delta0_over_tc0() - PI * (-gamma).exp()).abs() < 1e-14);
    assert!((bcs_tc_prefactor() - 2.0 * gamma.exp() / PI).abs() < 1e-14);
    assert!((tc0_over_cutoff(1.0) * 1f64.exp() - 1.133_865_9).abs() < 1e-7);
    assert!(tc0_over_cutoff(0.0).is_nan());
}

/// At h = Q = 0 the average is psi(1/2) itself, so m = ln(1/t) exactly (identity).
#[test]
fn nested_margin_is_log_one_over_t() {
    for &t in &[1e-3, 0.1, 0.5, 1.0, 2.0] {
        assert_eq!(pair_margin(t, 0.0, 0.0).unwrap(), -f64::ln(t));
    }
}

/// References: mpmath 1.3 at 25 digits, the average by mpmath.quad split at cos theta0 = -h/Q
/// and at graded points around it (unchanged at 32 digits with other split points):
/// ```text
/// from mpmath import mp, mpf, psi, quad, pi, log, acos, cos
/// mp.dps = 25
/// f = lambda th: psi(0, mpf(1)/2 + 1j*(h + Q*cos(th))/(2*pi*t)).real
/// m = log(1/t) - (quad(f, [0, th0, ..., pi], maxdegree=10)/pi - psi(0, mpf(1)/2))
/// ```
#[test]
fn margin_matches_mpmath() {
    let refs = [
        (0.5, 0.3, 0.2, 0.60531234475913355451),
        (0.2, 1.35, 1.5, 0.0011537489745460574086),
        (0.05, 1.6, 1.7, 0.010405580565281932367),
        (0.01, 1.72, 1.75, 0.0033444110839418768837),
        (0.01, 1.0, 3.0, -0.53109806772024237786),
        (0.05, 1.62, 1.5, -0.20707418290443838071),
        (0.2, 0.0, 1.0, 0.56016738915504643509),
        (0.001, 1.76, 1.77, -0.0034666779716063680474),
    ];
    for (t, h, q, want) in refs {
        let got = pair_margin(t, h, q).unwrap();
        assert!(
            (got - want).abs() < MARGIN_TOL,
            "m({t}, {h}, {q}) = {got}, want {want}"
        );
        // Signs of h and Q do not matter.
        assert!((pair_margin(t, -h, -q).unwrap() - want).abs() < MARGIN_TOL);
    }
}

/// Independent route: the Matsubara sum. Averaging 1/(a + i(c + b cos theta)) over theta gives
/// 1/sqrt((a + ic)^2 + b^2), so with a_n = n + 1/2, c = h/(2 pi t), b = Q/(2 pi t),
/// <Re psi> - psi(1/2) = sum_n [1/a_n - Re ((a_n + ic)^2 + b^2)^(-1/2)]; the tail beyond N is
/// its midpoint-rule Euler-Maclaurin integral, Re ln[(z + sqrt(z^2 + b^2))/(2N)] with z = N + ic,
/// minus g'(N)/24, with N = 200 (|b| + |c|) + 2000 (the neglected Euler-Maclaurin terms and the
/// rounding of the sum stay below 1e-12). No digamma and no angular quadrature is involved.
fn margin_by_matsubara_sum(t: f64, h: f64, q: f64) -> f64 {
    let c = h / (2.0 * PI * t);
    let b = q / (2.0 * PI * t);
    let g = |x: f64| {
        let z = Complex64::new(x, c);
        1.0 / x - (z * z + b * b).sqrt().inv().re
    };
    let n_terms = (200.0 * (b.abs() + c.abs()) + 2000.0) as usize;
    let sum: f64 = (0..n_terms).map(|n| g(n as f64 + 0.5)).sum();
    let x = n_terms as f64;
    let z = Complex64::new(x, c);
    let root = (z * z + b * b).sqrt();
    let tail_integral = ((z + root) / (2.0 * x)).ln().re;
    let g_prime = -1.0 / (x * x) + (z / (root * root * root)).re;
    let average = sum + tail_integral - g_prime / 24.0;
    -t.ln() - average
}

#[test]
fn margin_matches_matsubara_sum() {
    for &t in &[1e-3, 0.02, 0.1, 0.3, 0.7, 1.3] {
        for &h in &[0.0, 0.4, 1.1, 1.7] {
            for &q in &[0.0, 0.3, 1.2, 1.75, 4.0] {
                let got = pair_margin(t, h, q).unwrap();
                let want = margin_by_matsubara_sum(t, h, q);
                assert!(
                    (got - want).abs() < MARGIN_TOL,
                    "m({t}, {h}, {q}) = {got}, Matsubara sum {want}"
                );
            }
        }
    }
}

/// beta/nu by the Matsubara sum, without polygamma: Re psi''(1/2 + i y) =
/// -2 sum_n Re (n + 1/2 + i y)^-3, so beta/nu = sum_n Re (a_n + i y)^-3 / (8 pi^2 t^2) with
/// y = h/(2 pi t); the tail beyond N = 20000 is its midpoint-rule integral Re (N + i y)^-2 / 2
/// (the neglected Euler-Maclaurin term is of order N^-4).
fn quartic_by_matsubara_sum(t: f64, h: f64) -> f64 {
    let y = h / (2.0 * PI * t);
    let n_terms = 20_000;
    let term = |x: f64| Complex64::new(x, y).powi(-3).re;
    let sum: f64 = (0..n_terms).rev().map(|n| term(n as f64 + 0.5)).sum();
    let tail = 0.5 * Complex64::new(n_terms as f64, y).powi(-2).re;
    (sum + tail) / (8.0 * PI * PI * t * t)
}

/// The Q-curvature from the angular quadrature (Richardson finite differences of the margin
/// in Q) agrees with the closed form Re psi''/(8 pi^2 t^2); the closed form of beta/nu agrees
/// with the Matsubara sum, and the two change sign together (curvature = -2 beta/nu).
#[test]
fn q_curvature_routes_agree() {
    for &(t, h) in &[(0.8, 0.3), (0.5615, 1.0728), (0.3, 1.0), (0.2, 0.5)] {
        let closed = margin_q_curvature(t, h);
        let fd = margin_q_curvature_fd(t, h).unwrap();
        assert!(
            (closed - fd).abs() < 1e-6 * (1.0 + closed.abs()),
            "{closed} vs {fd}"
        );
        let beta = quartic_by_matsubara_sum(t, h);
        assert!(
            (quartic_weak(t, h) - beta).abs() < 1e-10 * (1.0 + beta.abs()),
            "beta/nu {} vs Matsubara sum {beta}",
            quartic_weak(t, h)
        );
        assert!((fd + 2.0 * beta).abs() < 1e-6 * (1.0 + fd.abs()));
    }
}

/// beta at h = 0 is the BCS value 7 zeta(3)/(8 pi^2 t^2) (Gor'kov's Ginzburg-Landau coefficient).
#[test]
fn quartic_at_zero_mismatch() {
    let zeta3 = 1.202_056_903_159_594_3;
    let t = 0.7;
    let want = 7.0 * zeta3 / (8.0 * PI * PI * t * t);
    assert!((quartic_weak(t, 0.0) - want).abs() < 1e-14 * want);
}
