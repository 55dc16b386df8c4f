//! Which modulated pattern forms (see the crate docs (`crate::theory`)): the point on the modulated instability
//! line at a temperature, reached by varying one parameter; the symmetry-equivalent maxima of
//! chi(q) there; and the ranking of multi-wavevector structures by their quartic Landau
//! coefficient F4/(n^2 |Delta|^4) at equal quadratic term, with the best relative phases.
//!
//! Near the line Omega = alpha n |Delta|^2 + F4 with alpha = 1/g - chi(q*, T) shared by every
//! wavevector of a structure built from symmetry-equivalent maxima; at fixed <|Delta(r)|^2> =
//! n |Delta|^2 the lowest Omega belongs to the smallest positive F4/(n^2 |Delta|^4). A negative
//! coefficient means the transition into that structure is first order and the expansion must be
//! carried to higher orders.

//!
//! Files: `line` (the line point and the model along the varied parameter), `candidates` (the
//! candidate states at the configuration as given); the observables of a state (density waves
//! and maps) are in [`crate::observables`].

mod candidates;
mod line;

pub use candidates::{lowest, single_wavevector_candidates, structure_candidates, StateCandidate};
pub use line::{model_with, path_value};

use crate::error::NumericalError;
use crate::kernels::quartic::structure_loops;
use crate::kernels::Accuracy;
use crate::model::structure::Structure;
use crate::model::{Channel, Model};
use crate::solvers::optimize::brent_max;
use crate::solvers::relative_phases::best_phases;
use crate::solvers::tc::TcSolver;
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
    /// The Tc solver: its accuracy is that of chi on the line.
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

impl PatternSolver {
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
    /// The structure's name.
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
    /// Absolute error estimate of `quartic` (loop errors and the imaginary remainder), same units.
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
