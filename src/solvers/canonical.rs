//! Fixed net carrier number (canonical mode, the crate docs, [`theory::ordered`](crate::theory::ordered)): the net carrier density
//! (electrons in electron-like pockets minus holes in hole-like pockets, counted from band edges and
//! Dirac points) is held fixed by shifting the common chemical potential, which moves every offset
//! and so the mismatch. A grand-canonical first-order jump between the normal and the uniform state
//! becomes a coexistence (phase-separation) region in density, found by the Maxwell construction at
//! the chemical potential of equal Omega.
//!
//! Sign convention: a shift s moves every offset E0 -> E0 + s, i.e. the chemical potential by -s.

use crate::error::NumericalError;
use crate::model::{Dispersion, Model, Param};
use crate::solvers::ordered::{OrderedSolver, StateKind};
use crate::solvers::roots::brent_root;

/// The model with every offset shifted by s (meV), g pinned; nu and the mismatch are those of
/// the shifted pockets.
pub fn shifted(model: &Model, s: f64) -> Result<Model, NumericalError> {
    model
        .with(&[(Param::OffsetShift, s)])
        .map_err(|e| NumericalError::ShiftedModel {
            shift: s,
            reason: e.to_string(),
        })
}

/// Net carrier density per nm^2 of the normal state at temperature t (meV): electrons counted
/// from the band edge (or above the Dirac point) of electron-like pockets minus holes counted from
/// the band edge (or below the Dirac point) of hole-like pockets, both spin states of a degenerate
/// pocket included.
pub fn normal_carriers(model: &Model, t: f64) -> f64 {
    model
        .pockets()
        .iter()
        .map(|p| {
            let sign = p.carrier_sign();
            let e0 = p.offset();
            let n = match p.dispersion() {
                Dispersion::Parabolic { c, .. } => {
                    // Constant DOS D = 1/(4 pi sqrt(cx cy)) per spin: n = D T ln(1 + e^{-+E0/T}).
                    let d = 1.0 / (4.0 * std::f64::consts::PI * (c[0] * c[1]).sqrt());
                    let x = -sign * e0;
                    d * softplus(x, t)
                }
                Dispersion::Dirac { v, .. } => {
                    // D(E) = |E - ED| / (2 pi vx vy) on the carrier side of the Dirac point.
                    let pref = 1.0 / (2.0 * std::f64::consts::PI * v[0] * v[1]);
                    pref * dirac_moment(-sign * e0, t)
                }
            };
            sign * n * p.spin_states()
        })
        .sum()
}

/// T ln(1 + e^{x/T}) without overflow; max(x, 0) at T = 0.
fn softplus(x: f64, t: f64) -> f64 {
    if t <= 0.0 {
        return x.max(0.0);
    }
    x.max(0.0) + t * (-(x.abs()) / t).exp().ln_1p()
}

/// int_0^inf e f(e - x) de (x = the carrier Fermi energy from the Dirac point); x^2/2 at T = 0,
/// x^2/2 + pi^2 T^2 / 6 + corrections exponentially small in x/T otherwise: evaluated exactly as
/// T^2 [-Li2(-e^{x/T})] by the series of the dilogarithm.
fn dirac_moment(x: f64, t: f64) -> f64 {
    if t <= 0.0 {
        return 0.5 * x.max(0.0).powi(2);
    }
    let y = x / t;
    // -Li2(-e^y) = y^2/2 + pi^2/6 + Li2(-e^{-y}) for y > 0; = -Li2(-e^y) directly for y <= 0.
    let li2_neg = |z: f64| -> f64 {
        // Li2(-z) for 0 <= z <= 1 by Landen's identity Li2(-z) = -Li2(z/(1+z)) - ln^2(1+z)/2,
        // whose series in w = z/(1+z) <= 1/2 converges geometrically.
        let w = z / (1.0 + z);
        let mut s = 0.0;
        let mut p = 1.0;
        for k in 1..=200 {
            p *= w;
            let term = p / (k * k) as f64;
            s += term;
            if term < 1e-18 {
                break;
            }
        }
        -s - 0.5 * z.ln_1p().powi(2)
    };
    let val = if y > 0.0 {
        0.5 * y * y + std::f64::consts::PI.powi(2) / 6.0 + li2_neg((-y).exp())
    } else {
        -li2_neg(y.exp())
    };
    t * t * val
}

/// Which phase (or mixture) holds the fixed density; serialised and printed in lower case
/// ("normal", "uniform", "coexistence", "undetermined").
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum CanonicalKind {
    /// The normal phase at its own chemical potential.
    Normal,
    /// The uniform ordered phase at its own chemical potential.
    Uniform,
    /// Normal + uniform, from the grand-canonical first-order jump (Maxwell construction).
    Coexistence,
    /// The normal phase is unstable at the fixed density but no single uniform phase has it:
    /// phase separation between ordered states, not constructed here.
    Undetermined,
}

impl std::fmt::Display for CanonicalKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            CanonicalKind::Normal => "normal",
            CanonicalKind::Uniform => "uniform",
            CanonicalKind::Coexistence => "coexistence",
            CanonicalKind::Undetermined => "undetermined",
        })
    }
}

/// The canonical state at one temperature.
#[derive(Debug, Clone, serde::Serialize)]
pub struct CanonicalState {
    /// The phase holding the target density.
    pub state: CanonicalKind,
    /// Chemical-potential shift of the single phase (meV, mu relative to the configuration's),
    /// or of the coexistence.
    pub mu_shift: f64,
    pub delta: f64,
    /// Fraction of the ordered phase in a coexistence region.
    pub ordered_fraction: Option<f64>,
    /// Densities of the normal and the ordered phase at coexistence, 1/nm^2.
    pub coexistence_densities: Option<[f64; 2]>,
    /// The target net carrier density, 1/nm^2.
    pub density: f64,
}

/// (net carrier density, gap, Omega per spin channel) of a uniform minimum.
type UniformBranch = (f64, f64, f64);

/// Net carrier density of the lowest uniform minimum at shift s (None when there is none), with
/// its gap and Omega (per spin channel), and the normal density.
fn uniform_at(
    os: &OrderedSolver,
    model: &Model,
    channel: usize,
    s: f64,
    t: f64,
) -> Result<(f64, Option<UniformBranch>), NumericalError> {
    let m = shifted(model, s)?;
    let ch = &m.channels()[channel];
    let n_normal = normal_carriers(&m, t);
    let st = os.solve(&m, ch, t, None)?;
    let best = st
        .solutions
        .iter()
        .filter(|x| x.state == StateKind::Uniform && x.minimum)
        .min_by(|a, b| a.omega.total_cmp(&b.omega))
        .cloned();
    let Some(b) = best else {
        return Ok((n_normal, None));
    };
    // delta N = -dOmega/dmu = dOmega/ds at fixed Delta (Delta is stationary), total over spins.
    let ds = 1e-4 * ch.cutoff();
    let (mp, mm) = (shifted(model, s + ds)?, shifted(model, s - ds)?);
    let op = os
        .omega(&mp, &mp.channels()[channel], [0.0, 0.0], b.delta, t)?
        .0;
    let om = os
        .omega(&mm, &mm.channels()[channel], [0.0, 0.0], b.delta, t)?
        .0;
    let dn = ch.spin_channels() * (op - om) / (2.0 * ds);
    Ok((n_normal, Some((n_normal + dn, b.delta, b.omega))))
}

/// One row of the shift scan: (shift s, normal density, uniform branch if any).
type Row = (f64, f64, Option<UniformBranch>);

/// What every step of the canonical search shares.
struct Search<'a> {
    os: &'a OrderedSolver,
    model: &'a Model,
    channel: usize,
    t: f64,
    /// The target net carrier density, 1/nm^2.
    target: f64,
}

impl Search<'_> {
    fn uniform_at(&self, s: f64) -> Result<(f64, Option<UniformBranch>), NumericalError> {
        uniform_at(self.os, self.model, self.channel, s, self.t)
    }

    /// A state at the target density.
    fn state(&self, state: CanonicalKind, s: f64, delta: f64) -> CanonicalState {
        CanonicalState {
            state,
            mu_shift: -s,
            delta,
            ordered_fraction: None,
            coexistence_densities: None,
            density: self.target,
        }
    }

    /// Rows of shifts: a coarse grid over the window and a fine one around the normal phase's
    /// shift, where a weak (near-Tc) ordered branch with the target density lies.
    fn rows(&self, window: f64, normal_shift: f64) -> Result<Vec<Row>, NumericalError> {
        let n = 41;
        let mut shifts: Vec<f64> = (0..n)
            .map(|i| -window + 2.0 * window * i as f64 / (n - 1) as f64)
            .collect();
        let fine = 0.05 * window;
        shifts.extend((0..=20).map(|i| normal_shift - fine + 2.0 * fine * i as f64 / 20.0));
        shifts.sort_by(f64::total_cmp);
        shifts.dedup();
        let mut rows = Vec::with_capacity(shifts.len());
        for s in shifts {
            let (nn, u) = self.uniform_at(s)?;
            rows.push((s, nn, u));
        }
        Ok(rows)
    }

    /// Coexistence: a sign change of the uniform Omega between rows with a uniform minimum,
    /// whose two densities enclose the target.
    fn coexistence(&self, rows: &[Row]) -> Result<Option<CanonicalState>, NumericalError> {
        for w in rows.windows(2) {
            let ((s0, _, Some(u0)), (s1, _, Some(u1))) = (&w[0], &w[1]) else {
                continue;
            };
            if u0.2.signum() == u1.2.signum() {
                continue;
            }
            let sc = brent_root("grand-canonical first-order point", *s0, *s1, 1e-10, |s| {
                Ok(self.uniform_at(s)?.1.map(|u| u.2).unwrap_or(1.0))
            })?
            .x;
            let (nn, u) = self.uniform_at(sc)?;
            let (nu, d, _) = u.ok_or_else(|| {
                NumericalError::NoMinimum(
                    "the uniform minimum vanished at the first-order point".into(),
                )
            })?;
            let (lo, hi) = (nn.min(nu), nn.max(nu));
            if self.target > lo && self.target < hi {
                return Ok(Some(CanonicalState {
                    ordered_fraction: Some((self.target - nn) / (nu - nn)),
                    coexistence_densities: Some([nn, nu]),
                    ..self.state(CanonicalKind::Coexistence, sc, d)
                }));
            }
        }
        Ok(None)
    }

    /// The uniform state at its own chemical potential (N_u(s) = target, found between rows that
    /// bracket it) when it is the grand-canonical minimum there (Omega < 0): F(N) = max over mu
    /// of [Omega(mu) + mu N] for a concave Omega, so F_normal(N) >= Omega_normal(mu_u) + mu_u N
    /// > Omega_u(mu_u) + mu_u N = F_u(N).
    fn uniform_phase(&self, rows: &[Row]) -> Result<Option<CanonicalState>, NumericalError> {
        for w in rows.windows(2) {
            let ((s0, _, Some(u0)), (s1, _, Some(u1))) = (&w[0], &w[1]) else {
                continue;
            };
            if (u0.0 - self.target).signum() == (u1.0 - self.target).signum() {
                continue;
            }
            let f = |s: f64| -> Result<f64, NumericalError> {
                match self.uniform_at(s)?.1 {
                    Some(u) => Ok(u.0 - self.target),
                    None => Err(NumericalError::NoMinimum(
                        "the uniform minimum vanished".into(),
                    )),
                }
            };
            let Ok(r) = brent_root("canonical chemical potential (uniform)", *s0, *s1, 1e-10, f)
            else {
                continue;
            };
            if let (_, Some((_, d, omega))) = self.uniform_at(r.x)? {
                if omega < 0.0 {
                    return Ok(Some(self.state(CanonicalKind::Uniform, r.x, d)));
                }
            }
        }
        Ok(None)
    }
}

/// Solves the canonical problem for `channel` at temperature t with the net carrier density of
/// the configuration's normal state at T = 0 held fixed; the uniform and normal states compete.
/// `window` bounds the chemical-potential shift searched (meV).
pub fn canonical_state(
    os: &OrderedSolver,
    model: &Model,
    channel: usize,
    t: f64,
    window: f64,
) -> Result<CanonicalState, NumericalError> {
    let target = normal_carriers(model, 0.0);
    let search = Search {
        os,
        model,
        channel,
        t,
        target,
    };
    // Grand-canonical first-order point: Omega of the uniform minimum crosses zero as s varies.
    // The normal phase's own shift.
    let normal_shift = brent_root(
        "canonical chemical potential (normal)",
        -window,
        window,
        1e-12,
        |s| Ok(normal_carriers(&shifted(model, s)?, t) - target),
    )?
    .x;
    let rows = search.rows(window, normal_shift)?;
    if let Some(c) = search.coexistence(&rows)? {
        return Ok(c);
    }
    if let Some(u) = search.uniform_phase(&rows)? {
        return Ok(u);
    }
    // The normal phase at its own chemical potential must be a grand-canonical minimum; if a
    // uniform state lies below it there and no uniform phase has the target density, the
    // ordered branch is not monotonic in density (negative compressibility): the system
    // separates into phases of different density, which this solver does not construct.
    let mut best = search.state(CanonicalKind::Normal, normal_shift, 0.0);
    if let (_, Some((_, _, omega))) = search.uniform_at(normal_shift)? {
        if omega < 0.0 {
            best.state = CanonicalKind::Undetermined;
        }
    }
    Ok(best)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// T ln(1 + e^{x/T}) and the Dirac moment against their T = 0 limits and the Sommerfeld
    /// expansion x^2/2 + pi^2 T^2/6 (common practice); relative 1e-12 where exponentially exact.
    #[test]
    fn carrier_functions() {
        assert!((softplus(3.0, 0.01) - 3.0).abs() < 1e-12);
        assert!((softplus(0.0, 0.2) - 0.2 * 2f64.ln()).abs() < 1e-15);
        let (x, t) = (2.0, 0.05);
        let som = 0.5 * x * x + std::f64::consts::PI.powi(2) * t * t / 6.0;
        assert!((dirac_moment(x, t) / som - 1.0).abs() < 1e-12);
        // At x = 0: T^2 pi^2/12.
        assert!(
            (dirac_moment(0.0, 0.1) / (0.01 * std::f64::consts::PI.powi(2) / 12.0) - 1.0).abs()
                < 1e-10
        );
        assert_eq!(dirac_moment(1.5, 0.0), 1.125);
    }
}
