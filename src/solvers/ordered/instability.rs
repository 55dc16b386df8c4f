//! The instabilities of the normal state at one temperature (between the critical-temperature
//! solver and the labels of the ordered states): the normal state is unstable where g chi(q, T) > 1
//! at some q, towards the uniform state (q = 0) or a modulated one (q* != 0). See the crate docs,
//! [`theory::ordered`](crate::theory::ordered).

use super::OrderedSolver;
use crate::error::NumericalError;
use crate::model::{Channel, Model};
use crate::solvers::tc::{TcSolver, TcStatus};

/// Towards which state the normal state is unstable.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum InstabilityKind {
    /// g chi(0, T) > 1 and q = 0 is the largest: the uniform state.
    Uniform,
    /// max over q of g chi(q, T) > 1 at q* != 0: a modulated state.
    Modulated,
}

impl InstabilityKind {
    /// The label of tables and JSON: "uniform" or "modulated".
    pub fn label(self) -> &'static str {
        match self {
            InstabilityKind::Uniform => "uniform",
            InstabilityKind::Modulated => "modulated",
        }
    }
}

/// An instability of the normal state at one temperature.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Instability {
    /// Uniform or modulated.
    pub towards: InstabilityKind,
    /// The wavevector of the leading instability, 1/nm (zero for the uniform one).
    pub q: [f64; 2],
    /// g chi(q, T) there (above 1); None at T = 0, where the instability is known from the
    /// critical temperatures (T = 0 lies below a positive Tc) and chi is not evaluated.
    pub g_chi: Option<f64>,
}

/// The leading instability of the normal state of `ch` at k_B T = `t` (meV), or None when the
/// normal state is stable at every q (g chi(q, T) < 1).
///
/// Above every critical temperature of the [`TcSolver`] (uniform and modulated) the normal state
/// is stable. Below one, at T > 0, the maximum over q of g chi(q, T) decides, with the sign of the
/// gap function at Delta = 0 as the uniform check; at T = 0 the critical temperatures decide (the
/// modulated one where it lies above the uniform one).
pub fn normal_instability(
    tc: &TcSolver,
    os: &OrderedSolver,
    model: &Model,
    ch: &Channel,
    t: f64,
) -> Result<Option<Instability>, NumericalError> {
    let uniform = tc.uniform(model, ch)?;
    let modulated = tc.modulated(model, ch, &uniform)?;
    let tc_of = |r: &crate::solvers::TcReport| {
        if r.status == TcStatus::Unstable {
            r.tc
        } else {
            0.0
        }
    };
    let q_star = modulated.q;
    let modulated_wins = q_star != [0.0, 0.0] && modulated.tc.status == TcStatus::Unstable;
    if t >= tc_of(&uniform).max(tc_of(&modulated.tc)) {
        return Ok(None);
    }
    if t <= 0.0 {
        let towards = if modulated_wins {
            InstabilityKind::Modulated
        } else {
            InstabilityKind::Uniform
        };
        let q = if modulated_wins { q_star } else { [0.0, 0.0] };
        return Ok(Some(Instability {
            towards,
            q,
            g_chi: None,
        }));
    }
    let uniform_unstable = os.gap_fn(model, ch, [0.0, 0.0], 0.0, t)? < 0.0;
    let (q, g_chi) = tc.max_over_q(model, ch, t)?;
    if g_chi > 1.0 {
        let towards = if q == [0.0, 0.0] {
            InstabilityKind::Uniform
        } else {
            InstabilityKind::Modulated
        };
        return Ok(Some(Instability {
            towards,
            q,
            g_chi: Some(g_chi),
        }));
    }
    if !uniform_unstable {
        return Ok(None);
    }
    Ok(Some(Instability {
        towards: InstabilityKind::Uniform,
        q: [0.0, 0.0],
        g_chi: Some(tc.g_chi(model, ch, [0.0, 0.0], t, &tc.acc)?),
    }))
}

display_by_label!(InstabilityKind);
