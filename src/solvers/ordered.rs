//! Ordered states of one channel at a temperature (the crate docs, [`theory::ordered`](crate::theory::ordered)): every solution of the
//! gap equation for the uniform (q = 0) and the single-wavevector (plane-wave) state, each
//! classified stable, metastable or unstable from Omega, and the chosen state (lowest Omega over
//! normal, uniform and modulated).
//!
//! Search: the gap function G(Delta) (dOmega/dDelta = 2 Delta G) is evaluated on a grid from 0 to
//! beyond the largest possible gap; every sign change is refined with Brent's method. A rise of G
//! through zero is a minimum of Omega, a fall a maximum. The plane-wave wavevector minimises the
//! lowest Omega over |q| (and the direction for anisotropic channels).

use crate::error::NumericalError;
use crate::kernels::grand_potential::{gap_function, grand_potential};
use crate::kernels::susceptibility::susceptibility;
use crate::kernels::{Accuracy, Shell};
use crate::model::{Channel, Model};
use crate::solvers::optimize::brent_max;
use crate::solvers::roots::brent_root;

/// `Display` of label enums: writes `self.label()`.
macro_rules! display_by_label {
    ($($t:ty),*) => {$(
        impl std::fmt::Display for $t {
            fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str(self.label())
            }
        }
    )*};
}

mod coupled;
mod instability;
pub use coupled::{coupled_uniform, CoupledChannels, PairOutcome, RelativePhase};
pub use instability::{normal_instability, Instability, InstabilityKind};

/// Tolerances of the ordered-state search.
#[derive(Debug, Clone, Copy)]
pub struct OrderedSolver {
    /// Accuracy of the shell integrals.
    pub acc: Accuracy,
    /// Points of the Delta grid.
    pub grid_points: usize,
    /// Relative tolerance of each gap root.
    pub delta_rel: f64,
    /// Points of the coarse |q| scan for the plane-wave state.
    pub q_points: usize,
}

impl Default for OrderedSolver {
    fn default() -> Self {
        OrderedSolver {
            acc: Accuracy::default(),
            grid_points: 48,
            delta_rel: 1e-9,
            q_points: 10,
        }
    }
}

/// Kind of an ordered-state solution.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum StateKind {
    /// No order (Delta = 0).
    Normal,
    /// Order at q = 0.
    Uniform,
    /// A plane wave at q != 0.
    Modulated,
}

impl StateKind {
    /// The label of tables and JSON: "normal", "uniform" or "modulated".
    pub fn label(self) -> &'static str {
        match self {
            StateKind::Normal => "normal",
            StateKind::Uniform => "uniform",
            StateKind::Modulated => "modulated",
        }
    }
}

/// Stability of a solution among all those at the same temperature.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Stability {
    /// The lowest minimum of Omega.
    Stable,
    /// Another minimum of Omega.
    Metastable,
    /// A maximum or saddle of Omega (or a normal state with g chi > 1 at some q).
    Unstable,
}

impl Stability {
    /// The label of tables and JSON: "stable", "metastable" or "unstable".
    pub fn label(self) -> &'static str {
        match self {
            Stability::Stable => "stable",
            Stability::Metastable => "metastable",
            Stability::Unstable => "unstable",
        }
    }
}

/// One stationary point of Omega.
#[derive(Debug, Clone, serde::Serialize)]
pub struct Solution {
    /// Normal, uniform or modulated.
    pub state: StateKind,
    /// |Delta|, meV.
    pub delta: f64,
    /// Wavevector of the order parameter, 1/nm.
    pub q: [f64; 2],
    /// Omega per spin channel relative to the normal state, meV/nm^2.
    pub omega: f64,
    /// Estimated absolute error of `omega`, meV/nm^2.
    pub omega_error: f64,
    /// Whether Omega has a minimum in Delta here (before comparing minima).
    pub minimum: bool,
    /// Stable (lowest minimum), metastable (another minimum) or unstable (a maximum).
    pub stability: Stability,
}

/// All solutions at one temperature and the chosen one.
#[derive(Debug, Clone, serde::Serialize)]
pub struct OrderedStates {
    /// k_B T, meV.
    pub t: f64,
    /// Every solution found, the normal state first.
    pub solutions: Vec<Solution>,
    /// Index of the chosen solution (lowest Omega among minima; the normal state when none
    /// is lower).
    pub chosen: usize,
    /// The leading instability of the normal state (g chi(q, T) > 1), when known: set by
    /// [`set_normal_instability`](Self::set_normal_instability); None when the normal state is
    /// stable or it was not checked.
    pub normal_instability: Option<Instability>,
}

impl OrderedStates {
    /// The chosen solution.
    pub fn chosen(&self) -> &Solution {
        &self.solutions[self.chosen]
    }

    /// Marks the lowest minimum stable, other minima metastable, maxima unstable, and the normal
    /// state unstable when it has an instability at some q (it stays chosen only when no lower
    /// minimum was found).
    pub fn reclassify(&mut self) {
        if let Some(c) = lowest_minimum_index(&self.solutions) {
            self.chosen = c;
        }
        for (i, s) in self.solutions.iter_mut().enumerate() {
            s.stability = if s.state == StateKind::Normal && self.normal_instability.is_some() {
                Stability::Unstable
            } else if i == self.chosen {
                Stability::Stable
            } else if s.minimum {
                Stability::Metastable
            } else {
                Stability::Unstable
            };
        }
    }

    /// Records the normal state's instability (from [`normal_instability`]) and relabels.
    pub fn set_normal_instability(&mut self, inst: Option<Instability>) {
        self.normal_instability = inst;
        self.reclassify();
    }

    /// Why the normal state is chosen, when it is (None otherwise).
    pub fn normal_reason(&self) -> Option<String> {
        if self.chosen().state != StateKind::Normal {
            return None;
        }
        if let Some(i) = &self.normal_instability {
            return Some(format!(
                "the normal state is unstable towards the {} state at q = ({:.4e}, {:.4e})/nm, but no ordered state below it was found",
                i.towards, i.q[0], i.q[1]
            ));
        }
        Some(
            if self
                .solutions
                .iter()
                .any(|s| s.minimum && s.state != StateKind::Normal)
            {
                "every ordered minimum of Omega lies above the normal state".into()
            } else {
                "above every critical temperature: no ordered minimum of Omega".into()
            },
        )
    }
}

/// Index of the lowest minimum of Omega among `sols`.
fn lowest_minimum_index(sols: &[Solution]) -> Option<usize> {
    sols.iter()
        .enumerate()
        .filter(|(_, s)| s.minimum)
        .min_by(|a, b| a.1.omega.total_cmp(&b.1.omega))
        .map(|(i, _)| i)
}

impl OrderedSolver {
    /// The accuracy used at (q, T): at T = 0 and q != 0 the integrand has steps whose positions
    /// move with angle, so the angular integral converges only algebraically; the target is
    /// relaxed to 1e-6 there.
    fn acc_at(&self, q: [f64; 2], t: f64) -> Accuracy {
        if t <= 0.0 && q != [0.0, 0.0] {
            Accuracy {
                rtol: self.acc.rtol.max(1e-6),
                ..self.acc
            }
        } else {
            self.acc
        }
    }

    /// G(Delta) at wavevector q.
    pub fn gap_fn(
        &self,
        model: &Model,
        ch: &Channel,
        q: [f64; 2],
        delta: f64,
        t: f64,
    ) -> Result<f64, NumericalError> {
        let shell = Shell::for_channel(model, ch, q)?;
        let acc = self.acc_at(q, t);
        if delta == 0.0 {
            if t <= 0.0 {
                // chi diverges logarithmically at T = 0 for h = 0; use a tiny gap instead.
                return Ok(gap_function(
                    &shell,
                    ch.g(),
                    ch.mismatch(),
                    1e-9 * ch.cutoff(),
                    t,
                    &acc,
                )?
                .value);
            }
            return Ok(1.0 / ch.g() - susceptibility(&shell, t, &acc)?.value);
        }
        Ok(gap_function(&shell, ch.g(), ch.mismatch(), delta, t, &acc)?.value)
    }

    /// Omega(Delta) per spin channel at q.
    pub fn omega(
        &self,
        model: &Model,
        ch: &Channel,
        q: [f64; 2],
        delta: f64,
        t: f64,
    ) -> Result<(f64, f64), NumericalError> {
        let shell = Shell::for_channel(model, ch, q)?;
        let e = grand_potential(&shell, ch.g(), ch.mismatch(), delta, t, &self.acc_at(q, t))?;
        Ok((e.value, e.error))
    }

    /// The Delta grid: denser at small Delta, up to a gap where G > 0 for sure.
    fn delta_grid(
        &self,
        model: &Model,
        ch: &Channel,
        q: [f64; 2],
        t: f64,
    ) -> Result<Vec<(f64, f64)>, NumericalError> {
        let lambda = ch.lambda().max(1e-3);
        let bcs = ch.cutoff() / (1.0 / lambda).sinh();
        let mut hi = (3.0 * bcs + 2.0 * ch.mismatch().abs()).min(ch.cutoff());
        for _ in 0..6 {
            if self.gap_fn(model, ch, q, hi, t)? > 0.0 {
                break;
            }
            hi = (hi * 2.0).min(4.0 * ch.cutoff());
        }
        let n = self.grid_points.max(8);
        let mut out = Vec::with_capacity(n + 1);
        out.push((0.0, self.gap_fn(model, ch, q, 0.0, t)?));
        for i in 1..=n {
            let x = i as f64 / n as f64;
            let d = hi * x * x;
            out.push((d, self.gap_fn(model, ch, q, d, t)?));
        }
        Ok(out)
    }

    /// All stationary points of Omega(Delta) at fixed q (Delta > 0), with Omega.
    pub fn stationary_points(
        &self,
        model: &Model,
        ch: &Channel,
        q: [f64; 2],
        t: f64,
    ) -> Result<(f64, Vec<Solution>), NumericalError> {
        let grid = self.delta_grid(model, ch, q, t)?;
        let alpha = grid[0].1;
        let state = if q == [0.0, 0.0] {
            StateKind::Uniform
        } else {
            StateKind::Modulated
        };
        let mut out = Vec::new();
        for w in grid.windows(2) {
            let ((d0, g0), (d1, g1)) = (w[0], w[1]);
            if g0.signum() != g1.signum() && g1 != 0.0 {
                let lo = if d0 == 0.0 { 1e-6 * d1 } else { d0 };
                let glo = if d0 == 0.0 {
                    self.gap_fn(model, ch, q, lo, t)?
                } else {
                    g0
                };
                if glo.signum() == g1.signum() {
                    continue;
                }
                let r = brent_root("gap equation", lo, d1, self.delta_rel, |d| {
                    self.gap_fn(model, ch, q, d, t)
                })?;
                let (omega, omega_error) = self.omega(model, ch, q, r.x, t)?;
                out.push(Solution {
                    state,
                    delta: r.x,
                    q,
                    omega,
                    omega_error,
                    minimum: g1 > 0.0,
                    stability: Stability::Unstable,
                });
            }
        }
        Ok((alpha, out))
    }

    /// The lowest minimum of Omega at q (None when no ordered minimum exists there).
    fn lowest_minimum(
        &self,
        model: &Model,
        ch: &Channel,
        q: [f64; 2],
        t: f64,
    ) -> Result<Option<Solution>, NumericalError> {
        let (_, sols) = self.stationary_points(model, ch, q, t)?;
        Ok(sols
            .into_iter()
            .filter(|s| s.minimum)
            .min_by(|a, b| a.omega.total_cmp(&b.omega)))
    }

    /// The best plane-wave state: minimises the lowest Omega over q. `q_scale` bounds the search
    /// (a few times the instability's q*, or 2(|h| + T)/v).
    pub fn plane_wave(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
        q_scale: f64,
    ) -> Result<Option<Solution>, NumericalError> {
        self.plane_wave_near(model, ch, t, q_scale, None)
    }

    /// As [`plane_wave`](Self::plane_wave), also trying the wavevectors around `hint` (e.g. the
    /// q* of the modulated instability), where the ordered window in q is narrow.
    pub fn plane_wave_near(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
        q_scale: f64,
        hint: Option<[f64; 2]>,
    ) -> Result<Option<Solution>, NumericalError> {
        let iso = Shell::for_channel(model, ch, [0.0, 0.0])?.isotropic;
        let dirs: Vec<f64> = if iso {
            vec![0.0]
        } else {
            (0..4)
                .map(|i| std::f64::consts::PI * i as f64 / 4.0)
                .collect()
        };
        let at = |m: f64, p: f64| [m * p.cos(), m * p.sin()];
        let omega_at = |q: [f64; 2]| -> Result<f64, NumericalError> {
            Ok(self
                .lowest_minimum(model, ch, q, t)?
                .map(|s| s.omega)
                .unwrap_or(0.0))
        };
        let n = self.q_points.max(4);
        let dq = 2.0 * q_scale / n as f64;
        let (mut best, mut best_q, mut best_phi) = (0.0, 0.0, 0.0);
        let mut dq = dq;
        if let Some(hq) = hint {
            let (hm, hp) = (
                hq[0].hypot(hq[1]),
                if iso { 0.0 } else { hq[1].atan2(hq[0]) },
            );
            if hm > 0.0 {
                for f in [0.9, 1.0, 1.1, 1.25] {
                    let v = omega_at(at(f * hm, hp))?;
                    if v < best {
                        best = v;
                        best_q = f * hm;
                        best_phi = hp;
                        dq = dq.min(0.15 * hm);
                    }
                }
            }
        }
        for &phi in &dirs {
            for i in 1..=n {
                let v = omega_at(at(dq * i as f64, phi))?;
                if v < best {
                    best = v;
                    best_q = dq * i as f64;
                    best_phi = phi;
                }
            }
        }
        if best >= 0.0 {
            return Ok(None);
        }
        let m = brent_max(
            "plane-wave q",
            (best_q - dq).max(1e-3 * dq),
            best_q + dq,
            1e-4 * dq,
            |x| Ok(-omega_at(at(x, best_phi))?),
        )?;
        let mut phi = best_phi;
        let mut qm = m.x;
        if !iso {
            let mm = brent_max("plane-wave direction", phi - 0.4, phi + 0.4, 1e-4, |p| {
                Ok(-omega_at(at(qm, p))?)
            })?;
            phi = mm.x;
            let m2 = brent_max("plane-wave q", 0.5 * qm, 1.5 * qm, 1e-4 * dq, |x| {
                Ok(-omega_at(at(x, phi))?)
            })?;
            qm = m2.x;
        }
        self.lowest_minimum(model, ch, at(qm, phi), t)
    }

    /// Every solution at temperature t: normal, uniform roots, and (when `q_scale` is given) the
    /// best plane-wave state; classified and the chosen one marked.
    pub fn solve(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
        q_scale: Option<f64>,
    ) -> Result<OrderedStates, NumericalError> {
        let (alpha, mut sols) = self.stationary_points(model, ch, [0.0, 0.0], t)?;
        let mut all = vec![Solution {
            state: StateKind::Normal,
            delta: 0.0,
            q: [0.0, 0.0],
            omega: 0.0,
            omega_error: 0.0,
            minimum: alpha > 0.0,
            stability: Stability::Unstable,
        }];
        all.append(&mut sols);
        if let Some(qs) = q_scale {
            if let Some(pw) = self.plane_wave(model, ch, t, qs)? {
                // A plane wave that converged to q ~ 0 is the uniform state.
                if pw.q[0].hypot(pw.q[1]) > 1e-3 * qs {
                    all.push(pw);
                }
            }
        }
        // Classify: the lowest minimum is stable, other minima metastable, maxima unstable.
        let chosen = lowest_minimum_index(&all).ok_or_else(|| {
            NumericalError::NoMinimum(format!(
                "channel {}: Omega has no minimum on the gap grid at T = {t:.4e} meV (the normal state is unstable); refine the grid",
                ch.label()
            ))
        })?;
        let mut states = OrderedStates {
            t,
            solutions: all,
            chosen,
            normal_instability: None,
        };
        states.reclassify();
        Ok(states)
    }
}

/// The search range of the plane-wave wavevector: 2 (|h| + 2 T) / v with v the smaller Fermi
/// velocity and h the largest |h_k| on the nesting line; at least a tenth of the nested Tc in T
/// and at most half the cutoff Lambda (meV).
///
/// Pairs exist only within |xi| < Lambda: a wavevector whose energy shift v |q| / 2 exceeds
/// |h| + Lambda pairs nothing at equal energy, so the scale stops growing at T = Lambda / 2.
/// Without that bound the scan (to twice the scale) would reach, at high T, wavevectors that
/// displace the pockets off each other, where the shell is empty.
pub fn plane_wave_q_scale(model: &Model, ch: &Channel, t: f64) -> f64 {
    let t_floor = crate::solvers::tc::nested_tc(ch).unwrap_or(0.0) * 0.1;
    let t_top = 0.5 * ch.cutoff();
    crate::solvers::tc::q_search_scale(model, ch, t.max(t_floor).min(t_top.max(t_floor)))
}

display_by_label!(StateKind, Stability);
