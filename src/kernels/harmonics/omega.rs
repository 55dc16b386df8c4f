//! Omega of the multi-wavevector mean field on a k grid (polar about the channel's q = 0 shell
//! centre, rays in parallel summed in ray order) with its exact derivatives (coherences,
//! intraband densities), and the grid-doubling check that gives its error. Last stage of the
//! harmonic kernel; the nonlinear pattern solver calls it.

use super::ray::{Evaluator, Pair, RaySums};
use super::set::{rotate, same, sub, HarmonicSet, Species};
use super::symmetry::{ray_symmetry, RaySymmetry};
use crate::error::NumericalError;
use crate::kernels::quad::PanelRule;
use crate::kernels::shell::Shell;
use crate::model::{Channel, Model, Pocket};
use num_complex::Complex64;
use rayon::prelude::*;
use std::f64::consts::PI;

/// The k grid: `rays` rays over the full circle (periodic trapezoid), Gauss-Legendre panels of
/// `order` nodes: at least `radial_panels` uniform panels over the core of each ray, and no core
/// panel wider than `panel_temperatures` T (T > 0), panels growing by `growth` times their
/// distance from the core outside it. `rtol` is the target of the grid-doubling check (relative
/// to max(|Omega|, 1e-2 sum |Delta_G|^2/g)), reached within `max_doublings` doublings or reported
/// as not converged.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HarmonicGrid {
    /// Rays over the full circle.
    pub rays: usize,
    /// Least number of uniform panels over the core of a ray.
    pub radial_panels: usize,
    /// Widest core panel, in units of T.
    pub panel_temperatures: f64,
    /// Gauss-Legendre nodes per panel.
    pub order: usize,
    /// Growth of the panels outside the core (times their distance from it).
    pub growth: f64,
    /// Relative target of the grid-doubling check.
    pub rtol: f64,
    /// Most grid doublings before `NotConverged`.
    pub max_doublings: usize,
}

impl Default for HarmonicGrid {
    fn default() -> Self {
        HarmonicGrid {
            rays: 32,
            radial_panels: 16,
            panel_temperatures: 4.0,
            order: 8,
            growth: 0.5,
            rtol: 1e-5,
            max_doublings: 2,
        }
    }
}

impl HarmonicGrid {
    /// Twice the rays and the radial panels, half the panel width in T and the growth.
    pub fn doubled(&self) -> HarmonicGrid {
        HarmonicGrid {
            rays: 2 * self.rays,
            radial_panels: 2 * self.radial_panels,
            panel_temperatures: 0.5 * self.panel_temperatures,
            growth: 0.5 * self.growth,
            ..*self
        }
    }
}

/// Omega and its derivatives at one set of components.
#[derive(Debug, Clone)]
pub struct MultiOmega {
    /// Omega per spin channel relative to the normal state, meV/nm^2 (sum |Delta_G|^2/g included).
    pub omega: f64,
    /// Estimated absolute error of `omega` (difference to the doubled grid), meV/nm^2; None for a
    /// single-grid evaluation.
    pub error: Option<f64>,
    /// The Fourier set (1/nm), as in [`HarmonicSet::fourier`].
    pub fourier: Vec<[f64; 2]>,
    /// The components used, meV.
    pub deltas: Vec<Complex64>,
    /// Coherences C_G = d(band part of Omega)/d conj(Delta_G), 1/nm^2: tends to
    /// (1/area) sum_p conj(M) theta <b+_p a_{p+G}>; -Delta_G/g at self-consistency.
    pub coherence: Vec<Complex64>,
    /// dOmega/d conj(Delta_G) = Delta_G/g + C_G, 1/nm^2.
    pub gradient: Vec<Complex64>,
    /// (Q, n_a(Q), n_b(Q)) with n_s(Q) = (1/area) sum_p <s+_p s_{p+Q}>, per nm^2, at the
    /// requested Q.
    pub intraband: Vec<([f64; 2], Complex64, Complex64)>,
    /// The (finest) grid used.
    pub grid: HarmonicGrid,
    /// Matrices diagonalised (on the finest grid).
    pub diagonalisations: usize,
}

/// Where Omega of the multi-wavevector mean field is evaluated: channel `ch` of `model`, the
/// components `deltas` (meV) on the Fourier set of `set`, k_B T = `t` (meV), the wavevectors Q
/// (1/nm) of the requested intraband components, and whether the derivatives (coherences,
/// gradient, intraband components) are wanted or Omega only.
#[derive(Clone, Copy)]
pub struct OmegaAt<'a> {
    /// The model.
    pub model: &'a Model,
    /// Index of the channel.
    pub ch: usize,
    /// The harmonic truncation.
    pub set: &'a HarmonicSet,
    /// Delta_G on the Fourier set, meV.
    pub deltas: &'a [Complex64],
    /// k_B T, meV.
    pub t: f64,
    /// Wavevectors Q (1/nm) of the requested intraband components.
    pub intraband: &'a [[f64; 2]],
    /// Whether the coherences, gradient and intraband components are wanted.
    pub derivatives: bool,
}

impl<'a> OmegaAt<'a> {
    /// Omega with its derivatives and no intraband components.
    pub fn new(
        model: &'a Model,
        ch: usize,
        set: &'a HarmonicSet,
        deltas: &'a [Complex64],
        t: f64,
    ) -> Self {
        OmegaAt {
            model,
            ch,
            set,
            deltas,
            t,
            intraband: &[],
            derivatives: true,
        }
    }

    /// The same with the intraband components at the wavevectors `qs` (1/nm).
    pub fn with_intraband(self, qs: &'a [[f64; 2]]) -> Self {
        OmegaAt {
            intraband: qs,
            ..self
        }
    }

    /// The same for Omega only (coherence, gradient and intraband left empty).
    pub fn omega_only(self) -> Self {
        OmegaAt {
            derivatives: false,
            ..self
        }
    }

    /// Omega, coherences and intraband components on one grid, with the given angular symmetry
    /// (use [`ray_symmetry`]; the caller vouches that it holds). No error estimate: for use
    /// inside iterations whose result is checked on a doubled grid ([`OmegaAt::converged`] does
    /// the check).
    pub fn on_grid(
        &self,
        grid: &HarmonicGrid,
        symmetry: &RaySymmetry,
    ) -> Result<MultiOmega, NumericalError> {
        on_grid(self, grid, symmetry)
    }

    /// Omega with its error estimate: evaluated on `grid` and on doubled grids until two
    /// successive values agree to `grid.rtol` (relative to [`omega_scale`]), at most
    /// `grid.max_doublings` times; otherwise `NotConverged`. Returns the finest evaluation, its
    /// `error` the last change.
    pub fn converged(&self, grid: &HarmonicGrid) -> Result<MultiOmega, NumericalError> {
        let OmegaAt {
            model,
            ch,
            set,
            deltas,
            ..
        } = *self;
        let sym = ray_symmetry(model, ch, set, deltas);
        let g = model.channels().get(ch).map(|c| c.g()).ok_or_else(|| {
            NumericalError::BadArgument(format!("channel index {ch} is out of range"))
        })?;
        let mut grid = *grid;
        let mut prev = self.on_grid(&grid, &sym)?;
        let mut change = f64::INFINITY;
        for _ in 0..=grid.max_doublings {
            grid = grid.doubled();
            let next = self.on_grid(&grid, &sym)?;
            change = (next.omega - prev.omega).abs();
            let target = grid.rtol * omega_scale(next.omega, deltas, g);
            prev = next;
            if change <= target {
                prev.error = Some(change);
                return Ok(prev);
            }
        }
        Err(NumericalError::NotConverged {
            what: "multi-wavevector Omega over the k grid".into(),
            iterations: grid.max_doublings + 1,
            last_change: change,
            target: grid.rtol * omega_scale(prev.omega, deltas, g),
        })
    }
}

/// The body of [`OmegaAt::on_grid`].
fn on_grid(
    at: &OmegaAt,
    grid: &HarmonicGrid,
    symmetry: &RaySymmetry,
) -> Result<MultiOmega, NumericalError> {
    let (model, ch, set, deltas, t) = (at.model, at.ch, at.set, at.deltas, at.t);
    let (intraband, derivatives) = (at.intraband, at.derivatives);
    let c = model.channels().get(ch).ok_or_else(|| {
        NumericalError::BadArgument(format!("channel index {ch} is out of range"))
    })?;
    check_inputs(set, deltas, t, grid)?;
    let (a, b) = (&model.pockets()[c.a()], &model.pockets()[c.b()]);
    let shell0 = Shell::for_channel(model, c, [0.0, 0.0])?;
    check_dirac_points(a, b, c.cutoff(), set)?;
    let (qs, n_requested) = closed_intraband(set, intraband, symmetry);
    let pairs = [0, 1].map(|wi| same_pocket_pairs(set, wi, &qs));
    let e_core = core_half_width(a, b, c, set, t);
    let core_panels = core_panels(grid, e_core, t);
    let ev = Evaluator {
        a,
        b,
        matrix: c.spin_matrix(),
        cutoff: c.cutoff(),
        t,
        set,
        deltas,
        shell0,
        grid: *grid,
        rule: PanelRule::new(grid.order),
        e_core,
        core_panels,
        pairs,
        n_q: qs.len(),
        derivatives,
    };
    let (thetas, ray_weight, factor) = angular_rule(symmetry, grid);
    let rays: Vec<Result<RaySums, NumericalError>> =
        thetas.par_iter().map(|&th| ev.ray(th)).collect();
    let mut sums = sum_rays(rays, ray_weight, set.fourier.len(), qs.len())?;
    sums.omega *= factor;
    if let RaySymmetry::Fold { n, perm } = symmetry {
        unfold_sector(&mut sums, set, &qs, *n, perm);
    }
    let RaySums {
        omega: omega_band,
        coherence: coh,
        intraband: intra,
        diagonalisations,
    } = sums;
    let quad: f64 = deltas.iter().map(|d| d.norm_sqr()).sum::<f64>() / c.g();
    let (coherence, gradient, intraband) = if derivatives {
        let gradient = deltas
            .iter()
            .zip(&coh)
            .map(|(d, x)| *d / c.g() + *x)
            .collect();
        let intraband = (0..n_requested)
            .map(|k| (qs[k], intra[k][0], intra[k][1]))
            .collect();
        (coh, gradient, intraband)
    } else {
        (Vec::new(), Vec::new(), Vec::new())
    };
    Ok(MultiOmega {
        omega: quad + omega_band,
        error: None,
        fourier: set.fourier.clone(),
        deltas: deltas.to_vec(),
        coherence,
        gradient,
        intraband,
        grid: *grid,
        diagonalisations,
    })
}

/// The components must match the Fourier set, T (meV) be finite and >= 0, the grid be usable.
fn check_inputs(
    set: &HarmonicSet,
    deltas: &[Complex64],
    t: f64,
    grid: &HarmonicGrid,
) -> Result<(), NumericalError> {
    if deltas.len() != set.fourier.len() {
        return Err(NumericalError::BadArgument(format!(
            "{} components given for a Fourier set of {}",
            deltas.len(),
            set.fourier.len()
        )));
    }
    if !t.is_finite() || t < 0.0 {
        return Err(NumericalError::BadArgument(format!(
            "temperature must be finite and >= 0 (got {t} meV)"
        )));
    }
    if grid.rays == 0
        || grid.order == 0
        || grid.radial_panels == 0
        || !grid.growth.is_finite()
        || grid.growth <= 0.0
        || grid.panel_temperatures.is_nan()
        || grid.panel_temperatures <= 0.0
    {
        return Err(NumericalError::BadArgument(format!(
            "invalid harmonic grid {grid:?}"
        )));
    }
    Ok(())
}

/// The distinct requested intraband wavevectors (1/nm), then their images under the rotation the
/// angular rule uses (so that the set is closed under it); with the number requested.
fn closed_intraband(
    set: &HarmonicSet,
    intraband: &[[f64; 2]],
    symmetry: &RaySymmetry,
) -> (Vec<[f64; 2]>, usize) {
    let mut qs: Vec<[f64; 2]> = Vec::new();
    for q in intraband {
        if !qs.iter().any(|p| same(*p, *q, set.tol)) {
            qs.push(*q);
        }
    }
    let n_requested = qs.len();
    if let RaySymmetry::Fold { n, .. } = symmetry {
        let mut k = 0;
        while k < qs.len() {
            let r = rotate(qs[k], 2.0 * PI / *n as f64);
            if !qs.iter().any(|p| same(*p, r, set.tol)) {
                qs.push(r);
            }
            k += 1;
        }
    }
    (qs, n_requested)
}

/// The same-pocket pairs of window `wi` whose offset difference is one of `qs`.
fn same_pocket_pairs(set: &HarmonicSet, wi: usize, qs: &[[f64; 2]]) -> Vec<Pair> {
    let w = &set.windows[wi];
    let mut out = Vec::new();
    for (i, si) in w.states.iter().enumerate() {
        for (j, sj) in w.states.iter().enumerate() {
            if i == j || si.species != sj.species {
                continue;
            }
            let d = sub(sj.offset, si.offset);
            if let Some(k) = qs.iter().position(|q| same(*q, d, set.tol)) {
                out.push(Pair {
                    i,
                    j,
                    k,
                    species: if si.species == Species::A { 0 } else { 1 },
                });
            }
        }
    }
    out
}

/// Half-width E_core (meV) of the core |xi_0| < E_core where every level of the window can cross
/// zero: v m max|q_j| + max|h| + 3 Delta_BCS + 10 T.
fn core_half_width(a: &Pocket, b: &Pocket, c: &Channel, set: &HarmonicSet, t: f64) -> f64 {
    let v_max = [[1.0, 0.0], [0.0, 1.0], [0.6, 0.8], [-0.8, 0.6]]
        .iter()
        .map(|d| a.fermi_velocity_along(*d).max(b.fermi_velocity_along(*d)))
        .fold(0.0, f64::max);
    let h_max = c
        .mismatch()
        .abs()
        .max(c.mismatch_range()[0].abs())
        .max(c.mismatch_range()[1].abs());
    let lambda = c.lambda();
    let delta_bcs = if lambda > 0.0 {
        c.cutoff() / (1.0 / lambda).sinh()
    } else {
        0.0
    };
    v_max * set.order as f64 * set.q_max() + h_max + 3.0 * delta_bcs + 10.0 * t
}

/// Uniform panels over the core: `radial_panels`, more when a panel would be wider than
/// `panel_temperatures` T.
fn core_panels(grid: &HarmonicGrid, e_core: f64, t: f64) -> usize {
    let mut core_panels = grid.radial_panels;
    if t > 0.0 {
        let thermal = (2.0 * e_core / (grid.panel_temperatures * t)).ceil();
        if thermal.is_finite() && thermal > core_panels as f64 {
            core_panels = (thermal as usize).min(1 << 16);
        }
    }
    core_panels
}

/// The angles of the rays, the weight of each (d theta/(2 pi)^2) and the factor that turns the
/// sum into the full-circle integral.
fn angular_rule(symmetry: &RaySymmetry, grid: &HarmonicGrid) -> (Vec<f64>, f64, f64) {
    let norm = 1.0 / (4.0 * PI * PI);
    match symmetry {
        RaySymmetry::Isotropic => (vec![0.0], 2.0 * PI * norm, 1.0),
        RaySymmetry::Full => {
            let n = grid.rays.max(1);
            (
                (0..n).map(|j| 2.0 * PI * j as f64 / n as f64).collect(),
                2.0 * PI / n as f64 * norm,
                1.0,
            )
        }
        RaySymmetry::Fold { n, .. } => {
            let per = grid.rays.div_ceil(*n).max(1);
            let full = per * n;
            (
                (0..per)
                    .map(|j| 2.0 * PI * j as f64 / full as f64)
                    .collect(),
                2.0 * PI / full as f64 * norm,
                *n as f64,
            )
        }
    }
}

/// The weighted sum of the rays, in ray order.
fn sum_rays(
    rays: Vec<Result<RaySums, NumericalError>>,
    ray_weight: f64,
    n_fourier: usize,
    n_q: usize,
) -> Result<RaySums, NumericalError> {
    let mut omega_band = 0.0;
    let mut coh = vec![Complex64::new(0.0, 0.0); n_fourier];
    let mut intra = vec![[Complex64::new(0.0, 0.0); 2]; n_q];
    let mut diagonalisations = 0;
    for r in rays {
        let r = r?;
        omega_band += ray_weight * r.omega;
        for (x, y) in coh.iter_mut().zip(&r.coherence) {
            *x += *y * ray_weight;
        }
        for (x, y) in intra.iter_mut().zip(&r.intraband) {
            x[0] += y[0] * ray_weight;
            x[1] += y[1] * ray_weight;
        }
        diagonalisations += r.diagonalisations;
    }
    Ok(RaySums {
        omega: omega_band,
        coherence: coh,
        intraband: intra,
        diagonalisations,
    })
}

/// From one sector's integrals to the full circle: C_G = sum_k (sector integral at R^k G); the
/// same for the intraband components.
fn unfold_sector(sums: &mut RaySums, set: &HarmonicSet, qs: &[[f64; 2]], n: usize, perm: &[usize]) {
    let coh = &mut sums.coherence;
    let sector = coh.clone();
    for (g, x) in coh.iter_mut().enumerate() {
        let mut sum = Complex64::new(0.0, 0.0);
        let mut y = g;
        for _ in 0..n {
            sum += sector[y];
            y = perm[y];
        }
        *x = sum;
    }
    let ang = 2.0 * PI / n as f64;
    let qperm: Vec<usize> = qs
        .iter()
        .map(|q| {
            let r = rotate(*q, ang);
            qs.iter().position(|p| same(*p, r, set.tol)).unwrap_or(0)
        })
        .collect();
    let intra = &mut sums.intraband;
    let sector = intra.clone();
    for (k, x) in intra.iter_mut().enumerate() {
        let mut sum = [Complex64::new(0.0, 0.0); 2];
        let mut y = k;
        for _ in 0..n {
            sum[0] += sector[y][0];
            sum[1] += sector[y][1];
            y = qperm[y];
        }
        *x = sum;
    }
}

/// A Dirac point inside the shell of any coupling of the Fourier set is an error (the branch and
/// the spinor are undefined there), as for the single-wavevector shell.
fn check_dirac_points(
    a: &Pocket,
    b: &Pocket,
    cutoff: f64,
    set: &HarmonicSet,
) -> Result<(), NumericalError> {
    for g in &set.fourier {
        let mut points = Vec::new();
        if a.is_dirac() {
            points.push(([0.0, 0.0], [-g[0], -g[1]]));
        }
        if b.is_dirac() {
            points.push((*g, [0.0, 0.0]));
        }
        for (ka, kb) in points {
            let xi = 0.5 * (a.energy(ka) - b.energy(kb));
            if xi >= -cutoff {
                return Err(NumericalError::DiracPointInShell(format!(
                    "the shell |xi| < {cutoff} meV of the harmonic G = ({:.4}, {:.4})/nm reaches a Dirac point (xi = {xi:.4} meV there): lower the cutoff or the harmonic order",
                    g[0], g[1]
                )));
            }
        }
    }
    Ok(())
}

/// Scale of Omega for relative targets: max(|Omega|, 1e-2 sum |Delta_G|^2/g).
pub fn omega_scale(omega: f64, deltas: &[Complex64], g: f64) -> f64 {
    let quad: f64 = deltas.iter().map(|d| d.norm_sqr()).sum::<f64>() / g;
    omega.abs().max(1e-2 * quad).max(1e-300)
}

/// Convenience form of [`OmegaAt::converged`]: the structure's first harmonics `wavevectors`, order
/// `m`, and the components as (G, Delta_G) pairs (G in the Fourier set, others zero); the
/// intraband components at the differences q_i - q_j.
pub fn omega_components(
    model: &Model,
    ch: usize,
    wavevectors: &[[f64; 2]],
    components: &[([f64; 2], Complex64)],
    t: f64,
    m: usize,
    grid: &HarmonicGrid,
) -> Result<MultiOmega, NumericalError> {
    let set = HarmonicSet::new(wavevectors, m)?;
    let deltas = set.place(components)?;
    let qs = set.difference_wavevectors();
    OmegaAt::new(model, ch, &set, &deltas, t)
        .with_intraband(&qs)
        .converged(grid)
}
