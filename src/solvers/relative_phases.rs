//! Relative phases of a multi-wavevector structure: the minimum over the phases phi_j of the
//! quartic term with equal amplitudes (the crate docs, [`theory::landau`](crate::theory::landau)),
//!
//! ```text
//! F4(phi) = sum_quadruples B_quad cos(phi_j1 - phi_j2 + phi_j3 - phi_j4),
//! ```
//!
//! for real loop coefficients B (the imaginary parts cancel between a quadruple (j1, j2, j3, j4)
//! and its mirror (j2, j1, j4, j3), which has the same B). Independent of how the B were computed.
//!
//! # Which phases are meaningful
//! F4 depends on phi only through the integer combinations c.phi of its quadruples. Every shift
//! of phi that leaves all of them unchanged is a symmetry: the global phase (phi_j -> phi_j + a)
//! and the translations (phi_j -> phi_j + q_j.r, since q_j1 - q_j2 + q_j3 - q_j4 = 0) among them.
//! The phases are therefore reported modulo those shifts, as one canonical representative:
//! with the distinct combinations as the rows of an integer matrix of rank r, r indices are chosen
//! from the highest down (each kept when it raises the rank of the chosen columns), their phases
//! are the free variables, wrapped to (-pi, pi], and every other phase, phi_0 among them, is zero.
//! With r = 0 (one or two wavevectors, the triangle, any set whose quadruples are all of the form
//! (j, j, k, k) or (j, k, k, j)) F4 does not depend on the phases at all at this order.
//!
//! # Method
//! Multi-start local minimisation over the r free phases: deterministic starts (a grid of four
//! values per phase for r <= 3, and points of the additive recurrence with the generalised golden
//! ratio (Roberts' R_d sequence; common practice)), coordinate-wise minimisation (each coordinate
//! sampled over its period to find the best basin, then Brent's method,
//! [`crate::solvers::optimize::brent_max`] on -F4), and a final Newton polish with the analytic
//! gradient and Hessian where the Hessian is positive definite.

use crate::solvers::optimize::brent_max;
use nalgebra::{DMatrix, DVector};
use std::collections::BTreeMap;
use std::f64::consts::PI;

/// A group weight below this fraction of sum |B| counts as zero when deciding whether F4 depends
/// on the phases (the loop coefficients are computed to about 1e-10 of their scale).
pub const FREE_REL_TOL: f64 = 1e-9;

/// Position tolerance of the one-dimensional Brent searches (radians).
const X_TOL: f64 = 1e-11;

/// Coordinate sweeps of one local minimisation.
const MAX_SWEEPS: usize = 400;

/// Coordinate sweeps stop when no phase moved by more than this (radians); the Newton polish
/// takes over from there.
const SWEEP_STEP_TOL: f64 = 1e-6;

/// Largest coordinate step (radians) below which Newton's method is tried.
const NEWTON_START_STEP: f64 = 1e-2;

/// The best relative phases of a structure.
#[derive(Debug, Clone, PartialEq)]
pub struct PhaseChoice {
    /// One phase per wavevector (radians), the canonical representative described in the module
    /// documentation: phi_0 = 0, and only the `independent` chosen phases nonzero.
    pub phases: Vec<f64>,
    /// The minimum of F4 over the phases (units of the given B).
    pub quartic: f64,
    /// The maximum of F4 over the phases (equal to `quartic` when `free`).
    pub quartic_max: f64,
    /// True when F4 does not depend on the phases (no phase combination with a nonzero weight).
    pub free: bool,
    /// Number r of independent phases F4 depends on.
    pub independent: usize,
    /// Number of starting points of the multi-start search (0 when `free`).
    pub starts: usize,
}

/// F4(phi) = sum over the quadruples of B cos(phi_j1 - phi_j2 + phi_j3 - phi_j4).
pub fn quartic_at(quadruples: &[[usize; 4]], values: &[f64], phases: &[f64]) -> f64 {
    quadruples
        .iter()
        .zip(values.iter())
        .map(|(j, b)| b * (phases[j[0]] - phases[j[1]] + phases[j[2]] - phases[j[3]]).cos())
        .sum()
}

/// The reduced objective: constant + sum_g w_g cos(m_g . psi) over the free phases psi.
struct Objective {
    constant: f64,
    terms: Vec<(Vec<f64>, f64)>,
}

impl Objective {
    fn value(&self, psi: &[f64]) -> f64 {
        self.constant
            + self
                .terms
                .iter()
                .map(|(m, w)| w * dot(m, psi).cos())
                .sum::<f64>()
    }

    fn gradient_hessian(&self, psi: &[f64]) -> (DVector<f64>, DMatrix<f64>) {
        let r = psi.len();
        let mut g = DVector::zeros(r);
        let mut hm = DMatrix::zeros(r, r);
        for (m, w) in &self.terms {
            let (s, c) = dot(m, psi).sin_cos();
            for i in 0..r {
                g[i] -= w * m[i] * s;
                for k in 0..r {
                    hm[(i, k)] -= w * m[i] * m[k] * c;
                }
            }
        }
        (g, hm)
    }

    fn negated(&self) -> Objective {
        Objective {
            constant: -self.constant,
            terms: self.terms.iter().map(|(m, w)| (m.clone(), -w)).collect(),
        }
    }
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b.iter()).map(|(x, y)| x * y).sum()
}

/// x wrapped to (-pi, pi].
fn wrap(x: f64) -> f64 {
    let y = x.rem_euclid(2.0 * PI);
    if y > PI {
        y - 2.0 * PI
    } else {
        y
    }
}

/// Columns chosen from the highest index down, each kept when it raises the rank of the chosen
/// set (Gram-Schmidt on the small-integer columns).
fn pivot_columns(rows: &[Vec<i32>], n: usize) -> Vec<usize> {
    let g = rows.len();
    let mut basis: Vec<Vec<f64>> = Vec::new();
    let mut chosen = Vec::new();
    for col in (0..n).rev() {
        let mut v: Vec<f64> = (0..g).map(|i| rows[i][col] as f64).collect();
        let norm0 = v.iter().map(|x| x * x).sum::<f64>().sqrt();
        if norm0 == 0.0 {
            continue;
        }
        for _ in 0..2 {
            for b in &basis {
                let p = dot(&v, b);
                for (vi, bi) in v.iter_mut().zip(b.iter()) {
                    *vi -= p * bi;
                }
            }
        }
        let norm = v.iter().map(|x| x * x).sum::<f64>().sqrt();
        if norm > 1e-9 * norm0 {
            for x in v.iter_mut() {
                *x /= norm;
            }
            basis.push(v);
            chosen.push(col);
        }
    }
    chosen
}

/// Deterministic starting points in [0, 2 pi)^r.
fn starting_points(r: usize) -> Vec<Vec<f64>> {
    let mut out = Vec::new();
    if r <= 3 {
        let grid = [0.0, 0.5 * PI, PI, 1.5 * PI];
        let count = 4usize.pow(r as u32);
        for mut k in 0..count {
            let mut p = Vec::with_capacity(r);
            for _ in 0..r {
                p.push(grid[k % 4]);
                k /= 4;
            }
            out.push(p);
        }
    }
    // R_r sequence: alpha_i = phi_r^-(i+1), phi_r the positive root of x^(r+1) = x + 1.
    let mut phi = 2.0f64;
    for _ in 0..200 {
        phi = (1.0 + phi).powf(1.0 / (r as f64 + 1.0));
    }
    let alpha: Vec<f64> = (0..r).map(|i| phi.powi(-(i as i32 + 1))).collect();
    let extra = (16 * r).clamp(16, 256);
    for k in 1..=extra {
        out.push(
            alpha
                .iter()
                .map(|a| 2.0 * PI * (0.5 + k as f64 * a).fract())
                .collect(),
        );
    }
    out
}

/// Newton's method from psi while the Hessian is positive definite and the value does not rise;
/// true when it converged (last step below 1e-13 rad).
fn newton_polish(obj: &Objective, psi: &mut Vec<f64>, value: &mut f64, scale: f64) -> bool {
    for _ in 0..30 {
        let (g, hm) = obj.gradient_hessian(psi);
        let Some(chol) = hm.cholesky() else {
            return false;
        };
        let delta = chol.solve(&(-&g));
        let trial: Vec<f64> = psi.iter().zip(delta.iter()).map(|(p, d)| p + d).collect();
        let v = obj.value(&trial);
        if v > *value + 4.0 * f64::EPSILON * scale {
            return false;
        }
        *psi = trial;
        *value = v.min(*value);
        if delta.amax() < 1e-13 {
            return true;
        }
    }
    false
}

/// Coordinate-wise minimisation followed by a Newton polish, from `start`.
fn local_minimum(obj: &Objective, start: &[f64], scale: f64) -> (Vec<f64>, f64) {
    let r = start.len();
    let mut psi = start.to_vec();
    let mut value = obj.value(&psi);
    let harmonics: Vec<f64> = (0..r)
        .map(|i| {
            obj.terms
                .iter()
                .map(|(m, _)| m[i].abs())
                .fold(1.0, f64::max)
        })
        .collect();
    for _ in 0..MAX_SWEEPS {
        let before = value;
        let mut largest_step: f64 = 0.0;
        for i in 0..r {
            let samples = (8.0 * harmonics[i]).max(12.0) as usize;
            let step = 2.0 * PI / samples as f64;
            let mut trial = psi.clone();
            let mut best = (psi[i], value);
            for k in 0..samples {
                trial[i] = psi[i] + step * k as f64;
                let v = obj.value(&trial);
                if v < best.1 {
                    best = (trial[i], v);
                }
            }
            let centre = best.0;
            let found = brent_max("relative phase", centre - step, centre + step, X_TOL, |x| {
                trial[i] = x;
                Ok(-obj.value(&trial))
            });
            if let Ok(m) = found {
                if -m.value < best.1 {
                    best = (m.x, -m.value);
                }
            }
            if best.1 < value {
                largest_step = largest_step.max((wrap(best.0 - psi[i])).abs());
                psi[i] = best.0;
                value = best.1;
            }
        }
        // Coordinate descent converges only linearly along coupled directions: once the steps are
        // small, Newton's method takes over (quadratically convergent at a strict minimum).
        let stalled = largest_step < SWEEP_STEP_TOL || before - value <= 1e-15 * scale;
        if largest_step < NEWTON_START_STEP || stalled {
            let converged = newton_polish(obj, &mut psi, &mut value, scale);
            if converged || stalled {
                break;
            }
        }
    }
    (psi.into_iter().map(wrap).collect(), value)
}

/// Best of the local minima from every start: the lowest value; among values equal to within
/// 1e-12 of the scale, the lexicographically smallest phase vector (a deterministic choice).
fn global_minimum(obj: &Objective, r: usize, scale: f64) -> (Vec<f64>, f64, usize) {
    let starts = starting_points(r);
    let mut best: Option<(Vec<f64>, f64)> = None;
    for s in &starts {
        let (p, v) = local_minimum(obj, s, scale);
        best = match best {
            None => Some((p, v)),
            Some((bp, bv)) => {
                let tie = (v - bv).abs() <= 1e-12 * scale;
                let smaller = p
                    .iter()
                    .zip(bp.iter())
                    .find(|(a, b)| (*a - *b).abs() > 1e-9)
                    .is_some_and(|(a, b)| a < b);
                if (!tie && v < bv) || (tie && smaller) {
                    Some((p, v))
                } else {
                    Some((bp, bv))
                }
            }
        };
    }
    let (p, v) = best.expect("at least one start");
    (p, v, starts.len())
}

/// The phases minimising F4(phi) = sum_quads B cos(phi_j1 - phi_j2 + phi_j3 - phi_j4) for `n`
/// wavevectors, the quadruples `quadruples` and their loop coefficients `values` (same order).
/// See the module documentation for the representative returned and the method.
///
/// # Panics
/// When `values` and `quadruples` differ in length, `n` is zero, or an index is not below `n`.
pub fn best_phases(n: usize, quadruples: &[[usize; 4]], values: &[f64]) -> PhaseChoice {
    assert!(n > 0, "a structure needs at least one wavevector");
    assert_eq!(
        quadruples.len(),
        values.len(),
        "one loop coefficient per quadruple"
    );
    assert!(
        quadruples.iter().all(|j| j.iter().all(|&i| i < n)),
        "quadruple index out of range"
    );
    let scale = values
        .iter()
        .map(|v| v.abs())
        .sum::<f64>()
        .max(f64::MIN_POSITIVE);
    // Group the quadruples by their combination vector, with the sign fixed so that the first
    // nonzero entry is positive (cos is even).
    let mut constant = 0.0;
    let mut groups: BTreeMap<Vec<i32>, f64> = BTreeMap::new();
    for (j, &b) in quadruples.iter().zip(values.iter()) {
        let mut c = vec![0i32; n];
        c[j[0]] += 1;
        c[j[1]] -= 1;
        c[j[2]] += 1;
        c[j[3]] -= 1;
        match c.iter().find(|&&x| x != 0) {
            None => constant += b,
            Some(&first) => {
                if first < 0 {
                    c.iter_mut().for_each(|x| *x = -*x);
                }
                *groups.entry(c).or_insert(0.0) += b;
            }
        }
    }
    let rows: Vec<(Vec<i32>, f64)> = groups
        .into_iter()
        .filter(|(_, w)| w.abs() > FREE_REL_TOL * scale)
        .collect();
    if rows.is_empty() {
        let phases = vec![0.0; n];
        let q = quartic_at(quadruples, values, &phases);
        return PhaseChoice {
            phases,
            quartic: q,
            quartic_max: q,
            free: true,
            independent: 0,
            starts: 0,
        };
    }
    let vectors: Vec<Vec<i32>> = rows.iter().map(|(c, _)| c.clone()).collect();
    let pivots = pivot_columns(&vectors, n);
    let r = pivots.len();
    let obj = Objective {
        constant,
        terms: rows
            .iter()
            .map(|(c, w)| (pivots.iter().map(|&p| c[p] as f64).collect(), *w))
            .collect(),
    };
    let (psi, _, starts) = global_minimum(&obj, r, scale);
    let (_, neg_max, _) = global_minimum(&obj.negated(), r, scale);
    let mut phases = vec![0.0; n];
    for (k, &p) in pivots.iter().enumerate() {
        phases[p] = psi[k];
    }
    PhaseChoice {
        quartic: quartic_at(quadruples, values, &phases),
        quartic_max: -neg_max,
        phases,
        free: false,
        independent: r,
        starts,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::structure::Structure;

    fn quads(name: &str) -> (usize, Vec<[usize; 4]>) {
        let s = Structure::named(name, [1.0, 0.0]).unwrap();
        (s.len(), s.quadruples())
    }

    /// Brute-force minimum of F4 over phi_1..phi_{n-1} on a grid (phi_0 = 0), n <= 6.
    fn grid_minimum(n: usize, qs: &[[usize; 4]], vals: &[f64], steps: usize) -> f64 {
        let free = n - 1;
        let total = steps.pow(free as u32);
        let mut best = f64::INFINITY;
        let mut phases = vec![0.0; n];
        for mut k in 0..total {
            for p in phases.iter_mut().skip(1) {
                *p = 2.0 * PI * (k % steps) as f64 / steps as f64;
                k /= steps;
            }
            best = best.min(quartic_at(qs, vals, &phases));
        }
        best
    }

    /// Weights of the square's quadruples: 1 for the phase-free ones (j1 = j2, j3 = j4 or
    /// j1 = j4, j2 = j3), `other` for the rest.
    fn square_weights(qs: &[[usize; 4]], other: f64) -> Vec<f64> {
        qs.iter()
            .map(|j| {
                let trivial = (j[0] == j[1] && j[2] == j[3]) || (j[0] == j[3] && j[1] == j[2]);
                if trivial {
                    1.0
                } else {
                    other
                }
            })
            .collect()
    }

    /// Square (+-q1, +-q2 at 90 degrees): F4 depends on phi_0 + phi_1 - phi_2 - phi_3 through the
    /// eight quadruples pairing the two standing waves (a phase-sensitive term; common practice
    /// for four-wave structures). With positive weights the minimum puts that combination at pi.
    #[test]
    fn square_depends_on_one_combination() {
        let (n, qs) = quads("square");
        // Weights from a smooth function of the indices, positive.
        let vals = square_weights(&qs, 0.3);
        let choice = best_phases(n, &qs, &vals);
        assert!(!choice.free);
        assert_eq!(choice.independent, 1);
        assert_eq!(choice.phases[0], 0.0);
        let comb = choice.phases[0] + choice.phases[1] - choice.phases[2] - choice.phases[3];
        assert!((comb.cos() + 1.0).abs() < 1e-12, "combination {comb}");
        let grid = grid_minimum(n, &qs, &vals, 24);
        assert!(
            choice.quartic <= grid + 1e-12,
            "{} vs {grid}",
            choice.quartic
        );
        assert!(choice.quartic_max > choice.quartic + 1.0);
        // Negative weight: the combination goes to zero instead.
        let vals2: Vec<f64> = vals
            .iter()
            .map(|&v| if v == 0.3 { -0.3 } else { v })
            .collect();
        let choice2 = best_phases(n, &qs, &vals2);
        let comb2 = choice2.phases[0] + choice2.phases[1] - choice2.phases[2] - choice2.phases[3];
        assert!((comb2.cos() - 1.0).abs() < 1e-12);
    }

    /// Hexagon: F4 depends on the three sums S_a = phi_a + phi_{a+3} of opposite wavevectors
    /// through cos(S_a - S_b) (two independent phases). With a positive weight the minimum spreads
    /// the S_a at 120 degrees, sum_{a<b} cos(S_a - S_b) = -3/2; the grid search agrees.
    #[test]
    fn hexagon_depends_on_two_phases() {
        let (n, qs) = quads("hexagon");
        assert_eq!(qs.len(), 90);
        let vals: Vec<f64> = qs
            .iter()
            .map(|j| 1.0 + 0.1 * ((j[0] + 2 * j[1] + 3 * j[2] + 5 * j[3]) % 7) as f64)
            .collect();
        let choice = best_phases(n, &qs, &vals);
        assert!(!choice.free);
        assert_eq!(choice.independent, 2);
        let grid = grid_minimum(n, &qs, &vals, 12);
        assert!(
            choice.quartic <= grid + 1e-12,
            "{} vs {grid}",
            choice.quartic
        );
        // The reported value is a stationary point: F4 at small displacements is not lower.
        for i in 1..n {
            for d in [-1e-4, 1e-4] {
                let mut p = choice.phases.clone();
                p[i] += d;
                assert!(quartic_at(&qs, &vals, &p) >= choice.quartic - 1e-12);
            }
        }
        // Equal weights: the 120-degree solution, F4 = 66 + 8 (-3/2) (66 phase-free quadruples).
        let ones = vec![1.0; qs.len()];
        let choice = best_phases(n, &qs, &ones);
        assert!(
            (choice.quartic - (66.0 - 12.0)).abs() < 1e-10,
            "{}",
            choice.quartic
        );
        assert!((choice.quartic_max - (66.0 + 24.0)).abs() < 1e-10);
        let s: Vec<f64> = (0..3)
            .map(|a| choice.phases[a] + choice.phases[a + 3])
            .collect();
        for (a, b) in [(0, 1), (1, 2), (0, 2)] {
            assert!(((s[a] - s[b]).cos() + 0.5).abs() < 1e-10);
        }
    }

    /// Triangle, stripe, plane and orthogonal pair: all quadruples are phase-free, F4 is the sum
    /// of the weights.
    #[test]
    fn triangle_is_free() {
        for name in ["triangle", "stripe", "plane", "orthogonal"] {
            let (n, qs) = quads(name);
            let vals: Vec<f64> = (0..qs.len()).map(|k| 1.0 + k as f64).collect();
            let choice = best_phases(n, &qs, &vals);
            assert!(choice.free, "{name}");
            assert_eq!(choice.independent, 0);
            assert_eq!(choice.quartic, vals.iter().sum::<f64>());
            assert_eq!(choice.quartic, choice.quartic_max);
        }
    }

    /// A weight at the noise level does not make F4 phase-dependent.
    #[test]
    fn negligible_weight_is_free() {
        let (n, qs) = quads("square");
        let vals = square_weights(&qs, 1e-13);
        assert!(best_phases(n, &qs, &vals).free);
    }
}
