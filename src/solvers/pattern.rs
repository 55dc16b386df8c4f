//! Which modulated pattern forms (physics.md section 5): the point on the modulated instability
//! line at a temperature, reached by varying one parameter; the symmetry-equivalent maxima of
//! chi(q) there; and the ranking of multi-wavevector structures by their quartic Landau
//! coefficient F4/(n^2 |Delta|^4) at equal quadratic term, with the best relative phases.
//!
//! Near the line Omega = alpha n |Delta|^2 + F4 with alpha = 1/g - chi(q*, T) shared by every
//! wavevector of a structure built from symmetry-equivalent maxima; at fixed <|Delta(r)|^2> =
//! n |Delta|^2 the lowest Omega belongs to the smallest positive F4/(n^2 |Delta|^4). A negative
//! coefficient means the transition into that structure is first order and the expansion must be
//! carried to higher orders.

use crate::config::{ConfigSource, Override};
use crate::error::{InputError, NestorError, NumericalError};
use crate::kernels::quartic::structure_loops;
use crate::kernels::{Accuracy, Shell};
use crate::model::structure::Structure;
use crate::model::{Channel, Model, Param};
use crate::solvers::optimize::brent_max;
use crate::solvers::relative_phases::best_phases;
use crate::solvers::roots::brent_root;
use crate::solvers::tc::{nested_tc, TcSolver};
use std::f64::consts::PI;

/// The point of the modulated instability line at temperature t.
#[derive(Debug, Clone, serde::Serialize)]
pub struct LinePoint {
    /// The varied parameter, NAME.key.
    pub path: String,
    /// Its value on the line.
    pub value: f64,
    /// Its value in the configuration as given.
    pub base_value: f64,
    /// k_B T, meV.
    pub t: f64,
    /// The channel's mismatch h there, meV.
    pub mismatch: f64,
    /// |q*|, 1/nm (0: the instability at this temperature is uniform).
    pub q_star: f64,
    /// The symmetry-equivalent maxima of chi(q, T) at |q*| (1/nm); every direction is one for an
    /// isotropic channel, represented by the first.
    pub maxima: Vec<[f64; 2]>,
    /// Whether chi depends on the direction of q.
    pub isotropic: bool,
}

/// Settings of the pattern searches.
#[derive(Debug, Clone, Copy)]
pub struct PatternSolver {
    pub tc: TcSolver,
    /// Accuracy of the four-insertion loops.
    pub loop_acc: Accuracy,
    /// Relative tolerance of the line-point root.
    pub value_rel: f64,
    /// Directions sampled (over 360 degrees) when looking for the maxima of chi at |q*|.
    pub directions: usize,
    /// Two maxima are symmetry images when their chi agree to this relative tolerance.
    pub maxima_rel: f64,
}

impl Default for PatternSolver {
    fn default() -> Self {
        PatternSolver {
            tc: TcSolver::default(),
            loop_acc: Accuracy {
                rtol: 1e-6,
                ..Accuracy::default()
            },
            value_rel: 1e-10,
            directions: 72,
            maxima_rel: 1e-6,
        }
    }
}

/// The model `base` with `param` set to `value`, couplings pinned at `base` (unless `param` is
/// the channel's coupling itself).
pub fn model_with(base: &Model, param: Param, value: f64) -> Result<Model, InputError> {
    base.with(&[(param, value)])
}

/// Resolves `path` (NAME.key, NAME.key.x) against the model built from `src`: the typed
/// parameter and its value there (the start of the line search).
pub fn path_value(
    src: &ConfigSource,
    base: &Model,
    path: &str,
) -> Result<(Param, f64), InputError> {
    let param = Override::parse(&format!("{path}=0"))?.resolve(&src.origin, base)?;
    Ok((param, base.value(param)))
}

/// Steps outwards from `v0` on both sides (`step`, up to `max_steps` steps) until the sign of
/// `margin` changes: the bracket, or None. A value where the model cannot be built (an input
/// error: no line beyond it on that side) ends that side; a numerical failure is returned.
fn bracket_outwards<F>(
    margin: &F,
    v0: f64,
    step: f64,
    max_steps: usize,
) -> Result<Option<(f64, f64)>, NestorError>
where
    F: Fn(f64) -> Result<f64, NestorError>,
{
    let f0 = margin(v0)?;
    if f0 == 0.0 {
        return Ok(Some((v0, v0)));
    }
    // The last value and margin on each side (None once a side cannot be built).
    let mut last: [Option<(f64, f64)>; 2] = [Some((v0, f0)), Some((v0, f0))];
    for k in 1..=max_steps {
        for (i, side) in [1.0, -1.0].into_iter().enumerate() {
            let Some((prev, fp)) = last[i] else {
                continue;
            };
            let v = v0 + side * step * k as f64;
            let fv = match margin(v) {
                Ok(fv) => fv,
                Err(NestorError::Input(_)) => {
                    last[i] = None;
                    continue;
                }
                Err(e) => return Err(e),
            };
            if (fp > 0.0) != (fv > 0.0) {
                return Ok(Some((prev, v)));
            }
            last[i] = Some((v, fv));
        }
    }
    Ok(None)
}

impl PatternSolver {
    /// The point on the modulated instability line at temperature t (meV) reached by varying
    /// `path` from its value in `base`: the nearest value where max_q g chi(q, t) = 1, found by
    /// stepping outwards from the base value on both sides until the sign changes and refining
    /// with Brent's method. Returns the line point and the model there.
    pub fn line_point(
        &self,
        base: &ConfigSource,
        channel: usize,
        path: &str,
        t: f64,
    ) -> Result<(LinePoint, Model), NestorError> {
        let model0 = base.build(None)?;
        let ch0 = model0.channels().get(channel).ok_or_else(|| {
            NumericalError::BadArgument(format!("channel index {channel} out of range"))
        })?;
        let (param, v0) = path_value(base, &model0, path)?;
        let energy_like = path.ends_with(".offset");
        let tc_scale = nested_tc(ch0).unwrap_or(t).max(t);
        let step = if energy_like {
            0.5 * tc_scale
        } else {
            0.02 * v0.abs().max(1e-2)
        };
        let at = |v: f64| {
            model_with(&model0, param, v)
                .map_err(|e| InputError::new(format!("{}: {e}", base.origin)))
        };
        let margin = |v: f64| -> Result<f64, NestorError> {
            let m = at(v)?;
            let (_, gchi) = self.tc.max_over_q(&m, &m.channels()[channel], t)?;
            Ok(gchi - 1.0)
        };
        const MAX_STEPS: usize = 60;
        let (lo, hi) = bracket_outwards(&margin, v0, step, MAX_STEPS)?.ok_or_else(|| {
            NumericalError::NotBracketed {
                what: format!(
                    "modulated instability line at T = {t:.5} meV along {path} (max_q g chi = 1)"
                ),
                lo: v0 - step * MAX_STEPS as f64,
                hi: v0 + step * MAX_STEPS as f64,
            }
        })?;
        let value = if lo == hi {
            lo
        } else {
            let what = "modulated instability line";
            let r = brent_root(what, lo, hi, self.value_rel, |v| match margin(v) {
                Ok(x) => Ok(x),
                Err(NestorError::Numerical(n)) => Err(n),
                Err(NestorError::Input(reason)) => Err(NumericalError::Stopped {
                    what: what.to_string(),
                    at: v,
                    reason,
                }),
            });
            match r {
                Ok(r) => r.x,
                // An input error inside the bracket stays an input error.
                Err(NumericalError::Stopped { reason, .. }) => return Err(reason.into()),
                Err(e) => return Err(e.into()),
            }
        };
        let model = at(value)?;
        let (q, _) = self.tc.max_over_q(&model, &model.channels()[channel], t)?;
        let line = self.line_point_at(&model, channel, path, value, v0, t, q)?;
        Ok((line, model))
    }

    /// The line point of `model` (already on the line at temperature t, with the most unstable
    /// wavevector q): the channel's mismatch and the symmetry-equivalent maxima of chi.
    #[allow(clippy::too_many_arguments)]
    pub fn line_point_at(
        &self,
        model: &Model,
        channel: usize,
        path: &str,
        value: f64,
        base_value: f64,
        t: f64,
        q: [f64; 2],
    ) -> Result<LinePoint, NumericalError> {
        let ch = &model.channels()[channel];
        let q_star = q[0].hypot(q[1]);
        let isotropic = Shell::for_channel(model, ch, [0.0, 0.0])?.isotropic;
        let maxima = if q_star == 0.0 {
            vec![]
        } else if isotropic {
            vec![q]
        } else {
            self.maxima(model, ch, q, t)?
        };
        Ok(LinePoint {
            path: path.to_string(),
            value,
            base_value,
            t,
            mismatch: ch.mismatch(),
            q_star,
            maxima,
            isotropic,
        })
    }

    /// The symmetry-equivalent maxima of chi over the direction of q at |q| = |q_best|: every
    /// local maximum of a scan over 360 degrees, refined by Brent's method, whose chi equals the
    /// global maximum to `maxima_rel`. The first is `q_best`'s.
    pub fn maxima(
        &self,
        model: &Model,
        ch: &Channel,
        q_best: [f64; 2],
        t: f64,
    ) -> Result<Vec<[f64; 2]>, NumericalError> {
        let qm = q_best[0].hypot(q_best[1]);
        let th0 = q_best[1].atan2(q_best[0]);
        let n = self.directions.max(8);
        let acc = self.tc.acc;
        let chi = |th: f64| {
            self.tc
                .g_chi(model, ch, [qm * th.cos(), qm * th.sin()], t, &acc)
        };
        let dth = 2.0 * PI / n as f64;
        let vals: Vec<f64> = (0..n)
            .map(|i| chi(th0 + dth * i as f64))
            .collect::<Result<_, _>>()?;
        let mut found: Vec<(f64, f64)> = Vec::new();
        for i in 0..n {
            let (l, c, r) = (vals[(i + n - 1) % n], vals[i], vals[(i + 1) % n]);
            if c >= l && c >= r {
                let th = th0 + dth * i as f64;
                let m = if i == 0 {
                    // q_best is already a refined maximum.
                    crate::solvers::optimize::Maximum {
                        x: th,
                        value: c,
                        iterations: 0,
                    }
                } else {
                    brent_max(
                        "maximum of chi over the direction of q",
                        th - dth,
                        th + dth,
                        1e-7,
                        chi,
                    )?
                };
                found.push((m.x, m.value));
            }
        }
        let top = found.iter().map(|f| f.1).fold(f64::NEG_INFINITY, f64::max);
        let tol = self.maxima_rel * top.abs();
        let mut out: Vec<[f64; 2]> = Vec::new();
        for (th, v) in found {
            if v >= top - tol {
                let q = [qm * th.cos(), qm * th.sin()];
                let dup = out
                    .iter()
                    .any(|p| (p[0] - q[0]).hypot(p[1] - q[1]) < 1e-4 * qm);
                if !dup {
                    out.push(q);
                }
            }
        }
        if out.is_empty() {
            out.push(q_best);
        }
        Ok(out)
    }

    /// The structures to rank at a line point: the named ones built on the first maximum, the
    /// set of all symmetry-equivalent maxima when it is none of them, and `extra` (user lists).
    pub fn candidate_structures(line: &LinePoint, extra: &[Structure]) -> Vec<Structure> {
        let Some(&q1) = line.maxima.first() else {
            return extra.to_vec();
        };
        let mut out = Structure::all_named(q1);
        if !line.isotropic && line.maxima.len() > 2 {
            let all = Structure {
                name: "maxima".into(),
                wavevectors: line.maxima.clone(),
            };
            let same_as = |s: &Structure| {
                s.len() == all.len()
                    && all.wavevectors.iter().all(|q| {
                        s.wavevectors
                            .iter()
                            .any(|p| (p[0] - q[0]).hypot(p[1] - q[1]) < 1e-6 * line.q_star)
                    })
            };
            if !out.iter().any(same_as) {
                out.push(all);
            }
        }
        out.extend(extra.iter().cloned());
        out
    }

    /// Ranks `structures` at temperature t (meV) on the line of `model`.
    pub fn rank(
        &self,
        model: &Model,
        channel: usize,
        line: &LinePoint,
        structures: &[Structure],
    ) -> Result<Vec<RankedStructure>, NumericalError> {
        let ch = &model.channels()[channel];
        let t = line.t;
        let acc = self.tc.acc;
        let alpha_at = |q: [f64; 2]| -> Result<f64, NumericalError> {
            Ok((1.0 - self.tc.g_chi(model, ch, q, t, &acc)?) / ch.g())
        };
        let on_maxima = |q: &[f64; 2]| {
            if line.isotropic {
                (q[0].hypot(q[1]) - line.q_star).abs() <= 1e-9 * line.q_star
            } else {
                line.maxima
                    .iter()
                    .any(|p| (p[0] - q[0]).hypot(p[1] - q[1]) <= 1e-6 * line.q_star)
            }
        };
        let mut out = Vec::with_capacity(structures.len());
        for s in structures {
            if s.is_empty() {
                return Err(NumericalError::BadArgument(format!(
                    "structure {} has no wavevectors",
                    s.name
                )));
            }
            let alpha = s
                .wavevectors
                .iter()
                .map(|&q| alpha_at(q))
                .collect::<Result<Vec<_>, _>>()?;
            let on_line = s.wavevectors.iter().all(on_maxima);
            let loops = structure_loops(model, ch, s, t, &self.loop_acc)?;
            let quads: Vec<[usize; 4]> = loops.iter().map(|l| l.0).collect();
            let values: Vec<f64> = loops.iter().map(|l| l.1.value.re).collect();
            let imag: f64 = loops.iter().map(|l| l.1.value.im.abs()).sum();
            let error: f64 = loops.iter().map(|l| l.1.error).sum();
            let n = s.len() as f64;
            let choice = best_phases(s.len(), &quads, &values);
            out.push(RankedStructure {
                name: s.name.clone(),
                wavevectors: s.wavevectors.clone(),
                alpha,
                on_line,
                quartic: choice.quartic / (n * n),
                quartic_error: (error + imag) / (n * n),
                phases: choice.phases.clone(),
                phases_matter: !choice.free,
                first_order: choice.quartic < 0.0,
                preferred: false,
            });
        }
        // The smallest positive coefficient among the structures on the line wins.
        if let Some(best) = out
            .iter()
            .enumerate()
            .filter(|(_, r)| r.on_line && r.quartic > 0.0)
            .min_by(|a, b| a.1.quartic.total_cmp(&b.1.quartic))
            .map(|(i, _)| i)
        {
            out[best].preferred = true;
        }
        Ok(out)
    }
}

/// One structure's place in the ranking.
#[derive(Debug, Clone, serde::Serialize)]
pub struct RankedStructure {
    pub name: String,
    /// 1/nm.
    pub wavevectors: Vec<[f64; 2]>,
    /// Quadratic coefficient 1/g - chi(q_j, T) of each wavevector, 1/(meV nm^2) per spin
    /// channel (zero on the line up to the root tolerance).
    pub alpha: Vec<f64>,
    /// All wavevectors are symmetry-equivalent maxima of chi: one shared quadratic term, so the
    /// structure takes part in the ranking.
    pub on_line: bool,
    /// F4/(n^2 |Delta|^4) with the best relative phases, meV^-3 nm^-2 per spin channel (the plane
    /// wave's is beta/2).
    pub quartic: f64,
    pub quartic_error: f64,
    /// Best relative phases of the components, radians (the first is 0).
    pub phases: Vec<f64>,
    /// Whether the quartic coefficient depends on the relative phases at all.
    pub phases_matter: bool,
    /// F4 < 0: a first-order transition into this structure; higher orders are needed.
    pub first_order: bool,
    /// The smallest positive coefficient among the structures on the line.
    pub preferred: bool,
}

/// One candidate state at the configuration as given.
#[derive(Debug, Clone)]
pub struct StateCandidate {
    /// "normal", "uniform", or a structure's name ("plane" is the single-wavevector state).
    pub name: String,
    /// Omega relative to the normal state, total over spin channels, meV/nm^2.
    pub omega: f64,
    pub omega_error: f64,
    /// Fourier components (G in 1/nm, Delta_G in meV) of Delta(r); the first harmonics first.
    pub components: Vec<([f64; 2], num_complex::Complex64)>,
    /// Number of first harmonics among `components`.
    pub first_harmonics: usize,
    /// Intraband density components at q_i - q_j, total over pockets and spin channels, per nm^2.
    pub intraband: Vec<([f64; 2], num_complex::Complex64)>,
    /// Convergence and provenance notes.
    pub notes: Vec<String>,
}

/// One density wave a scanning probe would see.
#[derive(Debug, Clone, serde::Serialize)]
pub struct DensityWave {
    /// "charge" or "spin x" / "spin y" / "spin z".
    pub kind: &'static str,
    /// 1: interband coherence at K_a - K_b + q_j; 2: intraband at q_i - q_j.
    pub order: u8,
    /// 1/nm, folded into the first zone when a [surface] lattice is given.
    pub wavevector_per_nm: [f64; 2],
    pub folded_into_first_zone: bool,
    /// 2 pi / |P| (None for P = 0).
    pub period_nm: Option<f64>,
    /// Amplitude of the cosine, per nm^2.
    pub amplitude_per_nm2: f64,
    /// Phase of the cosine, radians.
    pub phase: f64,
}

/// The density waves of a state (physics.md section 6): at P_j = K_a - K_b + q_j with amplitude
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

/// The density modulation sum_w A_w cos(P_w.r + phase_w) of `waves` of one kind (per nm^2) on an
/// n x n grid over [-fov/2, fov/2]^2 (nm), row-major with y outer. Waves at P = 0 (a uniform
/// interband coherence, no modulation) are left out.
pub fn density_map(waves: &[DensityWave], kind: &str, fov: f64, n: usize) -> Vec<f64> {
    let mut out = vec![0.0; n * n];
    for iy in 0..n {
        let y = -0.5 * fov + fov * (iy as f64 + 0.5) / n as f64;
        for ix in 0..n {
            let x = -0.5 * fov + fov * (ix as f64 + 0.5) / n as f64;
            out[iy * n + ix] = waves
                .iter()
                .filter(|w| w.kind == kind && w.period_nm.is_some())
                .map(|w| {
                    w.amplitude_per_nm2
                        * (w.wavevector_per_nm[0] * x + w.wavevector_per_nm[1] * y + w.phase).cos()
                })
                .sum();
        }
    }
    out
}

/// |Delta(r)|^2 of a state's components on the same grid as [`density_map`] (meV^2).
pub fn gap_map(state: &StateCandidate, fov: f64, n: usize) -> Vec<f64> {
    let mut out = vec![0.0; n * n];
    for iy in 0..n {
        let y = -0.5 * fov + fov * (iy as f64 + 0.5) / n as f64;
        for ix in 0..n {
            let x = -0.5 * fov + fov * (ix as f64 + 0.5) / n as f64;
            let d: num_complex::Complex64 = state
                .components
                .iter()
                .map(|(g, d)| d * num_complex::Complex64::from_polar(1.0, g[0] * x + g[1] * y))
                .sum();
            out[iy * n + ix] = d.norm_sqr();
        }
    }
    out
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

/// The normal, uniform and plane-wave candidates at temperature t from the single-wavevector
/// solver (the lowest minimum of each kind), with Omega as a total over spin channels.
pub fn single_wavevector_candidates(
    model: &Model,
    channel: usize,
    t: f64,
    solver: &crate::solvers::ordered::OrderedSolver,
) -> Result<Vec<StateCandidate>, NumericalError> {
    use crate::solvers::ordered::{plane_wave_q_scale, StateKind};
    let ch = &model.channels()[channel];
    let ns = ch.spin_channels();
    let qs = plane_wave_q_scale(model, ch, t);
    let states = solver.solve(model, ch, t, Some(qs))?;
    let mut out = vec![StateCandidate {
        name: "normal".into(),
        omega: 0.0,
        omega_error: 0.0,
        components: vec![],
        first_harmonics: 0,
        intraband: vec![],
        notes: vec![],
    }];
    for (kind, name) in [
        (StateKind::Uniform, "uniform"),
        (StateKind::Modulated, "plane"),
    ] {
        if let Some(s) = states
            .solutions
            .iter()
            .filter(|s| s.state == kind && s.minimum)
            .min_by(|a, b| a.omega.total_cmp(&b.omega))
        {
            out.push(StateCandidate {
                name: name.into(),
                omega: ns * s.omega,
                omega_error: ns * s.omega_error,
                components: vec![(s.q, num_complex::Complex64::new(s.delta, 0.0))],
                first_harmonics: 1,
                intraband: vec![],
                notes: vec![],
            });
        }
    }
    Ok(out)
}

/// Index of the lowest Omega.
pub fn lowest(candidates: &[StateCandidate]) -> usize {
    candidates
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.omega.total_cmp(&b.1.omega))
        .map(|(i, _)| i)
        .unwrap_or(0)
}

/// The multi-wavevector candidates at the configuration as given: the nonlinear states
/// ([`crate::solvers::pattern_state`]) of the preferred structure and the stripe, or with `every`
/// of every ranked structure on the line with several wavevectors; the preferred one first. Their wavevectors have the length of
/// the plane-wave state's |q| at this configuration when there is one (else the line's |q*|); the
/// start is the plane-wave gap shared over the components. The harmonic truncation is checked by
/// solving again one order higher for two wavevectors, and by evaluating one order higher for more
/// (a re-solve is too slow there); both changes are reported in the notes and in the error.
pub fn structure_candidates(
    model: &Model,
    channel: usize,
    t: f64,
    ranking: &[RankedStructure],
    single: &[StateCandidate],
    every: bool,
) -> Result<Vec<StateCandidate>, NumericalError> {
    use crate::solvers::pattern_state::{solve_structure, HarmonicCheck, PatternOptions};
    let ch = &model.channels()[channel];
    let ns = ch.spin_channels();
    let plane = single.iter().find(|c| c.name == "plane");
    let q_len = plane
        .and_then(|p| p.components.first())
        .map(|(q, _)| q[0].hypot(q[1]));
    let start = plane
        .and_then(|p| p.components.first())
        .map(|(_, d)| d.norm())
        .unwrap_or(t);
    let mut picks: Vec<&RankedStructure> = ranking
        .iter()
        .filter(|r| {
            r.on_line && r.wavevectors.len() >= 2 && (every || r.preferred || r.name == "stripe")
        })
        .collect();
    picks.sort_by_key(|r| !r.preferred);
    let mut out = Vec::new();
    for r in picks {
        let n = r.wavevectors.len();
        let scale = match q_len {
            Some(l) if l > 0.0 => {
                let l0 = r.wavevectors[0][0].hypot(r.wavevectors[0][1]);
                l / l0
            }
            _ => 1.0,
        };
        let qs: Vec<[f64; 2]> = r
            .wavevectors
            .iter()
            .map(|q| [q[0] * scale, q[1] * scale])
            .collect();
        let opts = PatternOptions {
            // Two wavevectors: order 3 (the harmonic change is 0.3% there against 3% at order 2).
            order: if n <= 2 { 3 } else { 2 },
            harmonic_check: if n <= 2 {
                HarmonicCheck::Resolve
            } else {
                HarmonicCheck::Evaluate
            },
            ..PatternOptions::default()
        };
        // Delta = 0 is always a solution and attracts the iteration from below near the line,
        // and more than one ordered solution of the structure's symmetry can exist, so the
        // iteration runs from three starts shared over the components: the T = 0 uniform gap of
        // a constant pair density of states, cutoff/sinh(1/lambda) (from above), 1.5 times and
        // once the plane-wave gap. The lowest Omega among the ordered solutions is kept.
        let mut best: Option<crate::solvers::pattern_state::PatternState> = None;
        let mut failure = None;
        let above = ch.cutoff() / (1.0 / ch.lambda().max(1e-3)).sinh();
        for a in [above.max(1.5 * start), 1.5 * start, start].map(|a| a / (n as f64).sqrt()) {
            match solve_structure(model, channel, &qs, &r.phases, t, a, &opts) {
                Ok(st) if !st.normal => {
                    if best.as_ref().is_none_or(|b| st.omega < b.omega) {
                        best = Some(st);
                    }
                }
                Ok(_) => {}
                Err(e) => failure = Some(e),
            }
        }
        let st = match (best, failure) {
            (Some(b), _) => b,
            (None, Some(e)) => return Err(e),
            (None, None) => continue,
        };
        let mut notes = vec![format!(
            "m = {}: Omega(m+1) - Omega(m) = {:.1e} ({}), grid {:.1e}",
            st.order,
            st.harmonic_change * ns,
            if n <= 2 { "re-solved" } else { "evaluated" },
            st.grid_change * ns
        )];
        if st.harmonic_change.is_finite() && st.harmonic_change > 0.1 * st.omega.abs() {
            notes.push("not converged in harmonics: compare with care".into());
        }
        if (scale - 1.0).abs() > 0.0 {
            notes.push("|q| from the plane wave".into());
        }
        out.push(StateCandidate {
            name: r.name.clone(),
            omega: ns * st.omega,
            omega_error: ns * st.omega_error,
            components: st.components.clone(),
            first_harmonics: n,
            intraband: st
                .intraband
                .iter()
                .map(|(q, na, nb)| (*q, (na + nb) * ns))
                .collect(),
            notes,
        });
    }
    Ok(out)
}
