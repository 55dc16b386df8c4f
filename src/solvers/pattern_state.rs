//! Self-consistent multi-wavevector states of one channel (the crate docs, [`theory::ordered`](crate::theory::ordered) and [`theory::patterns`](crate::theory::patterns)): the
//! Fourier components Delta_G of a structure (first harmonics q_j and the higher harmonics they
//! generate) that solve Delta_G = -g C_G, with C_G the coherence of
//! [`crate::kernels::harmonics`] (the derivative of the same truncated Omega, so a solution is a
//! stationary point of the Omega reported). Per spin channel; energies meV, T = k_B T in meV,
//! momenta 1/nm, Omega meV/nm^2.
//!
//! Iteration: the fixed-point map Delta -> -g C(Delta) with Anderson mixing (type II, least
//! squares over the last few steps), from equal first-harmonic amplitudes with the given relative
//! phases and higher harmonics zero. Where an n-fold rotation maps the structure (with its
//! phases) onto itself the angular integral uses one sector and the iterates are projected onto
//! the symmetric components, so the structure keeps its symmetry.
//!
//! Checks: the k grid (Omega at the solution on the doubled grid; the solve is repeated on the
//! doubled grid while the change exceeds the grid's target) and the harmonics (the state solved
//! again, or only evaluated, at order m + 1).

use crate::error::NumericalError;
use crate::kernels::harmonics::{
    omega_scale, ray_symmetry, HarmonicGrid, HarmonicSet, MultiOmega, OmegaAt, RaySymmetry,
};
use crate::model::Model;
use nalgebra::{DMatrix, DVector};
use num_complex::Complex64;
use std::collections::VecDeque;

/// How the truncation in harmonics is checked.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum HarmonicCheck {
    /// Not checked (harmonic_change reported as NaN).
    None,
    /// Omega at order m + 1 at the order-m components (higher harmonics of order m + 1 zero).
    Evaluate,
    /// The state solved again at order m + 1, from the order-m solution.
    Resolve,
}

/// Options of the self-consistent solve.
#[derive(Debug, Clone, Copy)]
pub struct PatternOptions {
    /// Harmonic truncation order m (window steps), >= 1.
    pub order: usize,
    /// The k grid of the first solve (refined when the doubling check asks for it).
    pub grid: HarmonicGrid,
    /// Stop when max_G |Delta_new - Delta| <= tol max_G |Delta|.
    pub tol: f64,
    /// Most fixed-point iterations before `NotConverged`.
    pub max_iterations: usize,
    /// Anderson memory (0: plain mixing).
    pub memory: usize,
    /// Mixing factor of the Anderson step (1: undamped).
    pub mixing: f64,
    /// How the harmonic truncation is checked at order m + 1.
    pub harmonic_check: HarmonicCheck,
}

impl Default for PatternOptions {
    fn default() -> Self {
        PatternOptions {
            order: 2,
            grid: HarmonicGrid::default(),
            tol: 1e-8,
            max_iterations: 200,
            memory: 6,
            mixing: 1.0,
            harmonic_check: HarmonicCheck::Resolve,
        }
    }
}

/// A self-consistent multi-wavevector state.
#[derive(Debug, Clone)]
pub struct PatternState {
    /// First harmonics q_j (1/nm) and their starting phases (radians).
    pub wavevectors: Vec<[f64; 2]>,
    /// Starting phases of the first harmonics, radians.
    pub phases: Vec<f64>,
    /// k_B T, meV.
    pub t: f64,
    /// Harmonic order m.
    pub order: usize,
    /// Fourier components (G in 1/nm, Delta_G in meV): first harmonics first.
    pub components: Vec<([f64; 2], Complex64)>,
    /// Omega per spin channel relative to the normal state (meV/nm^2), on the finest grid used.
    pub omega: f64,
    /// grid_change + harmonic_change (harmonic part omitted when not checked), meV/nm^2.
    pub omega_error: f64,
    /// Equivalent spin channels: totals are this times the per-channel values.
    pub spin_channels: f64,
    /// Evaluations of the fixed-point map (all grids).
    pub iterations: usize,
    /// max_G |Delta_new - Delta| at the last iteration, meV.
    pub residual: f64,
    /// |Omega(order m + 1) - Omega(order m)| on the solve grid, meV/nm^2 (NaN when not checked).
    pub harmonic_change: f64,
    /// max_G |Delta_G(m + 1) - Delta_G(m)|, meV (0 with `HarmonicCheck::Evaluate`, NaN with None).
    pub harmonic_component_change: f64,
    /// |Omega(doubled grid) - Omega(grid)| at the solution, meV/nm^2.
    pub grid_change: f64,
    /// The grid the components solve on (Omega is reported on its doubling).
    pub grid: HarmonicGrid,
    /// Coherence C_G at each first harmonic, 1/nm^2 (= -Delta_G/g at self-consistency).
    pub coherence: Vec<([f64; 2], Complex64)>,
    /// (Q, n_a(Q), n_b(Q)), Q = q_i - q_j, per nm^2 and spin channel.
    pub intraband: Vec<([f64; 2], Complex64, Complex64)>,
    /// The iteration fell to Delta = 0: the structure is not ordered here.
    pub normal: bool,
    /// Rotation fold used in the angular integral (1: full circle, 0: one ray).
    pub symmetry_fold: usize,
}

impl PatternState {
    /// max_G |Delta_G| over the first harmonics, meV.
    pub fn first_harmonic_amplitude(&self) -> f64 {
        self.components
            .iter()
            .take(self.wavevectors.len())
            .map(|(_, d)| d.norm())
            .fold(0.0, f64::max)
    }
}

fn to_real(x: &[Complex64]) -> Vec<f64> {
    x.iter().flat_map(|z| [z.re, z.im]).collect()
}

fn to_complex(x: &[f64]) -> Vec<Complex64> {
    x.chunks(2).map(|c| Complex64::new(c[0], c[1])).collect()
}

fn max_abs(x: &[Complex64]) -> f64 {
    x.iter().map(|z| z.norm()).fold(0.0, f64::max)
}

/// Anderson acceleration (type II) of x -> x + f(x).
struct Anderson {
    memory: usize,
    beta: f64,
    dx: VecDeque<Vec<f64>>,
    df: VecDeque<Vec<f64>>,
    prev: Option<(Vec<f64>, Vec<f64>)>,
}

impl Anderson {
    fn new(memory: usize, beta: f64) -> Self {
        Anderson {
            memory,
            beta,
            dx: VecDeque::new(),
            df: VecDeque::new(),
            prev: None,
        }
    }

    fn reset(&mut self) {
        self.dx.clear();
        self.df.clear();
        self.prev = None;
    }

    fn step(&mut self, x: &[f64], f: &[f64]) -> Vec<f64> {
        if let Some((xp, fp)) = self.prev.take() {
            self.dx
                .push_back(x.iter().zip(&xp).map(|(a, b)| a - b).collect());
            self.df
                .push_back(f.iter().zip(&fp).map(|(a, b)| a - b).collect());
            while self.dx.len() > self.memory {
                self.dx.pop_front();
                self.df.pop_front();
            }
        }
        self.prev = Some((x.to_vec(), f.to_vec()));
        let plain: Vec<f64> = x.iter().zip(f).map(|(a, b)| a + self.beta * b).collect();
        let m = self.dx.len();
        if m == 0 {
            return plain;
        }
        let n = x.len();
        let a = DMatrix::from_fn(n, m, |i, j| self.df[j][i]);
        let rhs = DVector::from_column_slice(f);
        let svd = a.svd(true, true);
        let smax = svd.singular_values.iter().cloned().fold(0.0, f64::max);
        let Ok(gamma) = svd.solve(&rhs, 1e-10 * smax) else {
            self.reset();
            return plain;
        };
        let mut out = plain;
        for (j, (dx, df)) in self.dx.iter().zip(&self.df).enumerate() {
            for ((o, a), b) in out.iter_mut().zip(dx).zip(df) {
                *o -= gamma[j] * (a + self.beta * b);
            }
        }
        out
    }
}

/// Replaces each component by the average over its rotation orbit.
fn project(x: &mut [Complex64], orbits: &[Vec<usize>]) {
    for o in orbits {
        if o.len() < 2 {
            continue;
        }
        let mean = o.iter().map(|&g| x[g]).sum::<Complex64>() / o.len() as f64;
        for &g in o {
            x[g] = mean;
        }
    }
}

struct Solved {
    x: Vec<Complex64>,
    eval: MultiOmega,
    iterations: usize,
    residual: f64,
    normal: bool,
}

/// The fixed-point iteration on one grid.
#[allow(clippy::too_many_arguments)]
fn iterate(
    model: &Model,
    ch: usize,
    set: &HarmonicSet,
    x0: Vec<Complex64>,
    t: f64,
    grid: &HarmonicGrid,
    sym: &RaySymmetry,
    opts: &PatternOptions,
    amplitude_scale: f64,
) -> Result<Solved, NumericalError> {
    let g = model.channels()[ch].g();
    let orbits = sym.orbits(set.fourier.len());
    let mut acc = Anderson::new(opts.memory, opts.mixing);
    let mut x = x0;
    project(&mut x, &orbits);
    let mut best: Option<(f64, Vec<Complex64>)> = None;
    let mut last = f64::NAN;
    let floor = 1e-7 * amplitude_scale;
    for it in 1..=opts.max_iterations {
        let eval = OmegaAt::new(model, ch, set, &x, t).on_grid(grid, sym)?;
        let mut y: Vec<Complex64> = eval.coherence.iter().map(|c| -*c * g).collect();
        project(&mut y, &orbits);
        let f: Vec<Complex64> = y.iter().zip(&x).map(|(a, b)| a - b).collect();
        let res = max_abs(&f);
        last = res;
        let size = max_abs(&x);
        if res <= opts.tol * size.max(floor) || (size < floor && max_abs(&y) < floor) {
            // A solution below 1e-5 of the starting amplitude is the normal state: its Omega is
            // too small to be resolved against the grid error.
            return Ok(Solved {
                normal: size < 1e2 * floor,
                x,
                eval,
                iterations: it,
                residual: res,
            });
        }
        match &best {
            Some((b, bx)) if res > 5.0 * b => {
                // The accelerated step went astray: restart from the best point, undamped map.
                acc.reset();
                let bx = bx.clone();
                x = bx;
                continue;
            }
            Some((b, _)) if res >= *b => {}
            _ => best = Some((res, x.clone())),
        }
        let mut next = to_complex(&acc.step(&to_real(&x), &to_real(&f)));
        // Delta = 0 is always a fixed point: an extrapolated step may not fall towards it faster
        // than by half per step (the plain map is taken instead, itself limited to halving), so
        // that a state is called normal only after the map itself has shrunk it.
        let s_next = max_abs(&next);
        if s_next < 0.5 * size {
            acc.reset();
            next = y.clone();
            let sy = max_abs(&next);
            if sy < 0.5 * size && sy > 0.0 {
                let k = 0.5 * size / sy;
                next.iter_mut().for_each(|z| *z *= k);
            }
        }
        x = next;
        project(&mut x, &orbits);
    }
    Err(NumericalError::NotConverged {
        what: "multi-wavevector gap equation (fixed-point iteration)".into(),
        iterations: opts.max_iterations,
        last_change: last,
        target: opts.tol,
    })
}

/// The self-consistent state of channel `ch` with first harmonics `wavevectors` (1/nm) and
/// starting phases `phases` (radians), at k_B T = `t` (meV), from first-harmonic amplitude
/// `start_amplitude` (meV). See the module documentation for the checks; a solve that does not
/// converge, or a grid that does not reach its target within `grid.max_doublings` refinements,
/// is a `NotConverged` error. A state that falls to zero is returned with `normal = true`.
pub fn solve_structure(
    model: &Model,
    ch: usize,
    wavevectors: &[[f64; 2]],
    phases: &[f64],
    t: f64,
    start_amplitude: f64,
    opts: &PatternOptions,
) -> Result<PatternState, NumericalError> {
    let c = model.channels().get(ch).ok_or_else(|| {
        NumericalError::BadArgument(format!("channel index {ch} is out of range"))
    })?;
    check_start(wavevectors, phases, start_amplitude)?;
    let set = HarmonicSet::new(wavevectors, opts.order)?;
    let start: Vec<([f64; 2], Complex64)> = wavevectors
        .iter()
        .zip(phases)
        .map(|(q, p)| (*q, Complex64::from_polar(start_amplitude, *p)))
        .collect();
    let x0 = set.place(&start)?;
    let sym = ray_symmetry(model, ch, &set, &x0);
    let solve = StructureSolve {
        model,
        ch,
        t,
        opts,
        start_amplitude,
    };
    let solved = solve.iterate(&set, x0, &opts.grid, &sym)?;
    let GridConverged {
        solved,
        fine,
        grid_change,
        grid,
        mut iterations,
    } = solve.converge_grid(&set, &sym, solved, wavevectors.len(), c.g())?;
    // Harmonics: order m + 1 on the solve grid.
    let (harmonic_change, harmonic_component_change) = match opts.harmonic_check {
        HarmonicCheck::None => (f64::NAN, f64::NAN),
        _ if solved.normal => (0.0, 0.0),
        check => {
            let (omega_change, dmax, its) =
                solve.harmonic_change(&set, wavevectors, &solved, &grid, check)?;
            iterations += its;
            (omega_change, dmax)
        }
    };
    let omega_error = grid_change
        + if harmonic_change.is_nan() {
            0.0
        } else {
            harmonic_change
        };
    let n1 = wavevectors.len();
    Ok(PatternState {
        wavevectors: wavevectors.to_vec(),
        phases: phases.to_vec(),
        t,
        order: opts.order,
        components: on_fourier(&set, &solved.x),
        omega: fine.omega,
        omega_error,
        spin_channels: c.spin_channels(),
        iterations,
        residual: solved.residual,
        harmonic_change,
        harmonic_component_change,
        grid_change,
        grid,
        coherence: on_fourier(&set, &fine.coherence)[..n1].to_vec(),
        intraband: fine.intraband,
        normal: solved.normal,
        symmetry_fold: sym.fold(),
    })
}

/// The values `x` paired with the vectors G (1/nm) of the Fourier set.
fn on_fourier(set: &HarmonicSet, x: &[Complex64]) -> Vec<([f64; 2], Complex64)> {
    set.fourier.iter().copied().zip(x.iter().copied()).collect()
}

/// One phase (radians) per wavevector and a positive starting amplitude (meV).
fn check_start(
    wavevectors: &[[f64; 2]],
    phases: &[f64],
    start_amplitude: f64,
) -> Result<(), NumericalError> {
    if phases.len() != wavevectors.len() {
        return Err(NumericalError::BadArgument(format!(
            "{} phases given for {} wavevectors",
            phases.len(),
            wavevectors.len()
        )));
    }
    if !start_amplitude.is_finite() || start_amplitude <= 0.0 {
        return Err(NumericalError::BadArgument(format!(
            "the starting amplitude must be positive (got {start_amplitude} meV)"
        )));
    }
    Ok(())
}

/// One structure's solve: the channel, the temperature (meV), the options and the starting
/// amplitude (meV), shared by the grid refinement and the harmonic check.
struct StructureSolve<'a> {
    model: &'a Model,
    ch: usize,
    t: f64,
    opts: &'a PatternOptions,
    start_amplitude: f64,
}

/// The state on the grid that reached its target: the solution, its evaluation on the doubled
/// grid, the change between them, the grid and the iterations spent.
struct GridConverged {
    solved: Solved,
    fine: MultiOmega,
    grid_change: f64,
    grid: HarmonicGrid,
    iterations: usize,
}

impl StructureSolve<'_> {
    /// The fixed-point iteration on `set` from x0 on `grid`.
    fn iterate(
        &self,
        set: &HarmonicSet,
        x0: Vec<Complex64>,
        grid: &HarmonicGrid,
        sym: &RaySymmetry,
    ) -> Result<Solved, NumericalError> {
        iterate(
            self.model,
            self.ch,
            set,
            x0,
            self.t,
            grid,
            sym,
            self.opts,
            self.start_amplitude,
        )
    }

    /// Evaluates `solved` on the doubled grid and solves again on finer grids until the change is
    /// within the grid's target (`n1` first harmonics, coupling g in meV nm^2).
    fn converge_grid(
        &self,
        set: &HarmonicSet,
        sym: &RaySymmetry,
        mut solved: Solved,
        n1: usize,
        g: f64,
    ) -> Result<GridConverged, NumericalError> {
        let (model, ch, t) = (self.model, self.ch, self.t);
        let qs = set.difference_wavevectors();
        let mut grid = self.opts.grid;
        let mut iterations = solved.iterations;
        let mut refinements = 0;
        loop {
            let fine = OmegaAt::new(model, ch, set, &solved.x, t)
                .with_intraband(&qs)
                .on_grid(&grid.doubled(), sym)?;
            let change = (fine.omega - solved.eval.omega).abs();
            // Relative to Omega, with a floor at the scale of the starting state (a solution that
            // fell far below it is judged against that scale, not against its own tiny Omega).
            let start_scale = 1e-2 * n1 as f64 * self.start_amplitude * self.start_amplitude / g;
            let target = grid.rtol * omega_scale(fine.omega, &solved.x, g).max(start_scale);
            if change <= target {
                return Ok(GridConverged {
                    solved,
                    fine,
                    grid_change: change,
                    grid,
                    iterations,
                });
            }
            if refinements >= grid.max_doublings {
                return Err(NumericalError::NotConverged {
                    what: "multi-wavevector state over the k grid".into(),
                    iterations: refinements + 1,
                    last_change: change,
                    target,
                });
            }
            refinements += 1;
            grid = grid.doubled();
            let x = solved.x.clone();
            solved = self.iterate(set, x, &grid, sym)?;
            iterations += solved.iterations;
        }
    }

    /// The change of Omega (and the largest change of a component, meV, when re-solved) at
    /// harmonic order m + 1 on `grid`, with the iterations spent.
    fn harmonic_change(
        &self,
        set: &HarmonicSet,
        wavevectors: &[[f64; 2]],
        solved: &Solved,
        grid: &HarmonicGrid,
        check: HarmonicCheck,
    ) -> Result<(f64, f64, usize), NumericalError> {
        let (model, ch, t) = (self.model, self.ch, self.t);
        let up = HarmonicSet::new(wavevectors, self.opts.order + 1)?;
        if up.window_sizes() == set.window_sizes() && up.fourier.len() == set.fourier.len() {
            // The windows closed (one wavevector): order m + 1 is the same problem.
            return Ok((0.0, 0.0, 0));
        }
        let x_up = up.place(&on_fourier(set, &solved.x))?;
        let sym_up = ray_symmetry(model, ch, &up, &x_up);
        if check == HarmonicCheck::Evaluate {
            let e = OmegaAt::new(model, ch, &up, &x_up, t)
                .omega_only()
                .on_grid(grid, &sym_up)?;
            return Ok(((e.omega - solved.eval.omega).abs(), 0.0, 0));
        }
        let s = self.iterate(&up, x_up.clone(), grid, &sym_up)?;
        let dmax =
            s.x.iter()
                .zip(&x_up)
                .map(|(a, b)| (a - b).norm())
                .fold(0.0, f64::max);
        Ok(((s.eval.omega - solved.eval.omega).abs(), dmax, s.iterations))
    }
}

/// Omega per spin channel (meV/nm^2) and its error estimate at equal first-harmonic amplitudes
/// `amplitude` (meV) with phases `phases` (radians), higher harmonics zero, order `m`: no
/// self-consistency. For comparing the small-amplitude expansion with the Landau coefficients.
/// The value is from the finest grid of [`OmegaAt::converged`], the error its last grid change.
#[allow(clippy::too_many_arguments)]
pub fn omega_at_amplitude(
    model: &Model,
    ch: usize,
    wavevectors: &[[f64; 2]],
    phases: &[f64],
    amplitude: f64,
    t: f64,
    m: usize,
    grid: &HarmonicGrid,
) -> Result<(f64, f64), NumericalError> {
    if phases.len() != wavevectors.len() {
        return Err(NumericalError::BadArgument(format!(
            "{} phases given for {} wavevectors",
            phases.len(),
            wavevectors.len()
        )));
    }
    let set = HarmonicSet::new(wavevectors, m)?;
    let comps: Vec<([f64; 2], Complex64)> = wavevectors
        .iter()
        .zip(phases)
        .map(|(q, p)| (*q, Complex64::from_polar(amplitude, *p)))
        .collect();
    let x = set.place(&comps)?;
    let e = OmegaAt::new(model, ch, &set, &x, t)
        .omega_only()
        .converged(grid)?;
    Ok((e.omega, e.error.unwrap_or(f64::NAN)))
}
