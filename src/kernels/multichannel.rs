//! Several uniform (q = 0) channels at once, e.g. one hole pocket paired with two electron pockets
//! at different zone points (see the crate docs (`crate::theory`)): the N x N Hermitian mean-field Hamiltonian at
//! each k (pockets measured from their own centres, off-diagonal blocks Delta_c M_ab(k) inside
//! channel c's shell), diagonalised with nalgebra, and Omega = sum_c Delta_c^2/g_c +
//! int [sum_i phi(E_i) - sum_p phi(eps_p)] per spin channel. The single-channel 2 x 2 closed form
//! of grand_potential.rs is the special case N = 2, and is checked against this general route.

use crate::error::NumericalError;
use crate::kernels::grand_potential::phi;
use crate::kernels::integrate::{Accuracy, Estimate};
use crate::kernels::quad::PanelRule;
use crate::kernels::shell::Shell;
use crate::model::{band_matrix_element, Channel, Model};
use nalgebra::DMatrix;
use num_complex::Complex64;
use std::f64::consts::PI;

/// Omega per spin channel (meV/nm^2, relative to the normal state) of uniform order parameters
/// `deltas[i]` (meV, real: the relative phases of uniform channels through different pockets can
/// be gauged away in this model) in channels `channels[i]`.
pub fn omega_uniform_channels(
    model: &Model,
    channels: &[usize],
    deltas: &[f64],
    t: f64,
    acc: &Accuracy,
) -> Result<Estimate, NumericalError> {
    if channels.len() != deltas.len() || channels.is_empty() {
        return Err(NumericalError::BadArgument(
            "one gap per channel is needed".into(),
        ));
    }
    let chans: Vec<_> = channels.iter().map(|&i| &model.channels()[i]).collect();
    let ns = chans[0].spin_channels();
    if chans.iter().any(|c| c.spin_channels() != ns) {
        return Err(NumericalError::Unsupported(
            "channels with different numbers of spin channels cannot share one mean field here"
                .into(),
        ));
    }
    let pockets = involved_pockets(&chans);
    let shells: Vec<Shell> = chans
        .iter()
        .map(|c| Shell::for_channel(model, c, [0.0, 0.0]))
        .collect::<Result<_, _>>()?;
    let rays = CoupledRays {
        model,
        chans: &chans,
        pockets: &pockets,
        shells: &shells,
        deltas,
        t,
        width: t.max(1e-6 * chans.iter().map(|c| c.cutoff()).fold(0.0, f64::max)),
        rule: PanelRule::new(acc.order),
        acc,
    };
    let mut breaks = Vec::new();
    let mut all = Vec::new();
    let mut h = DMatrix::<Complex64>::zeros(pockets.len(), pockets.len());
    let mut ray_value = |theta: f64| rays.ray(theta, &mut breaks, &mut all, &mut h);
    // Periodic trapezoid over [0, pi) (q = 0: inversion symmetry), doubling until converged.
    let norm = 2.0 / (4.0 * PI * PI);
    let mut m = (acc.min_rays / 2).max(4);
    let mut s = 0.0;
    for j in 0..m {
        s += ray_value(PI * j as f64 / m as f64)?;
    }
    let mut value = PI / m as f64 * s * norm;
    loop {
        if 2 * m * 2 > acc.max_rays {
            return Err(NumericalError::NotConverged {
                what: "coupled-channel Omega over the ray angle".into(),
                iterations: 2 * m,
                last_change: f64::NAN,
                target: acc.rtol,
            });
        }
        for j in 0..m {
            s += ray_value(PI * (j as f64 + 0.5) / m as f64)?;
        }
        m *= 2;
        let new = PI / m as f64 * s * norm;
        let change = (new - value).abs();
        value = new;
        let scale = chans
            .iter()
            .zip(deltas)
            .map(|(c, d)| c.nu() * d * d)
            .fold(0.0, f64::max)
            .max(1e-300);
        if change <= acc.rtol * value.abs().max(1e-3 * scale) {
            let quad: f64 = chans.iter().zip(deltas).map(|(c, d)| d * d / c.g()).sum();
            return Ok(Estimate {
                value: quad + value,
                error: change,
                rays: 2 * m,
            });
        }
    }
}

/// The rays of the coupled-channel Omega: the channels, the pockets they involve (the rows of
/// the N x N Hamiltonian), their q = 0 shells and gaps (meV).
struct CoupledRays<'m> {
    model: &'m Model,
    chans: &'m [&'m Channel],
    pockets: &'m [usize],
    shells: &'m [Shell<'m>],
    deltas: &'m [f64],
    /// k_B T, meV.
    t: f64,
    /// Feature width in energy, meV.
    width: f64,
    rule: PanelRule,
    acc: &'m Accuracy,
}

impl CoupledRays<'_> {
    /// The radial integral along the ray at angle theta (before the angular weight); `breaks`,
    /// `all` and `h` are reused buffers.
    fn ray(
        &self,
        theta: f64,
        breaks: &mut Vec<f64>,
        all: &mut Vec<f64>,
        h: &mut DMatrix<Complex64>,
    ) -> Result<f64, NumericalError> {
        let (width, acc) = (self.width, self.acc);
        all.clear();
        let mut u = [1.0, 0.0];
        for ((c, sh), &d) in self.chans.iter().zip(self.shells).zip(self.deltas) {
            let extra = if c.mismatch().abs() > d {
                let x = (c.mismatch() * c.mismatch() - d * d).sqrt();
                vec![(x, width), (-x, width)]
            } else {
                vec![]
            };
            let ray = sh.ray(
                theta,
                width.max(0.25 * d) * acc.feature_width,
                &extra,
                acc.growth,
                breaks,
            )?;
            u = ray.u;
            all.extend_from_slice(breaks);
        }
        all.sort_by(f64::total_cmp);
        all.dedup_by(|a, b| (*a - *b).abs() <= 1e-14 * b.abs().max(1e-300));
        let mut sum = 0.0;
        for w in all.windows(2) {
            self.rule.for_each_node(w[0], w[1], |r, wr| {
                if let Some(v) = self.node([r * u[0], r * u[1]], h) {
                    sum += v * r * wr;
                }
            });
        }
        Ok(sum)
    }

    /// sum_i phi(E_i) - sum_p phi(eps_p) at k (meV/nm^2 before the measure), or None where no
    /// channel couples.
    fn node(&self, k: [f64; 2], h: &mut DMatrix<Complex64>) -> Option<f64> {
        let (model, t) = (self.model, self.t);
        let idx = |p: usize| self.pockets.iter().position(|&x| x == p).unwrap_or(0);
        h.fill(Complex64::new(0.0, 0.0));
        let mut normal = 0.0;
        for (i, &p) in self.pockets.iter().enumerate() {
            let e = model.pockets()[p].energy(k);
            h[(i, i)] = Complex64::new(e, 0.0);
            normal += phi(e, t);
        }
        let mut coupled = false;
        for (ci, c) in self.chans.iter().enumerate() {
            let (pa, pb) = (&model.pockets()[c.a()], &model.pockets()[c.b()]);
            let xi = 0.5 * (pa.energy(k) - pb.energy(k));
            if xi.abs() >= c.cutoff() || self.deltas[ci] == 0.0 {
                continue;
            }
            let m = band_matrix_element(pa, pb, c.spin_matrix(), k, k);
            let (ia, ib) = (idx(c.a()), idx(c.b()));
            h[(ia, ib)] += m * self.deltas[ci];
            h[(ib, ia)] += (m * self.deltas[ci]).conj();
            coupled = true;
        }
        if !coupled {
            return None;
        }
        let eig = h.clone().symmetric_eigen();
        let ordered: f64 = eig.eigenvalues.iter().map(|&e| phi(e, t)).sum();
        Some(ordered - normal)
    }
}

/// The pockets of the channels, each once, in order of first appearance.
fn involved_pockets(chans: &[&Channel]) -> Vec<usize> {
    let mut pockets: Vec<usize> = Vec::new();
    for c in chans {
        for p in [c.a(), c.b()] {
            if !pockets.contains(&p) {
                pockets.push(p);
            }
        }
    }
    pockets
}
