//! Kernel: weak-coupling quartic Landau coefficient of multi-wavevector structures (see the crate docs
//! (`crate::theory`)): two circular pockets with equal velocities, linearised dispersion, the
//! energy integral taken over the whole line. Units and conventions as in
//! [`crate::kernels::weak`]: `t` = T/Tc0, `h` = mismatch/Tc0, and every wavevector is given in
//! energy units as Q = hbar v q / 2 over Tc0 (a 2-vector).
//!
//! # The quartic term
//! For Delta(r) = sum_j Delta_j exp(i q_j.r) the quartic term of Omega per area and spin channel is
//!
//! ```text
//! F4 = sum_{(j1,j2,j3,j4): q_j1 - q_j2 + q_j3 - q_j4 = 0} Delta_j1 Delta_j2^* Delta_j3 Delta_j4^* B,
//! B(q1, q2, q3, q4) = (T/2) sum_n int d^2k/(2 pi)^2 G_b(k) G_a(k+q1) G_b(k+q1-q2) G_a(k+q1-q2+q3),
//! ```
//!
//! G = 1/(i w_n - eps), from the fourth-order term (T/4) Tr (G0 V)^4 of -T Tr ln(-G^-1). For one
//! wavevector F4 = B(q, q, q, q) |Delta|^4 = (beta/2) |Delta|^4 with beta of
//! [`crate::kernels::weak::quartic_weak`].
//!
//! # The weak-coupling form
//! Near the Fermi surface, at angle theta (n = (cos theta, sin theta)), write zeta for the radial
//! energy: eps_a(k + p) = zeta + v n.p + h and eps_b(k + p) = -zeta - v n.p + h. The four
//! propagators are 1/(zeta + A1), 1/(B1 - zeta), 1/(zeta + A2), 1/(B2 - zeta) with
//! A1 = i w - h, B1 = i w - h - 2 Q1.n, A2 = i w - h + 2 (Q1 - Q2).n, B2 = i w - h - 2 Q4.n.
//! For w > 0 the poles of the B-factors lie in the upper half plane; closing the zeta contour there,
//!
//! ```text
//! int dzeta (...) = -2 pi i (A1 + A2 + B1 + B2) / [(A1 + B1)(A2 + B1)(A1 + B2)(A2 + B2)]
//!                 = -i pi (e1 + e3) / (4 e1 e2 e3 e4),      e_j = i w_n - h - Q_j.n,
//! ```
//!
//! using q4 = q1 - q2 + q3 (so e1 + e3 = e2 + e4). Negative frequencies give the complex conjugate.
//! With d^2k/(2 pi)^2 = nu dzeta dtheta/(2 pi),
//!
//! ```text
//! B / nu = (pi t / 4) sum_{n >= 0} < Re[-i (e1 + e3) / (e1 e2 e3 e4)] >_theta,   w_n = (2n + 1) pi t,
//! ```
//!
//! in Tc0^-2 units. At Q = 0 every e_j = i w - h and B/nu = -Re psi''(1/2 + i h/(2 pi t)) /
//! (32 pi^2 t^2) = beta/(2 nu); at h = 0 that is 7 zeta(3) / (16 pi^2 t^2).
//!
//! # Numerics
//! - Angle: the periodic trapezoid rule with node doubling. The integrand is analytic in a strip
//!   |Im theta| of width about w_n/|Q| (Im e_j = w_n > 0), so the rule converges geometrically; the
//!   difference of the last two levels is the (pessimistic) error estimate of the finer one, and a
//!   level is accepted when it is below `ANGULAR_REL` times the mean modulus of the integrand.
//! - Frequency: the terms n < N are summed directly; for n >= N, where |e_j| > |E| - |Q| with
//!   E = i w_n - h and w_N >= `TAIL_RATIO` max|Q_j|, the integrand is expanded in powers of 1/E up
//!   to E^-11 (the angular averages of the coefficients are trigonometric polynomials, averaged
//!   exactly), and each power is summed exactly with the polygamma function:
//!   sum_{n >= N} E_n^-k = (2 pi i t)^-k (-1)^k psi^(k-1)(N + 1/2 + i h/(2 pi t)) / (k-1)!.
//!   The cut-off N is doubled until two successive results agree to `REL_TARGET` times the scale
//!   (the sum of the moduli of the contributions); their difference is the error estimate.
//! - Quadruples related by a rotation or reflection of all four wavevectors, or by the relabelings
//!   that leave the integrand unchanged (1 <-> 3, 2 <-> 4 and the exchange of the pairs {1, 3} and
//!   {2, 4}), have the same B: a structure integrates each class once, in parallel.

//!
//! Files: `quadruple` (the loop of one quadruple: angular averages, the Matsubara sum and its
//! polygamma tail); this file: every quadruple of a structure, by symmetry class, and the quartic
//! coefficient with phases.

mod quadruple;

pub use quadruple::quadruple_weak;

use crate::kernels::weak::WeakError;
use crate::model::structure::{quadruple_phase, Structure};
use quadruple::{check_args, check_finite};
use std::collections::HashMap;

/// The loop coefficients of every momentum-conserving quadruple of a set of wavevectors.
#[derive(Debug, Clone, PartialEq)]
pub struct StructureQuadruples {
    /// The ordered quadruples (j1, j2, j3, j4) with q_j1 - q_j2 + q_j3 - q_j4 = 0, in the order of
    /// [`Structure::quadruples`].
    pub quadruples: Vec<[usize; 4]>,
    /// B/nu of each quadruple (Tc0^-2 units), same order.
    pub values: Vec<f64>,
    /// Absolute error estimate of each value.
    pub errors: Vec<f64>,
    /// Number of distinct integrals evaluated (classes of quadruples equal by symmetry).
    pub distinct: usize,
}

/// Symmetry-invariant key of a quadruple: the Gram matrix of its four wavevectors (rotation- and
/// reflection-invariant), quantised to 1e-9 of the largest |Q|^2, minimised over the eight
/// relabelings that preserve the pairs {1, 3} and {2, 4} (they leave the integrand unchanged).
fn quadruple_key(q: &[[f64; 2]; 4], scale2: f64) -> [i64; 10] {
    const RELABELINGS: [[usize; 4]; 8] = [
        [0, 1, 2, 3],
        [2, 1, 0, 3],
        [0, 3, 2, 1],
        [2, 3, 0, 1],
        [1, 0, 3, 2],
        [1, 2, 3, 0],
        [3, 0, 1, 2],
        [3, 2, 1, 0],
    ];
    let mut best: Option<[i64; 10]> = None;
    for p in RELABELINGS {
        let mut key = [0i64; 10];
        let mut idx = 0;
        for i in 0..4 {
            for j in i..4 {
                let (a, b) = (q[p[i]], q[p[j]]);
                let g = (a[0] * b[0] + a[1] * b[1]) / scale2;
                key[idx] = (g * 1e9).round() as i64;
                idx += 1;
            }
        }
        if best.is_none_or(|b| key < b) {
            best = Some(key);
        }
    }
    best.expect("eight relabelings")
}

/// B/nu (Tc0^-2 units) of every momentum-conserving quadruple of the wavevectors `wavevectors`
/// (Q = hbar v q/2 over Tc0), in the order of [`Structure::quadruples`], with error estimates.
/// Each symmetry class of quadruples is integrated once; the classes run in parallel.
pub fn structure_quadruples_weak(
    t: f64,
    h: f64,
    wavevectors: &[[f64; 2]],
) -> Result<StructureQuadruples, WeakError> {
    use rayon::prelude::*;
    check_args(t, h)?;
    if wavevectors.is_empty() {
        return Err(WeakError::InvalidArgument {
            name: "number of wavevectors",
            value: 0.0,
            allowed: "a structure needs at least one wavevector",
        });
    }
    check_finite(wavevectors)?;
    let structure = Structure {
        name: String::new(),
        wavevectors: wavevectors.to_vec(),
    };
    let quadruples = structure.quadruples();
    let q_max = structure.q_max();
    let scale2 = if q_max > 0.0 { q_max * q_max } else { 1.0 };
    let geometry = |j: &[usize; 4]| -> [[f64; 2]; 4] {
        let mut q = [
            wavevectors[j[0]],
            wavevectors[j[1]],
            wavevectors[j[2]],
            wavevectors[j[3]],
        ];
        // Close the loop exactly: q4 = q1 - q2 + q3 (the quadruple search allows 1e-9 q_max).
        q[3] = [q[0][0] - q[1][0] + q[2][0], q[0][1] - q[1][1] + q[2][1]];
        q
    };
    let mut class_of = Vec::with_capacity(quadruples.len());
    let mut representatives: Vec<[[f64; 2]; 4]> = Vec::new();
    let mut index: HashMap<[i64; 10], usize> = HashMap::new();
    for j in &quadruples {
        let q = geometry(j);
        let key = quadruple_key(&q, scale2);
        let c = *index.entry(key).or_insert_with(|| {
            representatives.push(q);
            representatives.len() - 1
        });
        class_of.push(c);
    }
    let results: Vec<Result<(f64, f64), WeakError>> = representatives
        .par_iter()
        .map(|q| quadruple_weak(t, h, *q))
        .collect();
    let mut class_values = Vec::with_capacity(results.len());
    for r in results {
        class_values.push(r?);
    }
    let values = class_of.iter().map(|&c| class_values[c].0).collect();
    let errors = class_of.iter().map(|&c| class_values[c].1).collect();
    Ok(StructureQuadruples {
        quadruples,
        values,
        errors,
        distinct: representatives.len(),
    })
}

/// F4 / |Delta|^4 for equal amplitudes Delta_j = |Delta| e^{i phi_j}: sum over the quadruples of
/// e^{i (phi_j1 - phi_j2 + phi_j3 - phi_j4)} B, as (real part, imaginary part, error estimate).
/// The imaginary part cancels between each quadruple and its mirror (j2, j1, j4, j3), which has
/// the same B.
pub fn quartic_with_phases(data: &StructureQuadruples, phases: &[f64]) -> (f64, f64, f64) {
    let (mut re, mut im, mut err) = (0.0, 0.0, 0.0);
    for ((j, b), e) in data
        .quadruples
        .iter()
        .zip(data.values.iter())
        .zip(data.errors.iter())
    {
        let (s, c) = quadruple_phase(phases, *j).sin_cos();
        re += c * b;
        im += s * b;
        err += e;
    }
    (re, im, err)
}

/// Weak-coupling quartic coefficient F4/(nu |Delta|^4) (Tc0^-2 units) of the structure with the
/// wavevectors `wavevectors` (Q = hbar v q/2 over Tc0), equal amplitudes and the phases `phases`
/// (radians, one per wavevector), with an absolute error estimate. Per spin channel; the
/// grand-potential density is n_s nu F4 |Delta|^4.
///
/// The imaginary part of the quadruple sum cancels exactly in theory; whatever remains
/// numerically is added to the error estimate.
pub fn structure_quartic_weak(
    t: f64,
    h: f64,
    wavevectors: &[[f64; 2]],
    phases: &[f64],
) -> Result<(f64, f64), WeakError> {
    if phases.len() != wavevectors.len() {
        return Err(WeakError::InvalidArgument {
            name: "number of phases",
            value: phases.len() as f64,
            allowed: "one phase per wavevector",
        });
    }
    if let Some(&p) = phases.iter().find(|p| !p.is_finite()) {
        return Err(WeakError::InvalidArgument {
            name: "phase",
            value: p,
            allowed: "phases must be finite",
        });
    }
    let data = structure_quadruples_weak(t, h, wavevectors)?;
    let (re, im, err) = quartic_with_phases(&data, phases);
    Ok((re, err + im.abs()))
}

#[cfg(test)]
mod tests;
