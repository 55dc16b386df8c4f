//! Critical temperatures of one channel, by the exact shell integral or by the weak-coupling
//! closed form (`--method weak`), in one typed result that the reports turn into tables.

use crate::error::NestorError;
use crate::kernels::equation::EquationError;
use crate::kernels::weak;
use crate::kernels::Shell;
use crate::model::{Channel, CouplingInput, Model};
use crate::solvers::tc::weak as weak_tc;
use crate::solvers::tc::{nested_tc, ModulatedTc, TcReport, TcSolver, TcStatus, TcStop};

/// How the critical temperature is computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Method {
    /// The full 2D momentum integral over the shell with the real dispersions.
    Exact,
    /// The digamma closed form (see the crate docs (`crate::theory`)) (circular pockets, equal velocities,
    /// Lambda and Tc much below the Fermi energies).
    Weak,
}

/// Which coupling a channel's numbers were computed with. The rule: the coupling is fixed once,
/// at the configuration as given (the file after `--set`): lambda given -> g = lambda / nu_ab
/// there; g given -> that g. Every point of a sweep, a phase diagram or a line search holds that
/// g (a sweep changes the physics, not the coupling), so lambda = g nu_ab follows the pair
/// density of states along the sweep. `tc --set PATH=X` converts lambda at X; a scan through X
/// holds the g of its base configuration: the two agree where nu_ab is the same, and both say
/// which coupling they held.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct CouplingHeld {
    /// `"lambda"` (dimensionless) or `"g"` (meV nm^2).
    pub key: &'static str,
    /// Its value.
    pub value: f64,
}

impl CouplingHeld {
    /// The coupling channel `ch` holds.
    pub fn of(ch: &Channel) -> Self {
        if ch.g_pinned() {
            return CouplingHeld {
                key: "g",
                value: ch.g(),
            };
        }
        match ch.coupling_input() {
            CouplingInput::Lambda(value) => CouplingHeld {
                key: "lambda",
                value,
            },
            CouplingInput::G(value) => CouplingHeld { key: "g", value },
        }
    }
}

impl std::fmt::Display for CouplingHeld {
    /// `lambda = 0.25 given (g converted here)` or `g = 500 meV nm^2 held`.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self.key {
            "lambda" => write!(f, "lambda = {} given (g converted here)", self.value),
            _ => write!(f, "g = {} meV nm^2 held", self.value),
        }
    }
}

/// Uniform and modulated instability of one channel.
#[derive(Debug, Clone)]
pub struct ChannelTc {
    /// The channel's label.
    pub label: String,
    /// How the critical temperatures were computed.
    pub method: Method,
    /// The channel's mismatch h at this point, meV.
    pub mismatch: f64,
    /// The coupling held at this point (the one the channel was given).
    pub coupling_held: CouplingHeld,
    /// The pair density of states nu_ab at this point, 1/(meV nm^2) per spin channel.
    pub nu: f64,
    /// The coupling g at this point, meV nm^2.
    pub g: f64,
    /// The dimensionless coupling lambda = g nu_ab at this point.
    pub lambda: f64,
    /// Nested Tc 1.134 Lambda exp(-1/lambda), meV (the weak-coupling scale Tc0).
    pub tc_nested: Option<f64>,
    /// The uniform (q = 0) instability.
    pub uniform: TcReport,
    /// The most unstable wavevector and its Tc (the uniform one where q = 0 wins).
    pub modulated: ModulatedTc,
    /// Notes on approximations made (weak method outside its assumptions).
    pub notes: Vec<String>,
}

impl ChannelTc {
    /// Whether the modulated state has the higher Tc (q* non-zero).
    pub fn modulated_wins(&self) -> bool {
        self.modulated.tc.status == TcStatus::Unstable
            && (self.modulated.q[0] != 0.0 || self.modulated.q[1] != 0.0)
    }

    /// |q*| in 1/nm.
    pub fn q_star(&self) -> f64 {
        self.modulated.q[0].hypot(self.modulated.q[1])
    }
}

/// Computes both critical temperatures of a channel.
pub fn channel_tc(
    model: &Model,
    ch: &Channel,
    solver: &TcSolver,
    method: Method,
) -> Result<ChannelTc, NestorError> {
    match method {
        Method::Exact => {
            let uniform = solver.uniform(model, ch)?;
            let modulated = solver.modulated(model, ch, &uniform)?;
            Ok(ChannelTc {
                label: ch.label().to_string(),
                method,
                mismatch: ch.mismatch(),
                coupling_held: CouplingHeld::of(ch),
                nu: ch.nu(),
                g: ch.g(),
                lambda: ch.lambda(),
                tc_nested: nested_tc(ch),
                uniform,
                modulated,
                notes: vec![],
            })
        }
        Method::Weak => weak_channel_tc(model, ch),
    }
}

/// The weak-coupling reports: Tc = t Tc0 with the closed form's accuracy (1e-9 relative), or no
/// instability above the floor.
fn weak_report(t: Option<f64>, t0: f64) -> TcReport {
    match t {
        Some(t) => TcReport {
            tc: t * t0,
            error: 1e-9 * t * t0,
            status: TcStatus::Unstable,
            reason: None,
            evaluations: 0,
            stop: TcStop::Converged,
        },
        None => TcReport {
            tc: 0.0,
            error: 0.0,
            status: TcStatus::NoInstability,
            reason: Some(format!(
                "no instability above {:.1e} Tc0 (weak-coupling closed form)",
                weak::T_FLOOR
            )),
            evaluations: 0,
            stop: TcStop::BelowFloor,
        },
    }
}

/// Where the channel departs from the closed form's assumptions (circular pockets, equal
/// velocities, a constant form factor), and the velocity v (meV nm) the closed form uses.
fn weak_notes(model: &Model, ch: &Channel) -> (Vec<String>, f64) {
    let (a, b) = (&model.pockets()[ch.a()], &model.pockets()[ch.b()]);
    let mut notes = Vec::new();
    let dir = [1.0, 0.0];
    let (va, vb) = (a.fermi_velocity_along(dir), b.fermi_velocity_along(dir));
    if !(a.is_isotropic() && b.is_isotropic()) {
        notes.push("weak method: the pockets are not circular; the closed form uses their velocities along x".into());
    }
    if (va - vb).abs() > 1e-6 * va.max(vb) {
        notes.push(format!(
            "weak method: unequal Fermi velocities ({va:.4} and {vb:.4} meV nm); the closed form uses their mean"
        ));
    }
    if !ch.form().is_constant() {
        notes.push("weak method: the form factor enters only through nu_ab (its angular structure is ignored)".into());
    }
    (notes, 0.5 * (va + vb))
}

/// Both critical temperatures of the channel from the weak-coupling equation
/// ([`crate::kernels::equation::WeakEquation`] at h = mismatch / Tc0), converted to meV and 1/nm.
fn weak_channel_tc(model: &Model, ch: &Channel) -> Result<ChannelTc, NestorError> {
    let iso = Shell::for_channel(model, ch, [0.0, 0.0])?.isotropic;
    let (notes, v) = weak_notes(model, ch);
    let weak_err = |e: weak::WeakError| EquationError::from(e).into_numerical();
    let Some(t0) = nested_tc(ch) else {
        let none = TcReport {
            tc: 0.0,
            error: 0.0,
            status: TcStatus::NoInstability,
            reason: Some("the pair density of states vanishes".into()),
            evaluations: 0,
            stop: TcStop::NoPairDensity,
        };
        return Ok(ChannelTc {
            label: ch.label().to_string(),
            method: Method::Weak,
            mismatch: ch.mismatch(),
            coupling_held: CouplingHeld::of(ch),
            nu: ch.nu(),
            g: ch.g(),
            lambda: ch.lambda(),
            tc_nested: None,
            uniform: none.clone(),
            modulated: ModulatedTc {
                tc: none,
                q: [0.0, 0.0],
                isotropic: iso,
                q_error: 0.0,
            },
            notes,
        });
    };
    let h = ch.mismatch() / t0;
    let uniform = weak_report(weak_tc::uniform_tc(h).map_err(weak_err)?, t0);
    let (mod_t, q) = match weak_tc::modulated_tc(h).map_err(weak_err)? {
        Some((t, qq)) => (Some(t), qq),
        None => (None, 0.0),
    };
    let mut modulated = ModulatedTc {
        tc: weak_report(mod_t, t0),
        // Q = v q / 2 in units of Tc0.
        q: [2.0 * q * t0 / v, 0.0],
        isotropic: iso,
        q_error: 1e-4 * 2.0 * t0 / v,
    };
    if modulated.tc.status == TcStatus::Unstable
        && uniform.status == TcStatus::Unstable
        && modulated.tc.tc <= uniform.tc * (1.0 + 1e-9)
    {
        modulated.q = [0.0, 0.0];
        modulated.tc = uniform.clone();
    }
    Ok(ChannelTc {
        label: ch.label().to_string(),
        method: Method::Weak,
        mismatch: ch.mismatch(),
        coupling_held: CouplingHeld::of(ch),
        nu: ch.nu(),
        g: ch.g(),
        lambda: ch.lambda(),
        tc_nested: Some(t0),
        uniform,
        modulated,
        notes,
    })
}
