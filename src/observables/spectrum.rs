//! The quasiparticle spectrum of an ordered single-wavevector state (after the ordered solver):
//! the excitation gap relative to the chemical potential (meV), or the arcs of the shell where it
//! closes (degrees).

use crate::error::NumericalError;
use crate::kernels::Shell;
use crate::model::{Channel, Model};
use crate::solvers::ordered::Solution;

/// The quasiparticle spectrum of a solution relative to the chemical potential.
#[derive(Debug, Clone, serde::Serialize)]
pub struct Spectrum {
    /// The smallest excitation energy min_k (R - |h_k|) in meV when positive (a gapped state);
    /// None when some Fermi-surface pieces stay ungapped.
    pub gap: Option<f64>,
    /// Angular ranges (degrees, polar angle about the shell centre, counter-clockwise from x)
    /// where the spectrum is gapless.
    pub gapless_arcs_deg: Vec<[f64; 2]>,
}

/// Samples the shell on 360 rays (64 values of xi on each) to find the excitation gap of a
/// solution, or the arcs where it vanishes.
pub fn spectrum(model: &Model, ch: &Channel, sol: &Solution) -> Result<Spectrum, NumericalError> {
    let shell = Shell::for_channel(model, ch, sol.q)?;
    let d2 = sol.delta * sol.delta;
    let n_rays = 360;
    let mut min_gap = f64::INFINITY;
    let mut gapless = vec![false; n_rays];
    for (j, flag) in gapless.iter_mut().enumerate() {
        let th = 2.0 * std::f64::consts::PI * j as f64 / n_rays as f64;
        let u = [th.cos(), th.sin()];
        let mut ray_min = f64::INFINITY;
        let span = (sol.delta + ch.mismatch().abs()).min(shell.cutoff);
        let samples = (0..=64)
            .map(|i| shell.xi_lo + (shell.cutoff - shell.xi_lo) * i as f64 / 64.0)
            .chain((-32..=32).map(|i| span * i as f64 / 32.0))
            .filter(|&x| x >= shell.xi_lo && x <= shell.cutoff);
        for xi in samples {
            let r = shell.xi_radius(u, xi)?;
            let p = shell.at(shell.point_on_ray(u, r));
            let e = (p.xi() * p.xi() + d2 * p.w).sqrt() - p.h().abs();
            ray_min = ray_min.min(e);
        }
        if ray_min <= 0.0 {
            *flag = true;
        }
        min_gap = min_gap.min(ray_min);
    }
    let mut arcs = Vec::new();
    let mut j = 0;
    while j < n_rays {
        if gapless[j] {
            let start = j;
            while j < n_rays && gapless[j] {
                j += 1;
            }
            arcs.push([start as f64, j as f64 - 1.0]);
        } else {
            j += 1;
        }
    }
    Ok(Spectrum {
        gap: if min_gap > 0.0 && sol.delta > 0.0 {
            Some(min_gap)
        } else {
            None
        },
        gapless_arcs_deg: arcs,
    })
}
