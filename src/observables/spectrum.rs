//! The quasiparticle spectrum of an ordered single-wavevector state (after the ordered solver):
//! the excitation gap relative to the chemical potential (meV), or the arcs of the shell where it
//! closes (degrees). The normal state is gapless on its whole Fermi surface.
//!
//! Search: a coarse scan over 360 rays marks each ray gapped or gapless by the lowest
//! quasiparticle energy E = sqrt(xi^2 + Delta^2 W) - |h| on sampled values of xi; the end of every
//! arc is then the root in angle (Brent) of the ray's lowest E, itself refined by a Brent
//! minimisation in xi. Arcs that cross 0/360 degrees are one arc.

use crate::error::NumericalError;
use crate::kernels::Shell;
use crate::model::{Channel, Model};
use crate::solvers::optimize::brent_max;
use crate::solvers::ordered::Solution;
use crate::solvers::roots::brent_root;
use std::f64::consts::PI;

/// Rays of the coarse angular scan (one per degree).
const RAYS: usize = 360;
/// Relative tolerance of an arc end in angle (radians near 2 pi: about 1e-9 degrees).
const ANGLE_REL: f64 = 1e-12;

/// The quasiparticle spectrum of a solution relative to the chemical potential.
#[derive(Debug, Clone, serde::Serialize)]
pub struct Spectrum {
    /// The smallest excitation energy min_k (R - |h_k|) in meV when positive (a gapped state);
    /// None when some Fermi-surface pieces stay ungapped (always for the normal state).
    pub gap: Option<f64>,
    /// Angular ranges [start, end] (degrees, polar angle about the shell centre, counter-clockwise
    /// from x) where the spectrum is gapless, counter-clockwise from start to end: start lies in
    /// [0, 360) and end may exceed 360 for an arc crossing 0 degrees; [0, 360] is the whole
    /// Fermi surface.
    pub gapless_arcs_deg: Vec<[f64; 2]>,
}

/// The lowest quasiparticle energy along rays of one shell, for one solution.
struct Rays<'a> {
    shell: Shell<'a>,
    ch: &'a Channel,
    sol: &'a Solution,
}

impl Rays<'_> {
    /// E = sqrt(xi^2 + Delta^2 W) - |h| (meV) at level xi on the ray of polar angle `th`.
    fn energy(&self, th: f64, xi: f64) -> Result<f64, NumericalError> {
        let u = [th.cos(), th.sin()];
        let r = self.shell.xi_radius(u, xi)?;
        let p = self.shell.at(self.shell.point_on_ray(u, r));
        let d2 = self.sol.delta * self.sol.delta;
        Ok((p.xi() * p.xi() + d2 * p.w).sqrt() - p.h().abs())
    }

    /// The sampled levels of xi: 65 across the shell and 65 within |Delta| + |h| of zero, sorted.
    fn levels(&self) -> Vec<f64> {
        let sh = &self.shell;
        let span = (self.sol.delta + self.ch.mismatch().abs()).min(sh.cutoff);
        let mut xs: Vec<f64> = (0..=64)
            .map(|i| sh.xi_lo + (sh.cutoff - sh.xi_lo) * i as f64 / 64.0)
            .chain((-32..=32).map(|i| span * i as f64 / 32.0))
            .filter(|&x| x >= sh.xi_lo && x <= sh.cutoff)
            .collect();
        xs.sort_by(f64::total_cmp);
        xs
    }

    /// The lowest sampled E on the ray at `th` and the index of its level.
    fn sampled_min(&self, th: f64, xs: &[f64]) -> Result<(f64, usize), NumericalError> {
        let mut best = (f64::INFINITY, 0);
        for (i, &xi) in xs.iter().enumerate() {
            let e = self.energy(th, xi)?;
            if e < best.0 {
                best = (e, i);
            }
        }
        Ok(best)
    }

    /// The lowest E on the ray at `th`: the sampled minimum refined by Brent between the
    /// neighbouring levels.
    fn refined_min(&self, th: f64, xs: &[f64]) -> Result<f64, NumericalError> {
        let (e, i) = self.sampled_min(th, xs)?;
        let (lo, hi) = (xs[i.saturating_sub(1)], xs[(i + 1).min(xs.len() - 1)]);
        if hi <= lo {
            return Ok(e);
        }
        let m = brent_max(
            "lowest quasiparticle energy on a ray",
            lo,
            hi,
            1e-12 * (hi - lo),
            |x| Ok(-self.energy(th, x)?),
        )?;
        Ok(e.min(-m.value))
    }

    /// The angle (radians) in [a, b] where the ray's lowest E changes sign; the coarse end whose
    /// side it belongs to when the refined values do not bracket a root.
    fn arc_end(
        &self,
        a: f64,
        b: f64,
        xs: &[f64],
        gapless_at_a: bool,
    ) -> Result<f64, NumericalError> {
        let (fa, fb) = (self.refined_min(a, xs)?, self.refined_min(b, xs)?);
        if (fa <= 0.0) == (fb <= 0.0) {
            return Ok(if gapless_at_a { a } else { b });
        }
        Ok(brent_root("end of a gapless arc", a, b, ANGLE_REL, |th| {
            self.refined_min(th, xs)
        })?
        .x)
    }
}

/// The excitation gap of a solution (sampled on 360 rays, 130 values of xi on each), or the arcs
/// where it vanishes, with their ends located by root finding.
pub fn spectrum(model: &Model, ch: &Channel, sol: &Solution) -> Result<Spectrum, NumericalError> {
    let shell = Shell::for_channel(model, ch, sol.q)?;
    if sol.delta <= 0.0 {
        // Delta = 0: E = |xi| - |h| vanishes on the whole Fermi surface.
        return Ok(Spectrum {
            gap: None,
            gapless_arcs_deg: vec![[0.0, 360.0]],
        });
    }
    let rays = Rays { shell, ch, sol };
    let xs = rays.levels();
    let step = 2.0 * PI / RAYS as f64;
    let mut min_gap = f64::INFINITY;
    let mut gapless = Vec::with_capacity(RAYS);
    for j in 0..RAYS {
        let (e, _) = rays.sampled_min(step * j as f64, &xs)?;
        gapless.push(e <= 0.0);
        min_gap = min_gap.min(e);
    }
    let arcs = if gapless.iter().all(|&g| g) {
        vec![[0.0, 360.0]]
    } else {
        arcs(&rays, &gapless, &xs, step)?
    };
    Ok(Spectrum {
        gap: (min_gap > 0.0).then_some(min_gap),
        gapless_arcs_deg: arcs,
    })
}

/// The gapless arcs (degrees) from the coarse flags of the rays (not all gapless): each end
/// refined between its two rays, an arc through 0 degrees kept whole.
fn arcs(
    rays: &Rays,
    gapless: &[bool],
    xs: &[f64],
    step: f64,
) -> Result<Vec<[f64; 2]>, NumericalError> {
    let n = gapless.len();
    // Start after a gapped ray, so that every arc opens before it closes.
    let Some(first) = (0..n).find(|&j| !gapless[j]) else {
        return Ok(Vec::new());
    };
    let mut out = Vec::new();
    let mut open: Option<f64> = None;
    for k in 0..n {
        let j = (first + k) % n;
        let next = (j + 1) % n;
        if gapless[j] == gapless[next] {
            continue;
        }
        // The bracket in angle, unwrapped past 2 pi from the first gapped ray.
        let a = step * (first + k) as f64;
        let end = rays.arc_end(a, a + step, xs, gapless[j])?;
        if gapless[next] {
            open = Some(end);
        } else if let Some(start) = open.take() {
            out.push(wrap_deg(start, end));
        }
    }
    Ok(out)
}

/// An arc from `start` to `end` (radians, end > start) in degrees, start in [0, 360).
fn wrap_deg(start: f64, end: f64) -> [f64; 2] {
    let (s, e) = (start.to_degrees(), end.to_degrees());
    let shift = 360.0 * (s / 360.0).floor();
    [s - shift, e - shift]
}
