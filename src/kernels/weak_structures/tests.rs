//! Tests of the weak-coupling structure loops: limits, an independent Matsubara-first route,
//! symmetries and argument checks.

use super::*;
use crate::kernels::weak::quartic_weak;
use crate::model::structure::rotate;
use crate::special::digamma;
use num_complex::Complex64;
use std::f64::consts::PI;

/// The Matsubara-first route, for the tests only: summing over n >= 0 before the angle,
/// sum_n (e1 + e3)/(e1 e2 e3 e4) = Psi[c2, c3, c4] + Psi[c1, c2, c4] (second divided
/// differences in c of Psi(c) = -(1/(2 pi i t)) psi(1/2 + i c/(2 pi t)), with c_j = h + Q_j.n),
/// then the midpoint rule in angle. Divided differences of close points come from the Cauchy
/// integral on a circle of radius pi t / 2 (the poles of Psi are pi t from the real axis).
fn psi_sum(c: f64, t: f64) -> Complex64 {
    let s = 1.0 / (2.0 * PI * t);
    let z = Complex64::new(0.5, c * s);
    -digamma(z) / Complex64::new(0.0, 2.0 * PI * t)
}

fn psi_sum_complex(c: Complex64, t: f64) -> Complex64 {
    let z = Complex64::new(0.5, 0.0) + Complex64::new(0.0, 1.0) * c / (2.0 * PI * t);
    -digamma(z) / Complex64::new(0.0, 2.0 * PI * t)
}

fn divided(points: &[f64], t: f64) -> Complex64 {
    let mut p = points.to_vec();
    p.sort_by(f64::total_cmp);
    let spread = p[p.len() - 1] - p[0];
    if p.len() == 1 {
        return psi_sum(p[0], t);
    }
    if spread > 0.5 * PI * t {
        let hi = divided(&p[1..], t);
        let lo = divided(&p[..p.len() - 1], t);
        return (hi - lo) / spread;
    }
    // Cauchy: f[x_0..x_k] = (1/2 pi i) oint f(z)/prod(z - x_j) dz.
    let centre = 0.5 * (p[0] + p[p.len() - 1]);
    let r = 0.5 * PI * t;
    let m = 64;
    let mut acc = Complex64::new(0.0, 0.0);
    for k in 0..m {
        let u = Complex64::from_polar(1.0, 2.0 * PI * k as f64 / m as f64);
        let z = centre + r * u;
        let mut den = Complex64::new(1.0, 0.0);
        for &x in &p {
            den *= z - x;
        }
        acc += psi_sum_complex(z, t) * r * u / den;
    }
    acc / m as f64
}

fn matsubara_first(t: f64, h: f64, q: [[f64; 2]; 4], m: usize) -> f64 {
    let mut sum = 0.0;
    for k in 0..m {
        let th = 2.0 * PI * (k as f64 + 0.5) / m as f64;
        let (s, co) = th.sin_cos();
        let c: Vec<f64> = q.iter().map(|v| h + v[0] * co + v[1] * s).collect();
        let f = divided(&[c[1], c[2], c[3]], t) + divided(&[c[0], c[1], c[3]], t);
        sum += (Complex64::new(0.0, -1.0) * f).re;
    }
    PI * t / 4.0 * sum / m as f64
}

/// Q = 0: B = beta/2 with beta = -Re psi''(1/2 + i h/(2 pi t))/(16 pi^2 t^2) (see the crate
/// docs (`crate::theory`)), and at h = 0 7 zeta(3)/(16 pi^2 t^2) (Gor'kov's coefficient,
/// halved).
#[test]
fn uniform_limit() {
    for &(t, h) in &[(0.7, 0.0), (0.5, 1.1), (0.1, 1.5), (0.02, 0.3)] {
        let (b, err) = quadruple_weak(t, h, [[0.0; 2]; 4]).unwrap();
        let want = quartic_weak(t, h) / 2.0;
        assert!(
            (b - want).abs() < 1e-12 * want.abs().max(1.0 / (t * t)),
            "{b} vs {want}"
        );
        assert!(err < 1e-9 * want.abs().max(1.0 / (t * t)));
    }
    let zeta3 = 1.202_056_903_159_594_3;
    let t = 0.3;
    let (b, _) = quadruple_weak(t, 0.0, [[0.0; 2]; 4]).unwrap();
    let want = 7.0 * zeta3 / (16.0 * PI * PI * t * t);
    assert!((b / want - 1.0).abs() < 1e-12);
}

/// Against the Matsubara-first route (divided differences of the digamma function), for the
/// quadruples of a hexagon and of a generic four-wavevector set, at high and low t.
#[test]
fn agrees_with_the_matsubara_first_route() {
    let base = [1.3, 0.4];
    let hex: Vec<[f64; 2]> = (0..6).map(|k| rotate(base, k as f64 * PI / 3.0)).collect();
    let quads = [
        [hex[0], hex[0], hex[0], hex[0]],
        [hex[0], hex[0], hex[1], hex[1]],
        [hex[0], hex[2], hex[2], hex[0]],
        [hex[0], hex[3], hex[3], hex[0]],
        [hex[0], hex[1], hex[3], hex[4]],
        [hex[0], hex[2], hex[3], hex[5]],
    ];
    for &(t, h) in &[(0.4, 1.1), (0.08, 1.55)] {
        for q in quads {
            let (b, err) = quadruple_weak(t, h, q).unwrap();
            let check = matsubara_first(t, h, q, 4096);
            let check2 = matsubara_first(t, h, q, 8192);
            assert!((check - check2).abs() < 1e-11 * check.abs().max(1.0));
            // Scale: the h = 0 uniform value 7 zeta(3)/(16 pi^2 t^2), a natural magnitude.
            let scale = quartic_weak(t, 0.0) / 2.0;
            assert!(
                (b - check).abs() < 1e-9 * scale,
                "t {t} h {h}: {b} vs {check} (err {err})"
            );
            assert!(err < 1e-9 * scale);
        }
    }
}

/// Rotating or reflecting all four wavevectors, or relabeling 1 <-> 3, leaves B unchanged.
#[test]
fn symmetries() {
    let q = [
        [1.2, 0.1],
        [-0.3, 0.9],
        [0.5, -0.7],
        [1.2 + 0.3 + 0.5, 0.1 - 0.9 - 0.7],
    ];
    let (b, _) = quadruple_weak(0.3, 1.2, q).unwrap();
    let rot: [[f64; 2]; 4] = q.map(|v| rotate(v, 0.77));
    let refl: [[f64; 2]; 4] = q.map(|v| [v[0], -v[1]]);
    let swap = [q[2], q[1], q[0], q[3]];
    for other in [rot, refl, swap] {
        let (b2, _) = quadruple_weak(0.3, 1.2, other).unwrap();
        assert!((b - b2).abs() < 1e-11 * b.abs(), "{b} vs {b2}");
    }
    assert_eq!(
        quadruple_key(&q, 4.0),
        quadruple_key(&[q[1], q[0], q[3], q[2]], 4.0)
    );
}

/// The imaginary part of the phase-weighted sum cancels for arbitrary phases; the class count
/// of the hexagon is small.
#[test]
fn imaginary_part_cancels() {
    let hex: Vec<[f64; 2]> = (0..6)
        .map(|k| rotate([1.4, 0.0], k as f64 * PI / 3.0))
        .collect();
    let data = structure_quadruples_weak(0.2, 1.35, &hex).unwrap();
    assert_eq!(data.quadruples.len(), 90);
    assert!(data.distinct <= 8, "distinct = {}", data.distinct);
    let phases = [0.0, 0.3, -1.1, 2.0, 0.7, -2.5];
    let (re, im, err) = quartic_with_phases(&data, &phases);
    assert!(im.abs() < 1e-12 * re.abs().max(1.0), "im = {im}");
    assert!(err < 1e-8 * re.abs().max(1.0));
}

/// Far below the temperatures the angular rule can resolve, the failure is an error, not a
/// number.
#[test]
fn unresolvable_temperature_is_an_error() {
    let q = [1.75, 0.0];
    match quadruple_weak(1e-7, 1.7, [q, q, q, q]) {
        Err(WeakError::AngularAverageNotConverged { .. }) => {}
        other => panic!("expected a convergence error, got {other:?}"),
    }
}

#[test]
fn invalid_arguments() {
    assert!(quadruple_weak(0.0, 1.0, [[0.0; 2]; 4]).is_err());
    assert!(quadruple_weak(0.5, f64::NAN, [[0.0; 2]; 4]).is_err());
    assert!(quadruple_weak(0.5, 1.0, [[1.0, 0.0], [0.0; 2], [0.0; 2], [0.0; 2]]).is_err());
    assert!(structure_quartic_weak(0.5, 1.0, &[[1.0, 0.0]], &[0.0, 1.0]).is_err());
    assert!(structure_quartic_weak(0.5, 1.0, &[], &[]).is_err());
}
