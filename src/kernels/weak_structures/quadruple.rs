//! The weak-coupling loop B(q1, q2, q3, q4)/nu of one momentum-conserving quadruple (Tc0^-2
//! units, wavevectors as Q = hbar v q/2 over Tc0): angular averages by the doubled trapezoid rule,
//! the Matsubara sum with its tail summed by polygamma functions (see the parent module's docs).

use crate::kernels::weak::WeakError;
use crate::special::polygamma;
use num_complex::Complex64;
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

/// t must be finite and > 0, h finite.
pub(super) fn check_args(t: f64, h: f64) -> Result<(), WeakError> {
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

/// |v|.
fn norm(v: [f64; 2]) -> f64 {
    v[0].hypot(v[1])
}

/// The four wavevectors must be finite and conserve momentum (q1 - q2 + q3 - q4 = 0 to
/// `CONSERVATION_TOL` of the largest); returns the largest |Q|.
fn check_quadruple(q: &[[f64; 2]; 4]) -> Result<f64, WeakError> {
    check_finite(q)?;
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

/// Every component of the wavevectors must be finite.
pub(super) fn check_finite(q: &[[f64; 2]]) -> Result<(), WeakError> {
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
    Ok(())
}
