//! Density observables of a pattern state (after the solvers): the charge and spin density
//! waves a scanning probe would see (wavevectors in 1/nm, amplitudes per nm^2), their real-space
//! map and its envelope, the map of |Delta(r)|^2 (meV^2), and the correlation of two maps. The
//! fields of view and samplings of the maps are chosen in [`crate::observables::fields`].

use crate::model::{Channel, Model};
use crate::solvers::pattern::StateCandidate;
use std::f64::consts::PI;

/// One density wave a scanning probe would see.
#[derive(Debug, Clone, serde::Serialize)]
pub struct DensityWave {
    /// "charge" or "spin x" / "spin y" / "spin z".
    pub kind: &'static str,
    /// 1: interband coherence at K_a - K_b + q_j; 2: intraband at q_i - q_j.
    pub order: u8,
    /// 1/nm, folded into the first zone when a `[surface]` lattice is given.
    pub wavevector_per_nm: [f64; 2],
    /// Whether the wavevector was folded.
    pub folded_into_first_zone: bool,
    /// 2 pi / |P| (None for P = 0).
    pub period_nm: Option<f64>,
    /// Amplitude of the cosine, per nm^2.
    pub amplitude_per_nm2: f64,
    /// Phase of the cosine, radians.
    pub phase: f64,
}

/// The density waves of a state (see the crate docs (`crate::theory`)): at P_j = K_a - K_b + q_j with amplitude
/// 2 n_s |m_ab Delta_j| / g (charge for M = 1, spin density for M = sigma_i), and the intraband
/// waves at q_i - q_j with amplitude 2 |n(Q)| (one of each +-Q pair).
pub fn density_waves(model: &Model, ch: &Channel, state: &StateCandidate) -> Vec<DensityWave> {
    let kind = match ch.spin_matrix() {
        crate::model::SpinMatrix::Identity => "charge",
        crate::model::SpinMatrix::X => "spin x",
        crate::model::SpinMatrix::Y => "spin y",
        crate::model::SpinMatrix::Z => "spin z",
    };
    let fold = |p: [f64; 2]| match &model.surface() {
        Some(l) => (l.fold(p), true),
        None => (p, false),
    };
    let period = |p: [f64; 2]| {
        let n = p[0].hypot(p[1]);
        (n > 1e-12).then(|| 2.0 * PI / n)
    };
    let k = ch.nesting_vector(model);
    let mut out = Vec::new();
    for (g, d) in &state.components {
        let amp = 2.0 * ch.spin_channels() * (ch.overlap() * d.norm()) / ch.g();
        if amp <= 0.0 {
            continue;
        }
        let (p, folded) = fold([k[0] + g[0], k[1] + g[1]]);
        out.push(DensityWave {
            kind,
            order: 1,
            wavevector_per_nm: p,
            folded_into_first_zone: folded,
            period_nm: period(p),
            amplitude_per_nm2: amp,
            phase: d.arg(),
        });
    }
    let scale = state
        .intraband
        .iter()
        .map(|(q, _)| q[0].hypot(q[1]))
        .fold(0.0, f64::max);
    let mut seen: Vec<[f64; 2]> = Vec::new();
    for (q, n) in &state.intraband {
        let is_pair = seen
            .iter()
            .any(|s| (s[0] + q[0]).hypot(s[1] + q[1]) <= 1e-9 * scale);
        if is_pair || n.norm() == 0.0 {
            continue;
        }
        seen.push(*q);
        // Intraband densities are charge densities whatever the spin matrix of the order.
        let (p, folded) = fold(*q);
        out.push(DensityWave {
            kind: "charge",
            order: 2,
            wavevector_per_nm: p,
            folded_into_first_zone: folded,
            period_nm: period(p),
            amplitude_per_nm2: 2.0 * n.norm(),
            phase: n.arg(),
        });
    }
    out
}

/// The values of `f(x, y)` on an n x n grid over [-fov/2, fov/2]^2 (nm), cell centres,
/// row-major with y outer.
fn on_grid(fov: f64, n: usize, f: impl Fn(f64, f64) -> f64) -> Vec<f64> {
    let at = |i: usize| -0.5 * fov + fov * (i as f64 + 0.5) / n as f64;
    let mut out = Vec::with_capacity(n * n);
    for iy in 0..n {
        let y = at(iy);
        out.extend((0..n).map(|ix| f(at(ix), y)));
    }
    out
}

/// The modulated waves (P != 0) of one kind.
fn modulated<'w>(waves: &'w [DensityWave], kind: &'w str) -> impl Iterator<Item = &'w DensityWave> {
    waves
        .iter()
        .filter(move |w| w.kind == kind && w.period_nm.is_some())
}

/// |P| of a wave, 1/nm.
fn norm(w: &DensityWave) -> f64 {
    w.wavevector_per_nm[0].hypot(w.wavevector_per_nm[1])
}

/// A_w cos(P_w.r + phase_w) at (x, y) nm.
fn wave_at(w: &DensityWave, x: f64, y: f64) -> f64 {
    w.amplitude_per_nm2 * (w.wavevector_per_nm[0] * x + w.wavevector_per_nm[1] * y + w.phase).cos()
}

/// The density modulation sum_w A_w cos(P_w.r + phase_w) of `waves` of one kind (per nm^2) on an
/// n x n grid over [-fov/2, fov/2]^2 (nm), row-major with y outer. Waves at P = 0 (a uniform
/// interband coherence, no modulation) are left out.
pub fn density_map(waves: &[DensityWave], kind: &str, fov: f64, n: usize) -> Vec<f64> {
    on_grid(fov, n, |x, y| {
        modulated(waves, kind).map(|w| wave_at(w, x, y)).sum()
    })
}

/// The density as seen on a field too large to resolve the waves with |P| > `fast_above` (1/nm),
/// per nm^2: the slower waves as they are plus the local amplitude |sum_fast A_w e^{i(P_w.r +
/// phase_w)}| of the fast ones (their envelope; the fast waves of one channel lie near one
/// wavevector K_a - K_b, so the modulus varies on the scale of their differences only). Same grid
/// as [`density_map`].
pub fn envelope_map(
    waves: &[DensityWave],
    kind: &str,
    fov: f64,
    n: usize,
    fast_above: f64,
) -> Vec<f64> {
    on_grid(fov, n, |x, y| {
        let mut slow = 0.0;
        let mut fast = num_complex::Complex64::new(0.0, 0.0);
        for w in modulated(waves, kind) {
            if norm(w) > fast_above {
                let p = w.wavevector_per_nm;
                fast += num_complex::Complex64::from_polar(
                    w.amplitude_per_nm2,
                    p[0] * x + p[1] * y + w.phase,
                );
            } else {
                slow += wave_at(w, x, y);
            }
        }
        slow + fast.norm()
    })
}

/// |Delta(r)|^2 of a state's components on the same grid as [`density_map`] (meV^2).
pub fn gap_map(state: &StateCandidate, fov: f64, n: usize) -> Vec<f64> {
    on_grid(fov, n, |x, y| {
        let d: num_complex::Complex64 = state
            .components
            .iter()
            .map(|(g, d)| d * num_complex::Complex64::from_polar(1.0, g[0] * x + g[1] * y))
            .sum();
        d.norm_sqr()
    })
}

/// Pearson correlation of two maps (0 when either is constant).
pub fn correlation(a: &[f64], b: &[f64]) -> f64 {
    let n = a.len().min(b.len()) as f64;
    if n == 0.0 {
        return 0.0;
    }
    let ma = a.iter().sum::<f64>() / n;
    let mb = b.iter().sum::<f64>() / n;
    let (mut sab, mut saa, mut sbb) = (0.0, 0.0, 0.0);
    for (x, y) in a.iter().zip(b) {
        sab += (x - ma) * (y - mb);
        saa += (x - ma) * (x - ma);
        sbb += (y - mb) * (y - mb);
    }
    if saa <= 0.0 || sbb <= 0.0 {
        0.0
    } else {
        sab / (saa * sbb).sqrt()
    }
}
