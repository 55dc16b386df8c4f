//! Kernel: weak-coupling quartic Landau coefficient of multi-wavevector structures (physics.md
//! sections 3, 5, 8): two circular pockets with equal velocities, linearised dispersion, the
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

use crate::kernels::weak::WeakError;
use crate::model::structure::{quadruple_phase, Structure};
use crate::special::polygamma;
use num_complex::Complex64;
use std::collections::HashMap;
use std::f64::consts::PI;

/// Relative target of the Matsubara sum (against the sum of the moduli of its contributions).
const REL_TARGET: f64 = 1e-10;

/// Relative target of one angular average (against the mean modulus of its integrand).
const ANGULAR_REL: f64 = 1e-12;

/// Nodes of the coarsest angular level; at least two doublings are always made.
const ANGULAR_START: usize = 8;

/// Largest number of angular nodes (t = 1e-3 with Q near 1.8 needs about 2^15 at n = 0).
const ANGULAR_MAX_NODES: usize = 1 << 20;

/// w_N >= TAIL_RATIO max|Q_j| where the expansion in 1/E takes over: the first neglected power
/// is then below (1/TAIL_RATIO)^10 ~ 1.7e-8 of the leading one, term by term.
const TAIL_RATIO: f64 = 6.0;

/// Highest power of 1/E kept in the tail expansion (the coefficient of E^-k is a polynomial of
/// degree k - 3 in the Q_j.n; the odd ones average to zero).
const TAIL_ORDER: usize = 11;

/// Nodes of the exact angular average of the tail coefficients (degree <= 8 trigonometric
/// polynomials are averaged exactly by more than 8 equally spaced nodes).
const TAIL_NODES: usize = 32;

/// Doublings of the Matsubara cut-off before giving up.
const MAX_DOUBLINGS: usize = 12;

/// Relative tolerance of the momentum-conservation check q1 - q2 + q3 - q4 = 0.
const CONSERVATION_TOL: f64 = 1e-9;

fn check_args(t: f64, h: f64) -> Result<(), WeakError> {
    if !(t > 0.0 && t.is_finite()) {
        return Err(WeakError::InvalidArgument {
            name: "t",
            value: t,
            allowed: "temperature T/Tc0 must be finite and > 0",
        });
    }
    if !h.is_finite() {
        return Err(WeakError::InvalidArgument {
            name: "h",
            value: h,
            allowed: "must be finite",
        });
    }
    Ok(())
}

fn norm(v: [f64; 2]) -> f64 {
    v[0].hypot(v[1])
}

fn check_quadruple(q: &[[f64; 2]; 4]) -> Result<f64, WeakError> {
    for v in q {
        for &c in v {
            if !c.is_finite() {
                return Err(WeakError::InvalidArgument {
                    name: "q",
                    value: c,
                    allowed: "wavevector components must be finite",
                });
            }
        }
    }
    let q_max = q.iter().map(|v| norm(*v)).fold(0.0, f64::max);
    let miss = norm([
        q[0][0] - q[1][0] + q[2][0] - q[3][0],
        q[0][1] - q[1][1] + q[2][1] - q[3][1],
    ]);
    if miss > CONSERVATION_TOL * q_max.max(1e-300) {
        return Err(WeakError::InvalidArgument {
            name: "|q1 - q2 + q3 - q4|",
            value: miss,
            allowed: "the four wavevectors must satisfy q1 - q2 + q3 - q4 = 0",
        });
    }
    Ok(q_max)
}

/// Im[(e1 + e3)/(e1 e2 e3 e4)] = Re[-i (e1 + e3)/(e1 e2 e3 e4)] with e_j = E - a_j.
#[inline]
fn integrand(e: Complex64, a: &[f64; 4]) -> f64 {
    let e1 = e - a[0];
    let e2 = e - a[1];
    let e3 = e - a[2];
    let e4 = e - a[3];
    ((e1 + e3) / (e1 * e2 * e3 * e4)).im
}

/// One converged angular average: the mean, its error estimate and the mean modulus of the
/// integrand.
struct AngularAverage {
    mean: f64,
    error: f64,
    mean_abs: f64,
}

/// The projections a_j = Q_j.n at the nested trapezoid nodes: level 0 holds the
/// `ANGULAR_START` nodes 2 pi k / M0, level l >= 1 the M0 2^(l-1) nodes added by the l-th doubling.
struct AngularNodes {
    q: [[f64; 2]; 4],
    levels: Vec<Vec<[f64; 4]>>,
}

impl AngularNodes {
    fn new(q: [[f64; 2]; 4]) -> Self {
        AngularNodes {
            q,
            levels: Vec::new(),
        }
    }

    fn project(&self, theta: f64) -> [f64; 4] {
        let (s, c) = theta.sin_cos();
        let mut a = [0.0; 4];
        for (aj, qj) in a.iter_mut().zip(self.q.iter()) {
            *aj = qj[0] * c + qj[1] * s;
        }
        a
    }

    fn ensure(&mut self, level: usize) {
        while self.levels.len() <= level {
            let l = self.levels.len();
            let nodes: Vec<[f64; 4]> = if l == 0 {
                (0..ANGULAR_START)
                    .map(|k| self.project(2.0 * PI * k as f64 / ANGULAR_START as f64))
                    .collect()
            } else {
                let m = ANGULAR_START << (l - 1);
                (0..m)
                    .map(|k| self.project(2.0 * PI * (k as f64 + 0.5) / m as f64))
                    .collect()
            };
            self.levels.push(nodes);
        }
    }

    /// < Im[(e1 + e3)/(e1 e2 e3 e4)] >_theta at E = i w - h, or, when the node budget ran out, the
    /// last difference of levels relative to the mean modulus, and the nodes used.
    fn average(&mut self, e: Complex64) -> Result<AngularAverage, (f64, usize)> {
        let mut sum = 0.0;
        let mut abs_sum = 0.0;
        let mut nodes = 0usize;
        let mut previous = f64::NAN;
        let mut level = 0;
        loop {
            self.ensure(level);
            for a in &self.levels[level] {
                let v = integrand(e, a);
                sum += v;
                abs_sum += v.abs();
            }
            nodes += self.levels[level].len();
            let mean = sum / nodes as f64;
            let mean_abs = abs_sum / nodes as f64;
            if level >= 2 {
                let diff = (mean - previous).abs();
                if diff <= ANGULAR_REL * mean_abs || diff <= 4.0 * f64::EPSILON * mean_abs {
                    return Ok(AngularAverage {
                        mean,
                        error: diff,
                        mean_abs,
                    });
                }
            }
            if 2 * nodes > ANGULAR_MAX_NODES {
                return Err((
                    (mean - previous).abs() / mean_abs.max(f64::MIN_POSITIVE),
                    nodes,
                ));
            }
            previous = mean;
            level += 1;
        }
    }
}

/// The angular averages C_k = < c_k >_theta, k = 3..=TAIL_ORDER, of the expansion
/// (e1 + e3)/(e1 e2 e3 e4) = sum_k c_k E^-k, e_j = E - a_j:
/// c_k = 2 h_{k-3}(a) - (a1 + a3) h_{k-4}(a), with h_m the complete homogeneous symmetric
/// polynomials of the four a_j (the coefficients of prod_j 1/(1 - a_j u)).
fn tail_coefficients(q: &[[f64; 2]; 4]) -> [f64; TAIL_ORDER + 1] {
    let nodes = AngularNodes::new(*q);
    let mut out = [0.0; TAIL_ORDER + 1];
    const M: usize = TAIL_ORDER - 3;
    for k in 0..TAIL_NODES {
        let a = nodes.project(2.0 * PI * k as f64 / TAIL_NODES as f64);
        let mut hs = [0.0; M + 1];
        hs[0] = 1.0;
        for &aj in &a {
            for m in 1..=M {
                hs[m] += aj * hs[m - 1];
            }
        }
        let s = a[0] + a[2];
        for (kk, o) in out.iter_mut().enumerate().skip(3) {
            let m = kk - 3;
            let lower = if m >= 1 { hs[m - 1] } else { 0.0 };
            *o += 2.0 * hs[m] - s * lower;
        }
    }
    for (kk, o) in out.iter_mut().enumerate() {
        // Odd degree k - 3: the average vanishes exactly (theta -> theta + pi flips every a_j).
        *o = if kk % 2 == 0 {
            0.0
        } else {
            *o / TAIL_NODES as f64
        };
    }
    out
}

/// sum_{n >= n0} < Im[(e1 + e3)/(e1 e2 e3 e4)] >_theta from the expansion in 1/E, summed with
/// polygamma functions; also the sum of the moduli of the terms (a scale).
fn tail_sum(n0: usize, t: f64, h: f64, c: &[f64; TAIL_ORDER + 1]) -> (f64, f64) {
    let z = Complex64::new(n0 as f64 + 0.5, h / (2.0 * PI * t));
    let base = Complex64::new(0.0, 2.0 * PI * t).inv(); // 1/(2 pi i t)
    let mut total = Complex64::new(0.0, 0.0);
    let mut abs_total = 0.0;
    let mut factorial = 2.0; // (k - 1)! at k = 3
    for (k, &ck) in c.iter().enumerate().skip(3) {
        if k > 3 {
            factorial *= (k - 1) as f64;
        }
        if ck == 0.0 {
            continue;
        }
        let sign = if k % 2 == 0 { 1.0 } else { -1.0 };
        let term = ck * sign * base.powi(k as i32) * polygamma((k - 1) as u32, z) / factorial;
        total += term;
        abs_total += term.norm();
    }
    (total.im, abs_total)
}

/// Weak-coupling loop coefficient B(q1, q2, q3, q4)/nu in Tc0^-2 units, with its absolute error
/// estimate: `t` = T/Tc0 > 0, `h` = mismatch/Tc0, `q` the four wavevectors as Q = hbar v q/2 over
/// Tc0 (2-vectors), which must satisfy q1 - q2 + q3 - q4 = 0 (relative 1e-9).
///
/// B(q, q, q, q) = [`crate::kernels::weak::quartic_weak`]`(t, |h|)`/2 at q = 0. The error
/// estimate is about 1e-10 of the scale sum_n |contribution|, which bounds |B|; where B nearly
/// cancels, the relative error of B itself is larger. Failures to converge are errors.
pub fn quadruple_weak(t: f64, h: f64, q: [[f64; 2]; 4]) -> Result<(f64, f64), WeakError> {
    check_args(t, h)?;
    let q_max = check_quadruple(&q)?;
    let prefactor = PI * t / 4.0;
    let coeffs = tail_coefficients(&q);
    let mut nodes = AngularNodes::new(q);
    let energy = |n: usize| Complex64::new(-h, (2 * n + 1) as f64 * PI * t);
    // Smallest N with w_N >= TAIL_RATIO q_max, at least 4.
    let n_from_q = ((TAIL_RATIO * q_max / (PI * t) - 1.0) / 2.0).ceil();
    let mut cut = if n_from_q.is_finite() && n_from_q > 4.0 {
        n_from_q as usize
    } else {
        4
    };
    let mut direct = 0.0;
    let mut direct_abs = 0.0;
    let mut angular_error = 0.0;
    let mut add_terms = |from: usize,
                         to: usize,
                         direct: &mut f64,
                         direct_abs: &mut f64,
                         angular_error: &mut f64|
     -> Result<(), WeakError> {
        for n in from..to {
            match nodes.average(energy(n)) {
                Ok(avg) => {
                    *direct += avg.mean;
                    *direct_abs += avg.mean_abs;
                    *angular_error += avg.error;
                }
                Err((err, evaluations)) => {
                    return Err(WeakError::AngularAverageNotConverged {
                        t,
                        h,
                        q: q_max,
                        estimate: err,
                        target: ANGULAR_REL,
                        evaluations,
                    })
                }
            }
        }
        Ok(())
    };
    add_terms(0, cut, &mut direct, &mut direct_abs, &mut angular_error)?;
    let (tail, tail_abs) = tail_sum(cut, t, h, &coeffs);
    let mut previous = direct + tail;
    let mut last_scale = direct_abs + tail_abs;
    for _ in 0..MAX_DOUBLINGS {
        add_terms(
            cut,
            2 * cut,
            &mut direct,
            &mut direct_abs,
            &mut angular_error,
        )?;
        cut *= 2;
        let (tail, tail_abs) = tail_sum(cut, t, h, &coeffs);
        let value = direct + tail;
        let scale = direct_abs + tail_abs;
        let diff = (value - previous).abs();
        if diff <= REL_TARGET * scale {
            return Ok((prefactor * value, prefactor * (diff + angular_error)));
        }
        previous = value;
        last_scale = scale;
    }
    Err(WeakError::NotConverged {
        what: "Matsubara sum of the weak-coupling loop coefficient",
        iterations: MAX_DOUBLINGS,
        lo: prefactor * previous,
        hi: prefactor * previous,
        target: prefactor * REL_TARGET * last_scale,
    })
}

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
    for v in wavevectors {
        for &c in v {
            if !c.is_finite() {
                return Err(WeakError::InvalidArgument {
                    name: "q",
                    value: c,
                    allowed: "wavevector components must be finite",
                });
            }
        }
    }
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
mod tests {
    use super::*;
    use crate::kernels::weak::quartic_weak;
    use crate::model::structure::rotate;
    use crate::special::digamma;

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

    /// Q = 0: B = beta/2 with beta = -Re psi''(1/2 + i h/(2 pi t))/(16 pi^2 t^2) (physics.md
    /// section 5), and at h = 0 7 zeta(3)/(16 pi^2 t^2) (Gor'kov's coefficient, halved).
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
}
