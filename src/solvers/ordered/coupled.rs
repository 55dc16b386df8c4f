//! Two uniform channels that share a pocket, ordered together (after the single-channel ordered
//! solver of [`super`]): the lowest Omega over both gaps, whether they coexist or compete, and
//! their relative phase (the crate docs, [`theory::ordered`](crate::theory::ordered)).

use super::OrderedSolver;
use crate::error::NumericalError;
use crate::model::Model;
use crate::solvers::optimize::brent_max;

/// Two uniform channels that share a pocket, ordered together (the crate docs, [`theory::ordered`](crate::theory::ordered)).
#[derive(Debug, Clone, serde::Serialize)]
pub struct CoupledChannels {
    /// Labels of the two channels.
    pub channels: [String; 2],
    /// Gaps (meV) at the lowest Omega found over (Delta_1, Delta_2) >= 0.
    pub deltas: [f64; 2],
    /// Omega per spin channel there, meV/nm^2.
    pub omega: f64,
    /// Omega of each channel ordered alone (its own lowest minimum), meV/nm^2.
    pub omega_single: [f64; 2],
    /// Whether both gaps survive at the minimum.
    pub outcome: PairOutcome,
    /// The relative phase of the two order parameters.
    pub relative_phase: RelativePhase,
}

/// What two uniform channels sharing a pocket do when ordered together.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum PairOutcome {
    /// Both gaps are non-zero at the minimum ("coexist").
    Coexist,
    /// One gap vanishes at the minimum ("compete").
    Compete,
}

impl PairOutcome {
    /// The label of tables and JSON: "coexist" or "compete".
    pub fn label(self) -> &'static str {
        match self {
            PairOutcome::Coexist => "coexist",
            PairOutcome::Compete => "compete",
        }
    }
}

/// The relative phase of two coupled order parameters (serialised as its explanation, see
/// [`label`](Self::label)).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RelativePhase {
    /// Free: the gauge of the unshared pockets absorbs it.
    Free,
    /// Free in the model, but 2P is a reciprocal vector of both channels: umklapp terms (not in
    /// the model) would pin it.
    FreeUmklappWouldPin,
}

impl RelativePhase {
    /// The explanation printed in tables and JSON.
    pub fn label(self) -> &'static str {
        match self {
            RelativePhase::Free => "free (a Goldstone-like phase: the gauge of the unshared pockets absorbs it)",
            RelativePhase::FreeUmklappWouldPin => "free in this model (the gauge of the unshared pockets absorbs it); 2P is a reciprocal vector for both channels, so umklapp terms (not in the model) would pin it",
        }
    }
}

impl serde::Serialize for RelativePhase {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.label())
    }
}

/// Minimises Omega over (Delta_1, Delta_2) for two uniform channels sharing a pocket, starting
/// from each channel's own solution, by alternating Brent minimisations in each gap.
pub fn coupled_uniform(
    os: &OrderedSolver,
    model: &Model,
    pair: [usize; 2],
    t: f64,
) -> Result<CoupledChannels, NumericalError> {
    use crate::kernels::multichannel::omega_uniform_channels;
    let acc = os.acc;
    let om = |d: [f64; 2]| -> Result<f64, NumericalError> {
        Ok(omega_uniform_channels(model, &pair, &d, t, &acc)?.value)
    };
    let mut single = [0.0; 2];
    let mut d_single = [0.0; 2];
    for (i, &c) in pair.iter().enumerate() {
        let st = os.solve(model, &model.channels()[c], t, None)?;
        let ch = st.chosen();
        single[i] = ch.omega;
        d_single[i] = ch.delta;
    }
    let mut best: Option<([f64; 2], f64)> = None;
    for start in [
        [d_single[0], 0.0],
        [0.0, d_single[1]],
        [d_single[0], d_single[1]],
    ] {
        let mut d = start;
        let mut value = om(d)?;
        for _ in 0..4 {
            for i in 0..2 {
                let hi = 1.5 * d_single[i].max(d[i]).max(1e-9);
                let m = brent_max("coupled gap", 0.0, hi, 1e-6 * hi, |x| {
                    let mut e = d;
                    e[i] = x;
                    Ok(-om(e)?)
                })?;
                if -m.value < value {
                    d[i] = m.x;
                    value = -m.value;
                }
            }
        }
        if best.is_none_or(|b| value < b.1) {
            best = Some((d, value));
        }
    }
    let (d, value) = best.unwrap_or(([0.0, 0.0], 0.0));
    let small = |i: usize| d[i] < 1e-3 * d_single[i].max(1e-12);
    let outcome = if !small(0) && !small(1) {
        PairOutcome::Coexist
    } else {
        PairOutcome::Compete
    };
    let (c1, c2) = (&model.channels()[pair[0]], &model.channels()[pair[1]]);
    let p1 = c1.nesting_vector(model);
    let p2 = c2.nesting_vector(model);
    let commensurate = model.surface().map(|l| {
        let f = |p: [f64; 2]| {
            let g = l.fold([2.0 * p[0], 2.0 * p[1]]);
            g[0].hypot(g[1]) < 1e-9
        };
        f(p1) && f(p2)
    });
    let relative_phase = match commensurate {
        Some(true) => RelativePhase::FreeUmklappWouldPin,
        _ => RelativePhase::Free,
    };
    Ok(CoupledChannels {
        channels: [c1.label().to_string(), c2.label().to_string()],
        deltas: d,
        omega: value,
        omega_single: single,
        outcome,
        relative_phase,
    })
}

display_by_label!(PairOutcome, RelativePhase);
