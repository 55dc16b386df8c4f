//! The evaluator of one ray of the harmonic k grid: the radial layout of the pieces where a
//! centre state couples, and at each node the diagonal element [phi(H_win)]_cc with its
//! first-order changes (coherences, intraband densities). Called by `omega` for every ray.

use super::eigen::hermitian_eigen;
use super::omega::HarmonicGrid;
use super::radii::sublevel;
use super::set::{add, Edge, HarmonicSet, Species, Window};
use crate::error::NumericalError;
use crate::kernels::grand_potential::{fermi, phi};
use crate::kernels::quad::{graded_breakpoints, Feature, PanelRule};
use crate::kernels::shell::Shell;
use crate::model::{band_matrix_element, Pocket, SpinMatrix};
use nalgebra::DMatrix;
use num_complex::Complex64;

/// Per-ray sums (before the angular weight).
#[derive(Debug, Clone)]
pub(super) struct RaySums {
    pub(super) omega: f64,
    pub(super) coherence: Vec<Complex64>,
    pub(super) intraband: Vec<[Complex64; 2]>,
    pub(super) diagonalisations: usize,
}

/// A same-pocket pair (i, j) of a window with o_j - o_i = Q[k].
#[derive(Debug, Clone, Copy)]
pub(super) struct Pair {
    pub(super) i: usize,
    pub(super) j: usize,
    pub(super) k: usize,
    pub(super) species: usize,
}

/// Reusable per-ray buffers.
struct Scratch {
    energy: Vec<f64>,
    coupling: Vec<Complex64>,
    vertex: Vec<Complex64>,
    inside: Vec<bool>,
    local: Vec<usize>,
    comp: Vec<usize>,
}

const NONE: usize = usize::MAX;

/// Everything one ray of the harmonic k grid needs: the pockets, the components, the grid and
/// the core of the radial layout.
pub(super) struct Evaluator<'m> {
    pub(super) a: &'m Pocket,
    pub(super) b: &'m Pocket,
    /// The spin matrix M of the order (the vertex is the band form factor M_ab).
    pub(super) matrix: SpinMatrix,
    pub(super) cutoff: f64,
    pub(super) t: f64,
    pub(super) set: &'m HarmonicSet,
    pub(super) deltas: &'m [Complex64],
    pub(super) shell0: Shell<'m>,
    pub(super) grid: HarmonicGrid,
    pub(super) rule: PanelRule,
    /// Half-width of the core in xi_0, meV.
    pub(super) e_core: f64,
    /// Uniform panels over the core.
    pub(super) core_panels: usize,
    /// Same-pocket pairs of each window.
    pub(super) pairs: [Vec<Pair>; 2],
    pub(super) n_q: usize,
    /// Whether coherences and intraband components are wanted (else Omega only).
    pub(super) derivatives: bool,
}

impl<'m> Evaluator<'m> {
    fn energy(&self, s: Species, k: [f64; 2]) -> f64 {
        match s {
            Species::A => self.a.energy(k),
            Species::B => self.b.energy(k),
        }
    }

    /// xi of edge e along the ray (value and radial derivative).
    fn edge_xi(&self, w: &Window, e: &Edge, u: [f64; 2], r: f64) -> (f64, f64) {
        let p = [
            self.shell0.centre[0] + r * u[0],
            self.shell0.centre[1] + r * u[1],
        ];
        let (ea, ga) = self.a.energy_and_gradient(add(p, w.states[e.a].offset));
        let (eb, gb) = self.b.energy_and_gradient(add(p, w.states[e.b].offset));
        (
            0.5 * (ea - eb),
            0.5 * ((ga[0] - gb[0]) * u[0] + (ga[1] - gb[1]) * u[1]),
        )
    }

    /// Panel breakpoints of the pieces of the ray where the centre of window `w` couples.
    fn ray_layout(&self, w: &Window, u: [f64; 2]) -> Result<Vec<Vec<f64>>, NumericalError> {
        let lam = self.cutoff;
        let scale = self.shell0.xi_radius(u, lam)? + 2.0 * w.reach + 1e-6;
        let mut pieces: Vec<(f64, f64)> = Vec::new();
        let mut jumps: Vec<f64> = Vec::new();
        for e in &w.edges {
            let (da, db) = (w.states[e.a].distance, w.states[e.b].distance);
            let touches_centre = e.a == 0 || e.b == 0;
            if !touches_centre && da.min(db) > 1 {
                continue;
            }
            let f = |r: f64| self.edge_xi(w, e, u, r);
            let plus = sublevel(&f, lam, scale)?;
            let minus = sublevel(&f, -lam, scale)?;
            for (lo, hi) in plus.iter().chain(minus.iter()) {
                if *lo > 0.0 {
                    jumps.push(*lo);
                }
                jumps.push(*hi);
            }
            if touches_centre {
                if let Some((l1, h1)) = plus {
                    match minus {
                        None => pieces.push((l1, h1)),
                        Some((l2, h2)) => {
                            if l2 > l1 {
                                pieces.push((l1, l2));
                            }
                            if h1 > h2 {
                                pieces.push((h2, h1));
                            }
                        }
                    }
                }
            }
        }
        pieces.sort_by(|x, y| x.0.total_cmp(&y.0));
        let mut merged: Vec<(f64, f64)> = Vec::new();
        for (lo, hi) in pieces {
            match merged.last_mut() {
                Some(last) if lo <= last.1 => last.1 = last.1.max(hi),
                _ => merged.push((lo, hi)),
            }
        }
        // The core |xi_0| < E_core: uniform panels, as features of the graded layout.
        let c_lo = self.shell0.xi_radius(u, -self.e_core)?;
        let c_hi = self.shell0.xi_radius(u, self.e_core)?;
        let p = self.core_panels;
        let width = (c_hi - c_lo) / p as f64;
        let feats: Vec<Feature> = (0..=p)
            .map(|k| Feature {
                at: c_lo + width * k as f64,
                scale: width,
            })
            .collect();
        let mut out = Vec::with_capacity(merged.len());
        let mut bp = Vec::new();
        for (lo, hi) in merged {
            if hi <= lo {
                continue;
            }
            graded_breakpoints(lo, hi, &feats, self.grid.growth, &mut bp);
            let mut pts = bp.clone();
            pts.extend(jumps.iter().copied().filter(|&x| x > lo && x < hi));
            pts.sort_by(f64::total_cmp);
            pts.dedup_by(|x, y| (*x - *y).abs() <= 1e-13 * y.abs().max(1e-300));
            out.push(pts);
        }
        Ok(out)
    }

    /// The integrand of centre species `wi` at p (times `weight`) added to `out`.
    fn node(
        &self,
        wi: usize,
        p: [f64; 2],
        weight: f64,
        s: &mut Scratch,
        out: &mut RaySums,
    ) -> Result<(), NumericalError> {
        let w = &self.set.windows[wi];
        self.couplings(w, p, s);
        let nc = centre_component(w, s);
        if nc == 1 {
            return Ok(());
        }
        let h = component_hamiltonian(w, s, nc);
        let (ev, u) = hermitian_eigen(&h)?;
        let u = &u;
        let t = self.t;
        let mut om = 0.0;
        for n in 0..nc {
            om += u[(0, n)].norm_sqr() * phi(ev[n], t);
        }
        om -= phi(s.energy[0], t);
        out.omega += weight * om;
        out.diagonalisations += 1;
        if !self.derivatives {
            return Ok(());
        }
        self.add_derivatives(wi, &ev, u, weight, s, out);
        Ok(())
    }

    /// The energies of the states of window `w` at p and the couplings Delta_G M_ab of its edges
    /// (zero outside the cutoff), with the vertices and whether each edge is inside.
    fn couplings(&self, w: &Window, p: [f64; 2], s: &mut Scratch) {
        for (i, st) in w.states.iter().enumerate() {
            s.energy[i] = self.energy(st.species, add(p, st.offset));
        }
        let zero = Complex64::new(0.0, 0.0);
        for (e, ed) in w.edges.iter().enumerate() {
            let xi = 0.5 * (s.energy[ed.a] - s.energy[ed.b]);
            s.inside[e] = xi.abs() < self.cutoff;
            if s.inside[e] {
                let m = band_matrix_element(
                    self.a,
                    self.b,
                    self.matrix,
                    add(p, w.states[ed.a].offset),
                    add(p, w.states[ed.b].offset),
                );
                s.vertex[e] = m;
                s.coupling[e] = self.deltas[ed.g] * m;
            } else {
                s.coupling[e] = zero;
            }
        }
    }

    /// Adds the coherences and intraband components of one node (Daleckii-Krein, see the module
    /// docs) from the eigen decomposition (ev, u) of the centre's component.
    fn add_derivatives(
        &self,
        wi: usize,
        ev: &[f64],
        u: &DMatrix<Complex64>,
        weight: f64,
        s: &Scratch,
        out: &mut RaySums,
    ) {
        let w = &self.set.windows[wi];
        let t = self.t;
        let nc = ev.len();
        // D = conj(U) B U^T with B_nn' = x_n Phi_nn' conj(x_n'), x_n = U_cn:
        // D_kl = sum_n [conj(U_kn) x_n] Y_nl, Y = Phi W, W_n'l = conj(x_n') U_ln' (Phi real).
        let ph: Vec<f64> = ev.iter().map(|&e| phi(e, t)).collect();
        let phi_dd = DMatrix::<f64>::from_fn(nc, nc, |n, n2| {
            if n == n2 {
                fermi(ev[n], t)
            } else {
                divided_with(ev[n], ev[n2], ph[n], ph[n2], t)
            }
        });
        let x: Vec<Complex64> = (0..nc).map(|n| u[(0, n)]).collect();
        let w_re = DMatrix::<f64>::from_fn(nc, nc, |n2, l| (x[n2].conj() * u[(l, n2)]).re);
        let w_im = DMatrix::<f64>::from_fn(nc, nc, |n2, l| (x[n2].conj() * u[(l, n2)]).im);
        let y_re = &phi_dd * w_re;
        let y_im = &phi_dd * w_im;
        let entry = |k: usize, l: usize| -> Complex64 {
            let mut acc = Complex64::new(0.0, 0.0);
            for n in 0..nc {
                acc += u[(k, n)].conj() * x[n] * Complex64::new(y_re[(n, l)], y_im[(n, l)]);
            }
            acc
        };
        for (e, ed) in w.edges.iter().enumerate() {
            if !s.inside[e] {
                continue;
            }
            let (la, lb) = (s.local[ed.a], s.local[ed.b]);
            if la == NONE || lb == NONE {
                continue;
            }
            out.coherence[ed.g] += entry(lb, la) * s.vertex[e].conj() * weight;
        }
        for pr in &self.pairs[wi] {
            let (li, lj) = (s.local[pr.i], s.local[pr.j]);
            if li == NONE || lj == NONE {
                continue;
            }
            out.intraband[pr.k][pr.species] += entry(li, lj) * weight;
        }
    }

    /// Both centre species on the ray at angle theta.
    pub(super) fn ray(&self, theta: f64) -> Result<RaySums, NumericalError> {
        let u = [theta.cos(), theta.sin()];
        let mut out = RaySums {
            omega: 0.0,
            coherence: vec![Complex64::new(0.0, 0.0); self.set.fourier.len()],
            intraband: vec![[Complex64::new(0.0, 0.0); 2]; self.n_q],
            diagonalisations: 0,
        };
        for wi in 0..2 {
            let w = &self.set.windows[wi];
            let mut s = Scratch {
                energy: vec![0.0; w.states.len()],
                coupling: vec![Complex64::new(0.0, 0.0); w.edges.len()],
                vertex: vec![Complex64::new(0.0, 0.0); w.edges.len()],
                inside: vec![false; w.edges.len()],
                local: vec![NONE; w.states.len()],
                comp: Vec::with_capacity(w.states.len()),
            };
            for pts in self.ray_layout(w, u)? {
                for pw in pts.windows(2) {
                    for (x, wt) in self.rule.nodes.iter().zip(&self.rule.weights) {
                        let half = 0.5 * (pw[1] - pw[0]);
                        let r = 0.5 * (pw[1] + pw[0]) + half * x;
                        let p = [
                            self.shell0.centre[0] + r * u[0],
                            self.shell0.centre[1] + r * u[1],
                        ];
                        self.node(wi, p, r * half * wt, &mut s, &mut out)?;
                    }
                }
            }
        }
        Ok(out)
    }
}

/// The connected component of the centre state (through couplings inside the cutoff): its states
/// in `s.comp`, their local indices in `s.local` (NONE outside). Returns its size.
fn centre_component(w: &Window, s: &mut Scratch) -> usize {
    let zero = Complex64::new(0.0, 0.0);
    s.local.iter_mut().for_each(|x| *x = NONE);
    s.comp.clear();
    s.local[0] = 0;
    s.comp.push(0);
    let mut head = 0;
    while head < s.comp.len() {
        let i = s.comp[head];
        head += 1;
        for &e in &w.adjacency[i] {
            if s.coupling[e] == zero {
                continue;
            }
            let ed = w.edges[e];
            let j = if ed.a == i { ed.b } else { ed.a };
            if s.local[j] == NONE {
                s.local[j] = s.comp.len();
                s.comp.push(j);
            }
        }
    }
    s.comp.len()
}

/// The Hamiltonian (meV) of the centre's component of `nc` states.
fn component_hamiltonian(w: &Window, s: &Scratch, nc: usize) -> DMatrix<Complex64> {
    let zero = Complex64::new(0.0, 0.0);
    let mut h = DMatrix::<Complex64>::zeros(nc, nc);
    for (li, &i) in s.comp.iter().enumerate() {
        h[(li, li)] = Complex64::new(s.energy[i], 0.0);
    }
    for (e, ed) in w.edges.iter().enumerate() {
        if s.coupling[e] == zero || s.local[ed.a] == NONE {
            continue;
        }
        let (la, lb) = (s.local[ed.a], s.local[ed.b]);
        h[(la, lb)] += s.coupling[e];
        h[(lb, la)] += s.coupling[e].conj();
    }
    h
}

/// Divided difference [phi(x) - phi(y)]/(x - y) (f on the diagonal), without cancellation for
/// close arguments: f(m) + f''(m) d^2/24 for |x - y| < 1e-3 T.
#[inline]
fn phi_divided(x: f64, y: f64, t: f64) -> f64 {
    let d = x - y;
    if t > 0.0 {
        if d.abs() < 1e-3 * t {
            let m = 0.5 * (x + y);
            let f = fermi(m, t);
            return f + f * (1.0 - f) * (1.0 - 2.0 * f) / (t * t) * d * d / 24.0;
        }
        (phi(x, t) - phi(y, t)) / d
    } else if x <= 0.0 && y <= 0.0 {
        1.0
    } else if x >= 0.0 && y >= 0.0 {
        0.0
    } else {
        (x.min(0.0) - y.min(0.0)) / d
    }
}

/// As [`phi_divided`] with phi(x), phi(y) given.
#[inline]
fn divided_with(x: f64, y: f64, phx: f64, phy: f64, t: f64) -> f64 {
    let d = x - y;
    if t > 0.0 && d.abs() >= 1e-3 * t {
        (phx - phy) / d
    } else {
        phi_divided(x, y, t)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    /// The divided difference of phi against its definition where that is well conditioned and
    /// its limit f on the diagonal (identity). Absolute 1e-10.
    #[test]
    fn divided_difference_of_phi() {
        let t = 0.2;
        for (x, y) in [
            (0.3, -0.1),
            (0.01, 0.0100001),
            (-2.0, -2.0 + 1e-7),
            (5.0, -5.0),
        ] {
            let direct = (phi(x, t) - phi(y, t)) / (x - y);
            let ours = phi_divided(x, y, t);
            let tol = if (x - y).abs() > 1e-3 { 1e-13 } else { 1e-8 };
            assert!((ours - direct).abs() < tol, "{x} {y}: {ours} vs {direct}");
        }
        assert!((phi_divided(0.1, 0.1, t) - fermi(0.1, t)).abs() < 1e-15);
    }
}
