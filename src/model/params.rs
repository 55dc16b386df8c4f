//! Typed parameter points: the model parameters a sweep or a search can vary, resolved once from
//! a `NAME.key` path, and [`Model::with`], which returns a new frozen model with some of them set
//! (no text, no TOML, no re-parsing). Couplings stay pinned at the model's g except in channels
//! whose coupling is itself set.

use super::build::BuildOptions;
use super::spec::{
    degenerate_phase, dirac_only, entry_error, key_error, kind_name, DispersionSpec, SpinSpec,
};
use super::{CouplingInput, Lattice, Model};
use crate::error::InputError;

/// Numeric pocket keys that a path may name.
pub const POCKET_KEYS: &[&str] = &[
    "offset", "mass", "velocity", "kf", "vf", "angle", "center", "phase",
];
/// Numeric channel keys that a path may name.
pub const CHANNEL_KEYS: &[&str] = &["lambda", "g", "cutoff", "overlap"];
/// Numeric surface keys.
pub const SURFACE_KEYS: &[&str] = &["a", "b"];

/// One parameter of a model. Pocket and channel fields hold the index in model order; a
/// component is 0 (x) or 1 (y), `None` sets both axes of a two-component value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Param {
    /// Band-edge or Dirac-point energy of a pocket, meV.
    Offset { pocket: usize },
    /// Mass along the pocket's axes, electron masses.
    Mass {
        pocket: usize,
        component: Option<usize>,
    },
    /// hbar v of a Dirac pocket along its axes, meV nm.
    Velocity {
        pocket: usize,
        component: Option<usize>,
    },
    /// Fermi momentum of a pocket given by `kf` + `vf`, 1/nm.
    Kf { pocket: usize },
    /// hbar vF of a pocket given by `kf` + `vf`, meV nm.
    Vf { pocket: usize },
    /// Rotation of the pocket's axes, degrees.
    Angle { pocket: usize },
    /// One component of the pocket's centre, 1/nm.
    Center { pocket: usize, component: usize },
    /// Spin-texture phase of a helical pocket, degrees.
    SpinPhase { pocket: usize },
    /// Shell half-width of a channel, meV.
    Cutoff { channel: usize },
    /// Dimensionless coupling of a channel (converted to g at the new point).
    Lambda { channel: usize },
    /// Contact coupling of a channel, meV nm^2.
    G { channel: usize },
    /// Orbital overlap factor of a channel.
    Overlap { channel: usize },
    /// Lattice constant a of the surface, nm.
    LatticeA,
    /// Lattice constant b of a rectangular surface, nm.
    LatticeB,
    /// Every pocket offset moved by this many meV from its spec (the common chemical potential
    /// moved by minus it).
    OffsetShift,
}

impl Param {
    /// The channel whose coupling this parameter sets, if any (that channel is not pinned).
    fn coupling_channel(self) -> Option<usize> {
        match self {
            Param::Lambda { channel } | Param::G { channel } => Some(channel),
            _ => None,
        }
    }
}

impl Model {
    /// Resolves `NAME.key` (with an optional component 0 or 1) against this model. The error
    /// gives only the reason; the caller names the option and path.
    pub fn param(
        &self,
        target: &str,
        key: &str,
        component: Option<usize>,
    ) -> Result<Param, InputError> {
        if target == "surface" {
            if !SURFACE_KEYS.contains(&key) || component.is_some() {
                return Err(InputError::new(format!(
                    "the surface has keys {}",
                    SURFACE_KEYS.join(", ")
                )));
            }
            if self.surface.is_none() {
                return Err(InputError::new("the configuration has no [surface] table"));
            }
            return Ok(if key == "a" {
                Param::LatticeA
            } else {
                Param::LatticeB
            });
        }
        let pocket = self.pocket_specs.iter().position(|p| p.name == target);
        let channel = self
            .channel_specs
            .iter()
            .position(|c| c.name.as_deref() == Some(target));
        match (pocket, channel) {
            (Some(p), None) => self.pocket_param(p, key, component),
            (None, Some(c)) => channel_param(target, c, key, component),
            (None, None) => Err(InputError::new(format!(
                "no pocket or channel is named `{target}` (a channel needs `name = \"...\"` to be set this way)"
            ))),
            (Some(_), Some(_)) => Err(InputError::new(format!(
                "the name `{target}` is used by more than one pocket or channel"
            ))),
        }
    }

    fn pocket_param(
        &self,
        pocket: usize,
        key: &str,
        component: Option<usize>,
    ) -> Result<Param, InputError> {
        let name = &self.pocket_specs[pocket].name;
        let single = |p: Param| {
            if component.is_some() {
                Err(InputError::new(format!("`{key}` has one component")))
            } else {
                Ok(p)
            }
        };
        match key {
            "offset" => single(Param::Offset { pocket }),
            "kf" => single(Param::Kf { pocket }),
            "vf" => single(Param::Vf { pocket }),
            "angle" => single(Param::Angle { pocket }),
            "phase" => match self.pocket_specs[pocket].spin {
                SpinSpec::Helical { .. } => single(Param::SpinPhase { pocket }),
                SpinSpec::Degenerate => Err(degenerate_phase(name)),
            },
            "mass" => Ok(Param::Mass { pocket, component }),
            "velocity" => Ok(Param::Velocity { pocket, component }),
            "center" => match component {
                Some(component) => Ok(Param::Center { pocket, component }),
                None => Err(InputError::new(
                    "center has two components: use center.x or center.y",
                )),
            },
            _ => Err(InputError::new(format!(
                "`{name}` is a pocket; its numeric keys are {}",
                POCKET_KEYS.join(", ")
            ))),
        }
    }

    /// The value of a parameter in this model, in the units of its configuration key (for a
    /// search that starts from it). A coupling given the other way is reported as derived:
    /// lambda = g nu, g.
    pub fn value(&self, p: Param) -> f64 {
        let pocket = |i: usize| &self.pocket_specs[i];
        let pair = |v: [f64; 2], c: Option<usize>| v[c.unwrap_or(0)];
        match p {
            Param::Offset { pocket: i } => match pocket(i).dispersion {
                DispersionSpec::Mass { offset, .. } | DispersionSpec::Cone { offset, .. } => offset,
                DispersionSpec::FermiPoint { .. } => self.pockets[i].offset() - self.shift,
            },
            Param::Mass {
                pocket: i,
                component,
            } => match pocket(i).dispersion {
                DispersionSpec::Mass { mass, .. } => pair(mass, component),
                _ => self.pockets[i]
                    .masses()
                    .map_or(f64::NAN, |m| pair(m, component)),
            },
            Param::Velocity {
                pocket: i,
                component,
            } => match pocket(i).dispersion {
                DispersionSpec::Cone { velocity, .. } => pair(velocity, component),
                _ => f64::NAN,
            },
            Param::Kf { pocket: i } | Param::Vf { pocket: i } => match pocket(i).dispersion {
                DispersionSpec::FermiPoint { kf, .. } if matches!(p, Param::Kf { .. }) => kf,
                DispersionSpec::FermiPoint { vf, .. } => vf,
                _ => f64::NAN,
            },
            Param::Angle { pocket: i } => pocket(i).angle_deg,
            Param::Center {
                pocket: i,
                component,
            } => pocket(i).center[component],
            Param::SpinPhase { pocket: i } => match pocket(i).spin {
                SpinSpec::Helical { phase_deg, .. } => phase_deg,
                SpinSpec::Degenerate => 0.0,
            },
            Param::Cutoff { channel } => self.channel_specs[channel].cutoff,
            Param::Overlap { channel } => self.channel_specs[channel].overlap,
            Param::Lambda { channel } => match self.channel_specs[channel].coupling {
                CouplingInput::Lambda(l) => l,
                CouplingInput::G(_) => self.channels[channel].lambda(),
            },
            Param::G { channel } => match self.channel_specs[channel].coupling {
                CouplingInput::G(g) => g,
                CouplingInput::Lambda(_) => self.channels[channel].g,
            },
            Param::LatticeA => match self.surface {
                Some(
                    Lattice::Square { a }
                    | Lattice::Hexagonal { a }
                    | Lattice::Rectangular { a, .. },
                ) => a,
                None => f64::NAN,
            },
            Param::LatticeB => match self.surface {
                Some(Lattice::Rectangular { b, .. }) => b,
                _ => f64::NAN,
            },
            Param::OffsetShift => self.shift,
        }
    }

    /// A new model with the parameters set, in order, validated as the configuration would be.
    /// g stays pinned at this model's value in every channel whose `Lambda` or `G` is not set.
    pub fn with(&self, changes: &[(Param, f64)]) -> Result<Model, InputError> {
        let mut pockets = self.pocket_specs.clone();
        let mut channels = self.channel_specs.clone();
        let mut surface = self.surface;
        let mut shift = self.shift;
        let mut pinned: Vec<Option<f64>> = self.channels.iter().map(|c| Some(c.g)).collect();
        for &(p, v) in changes {
            if let Some(c) = p.coupling_channel() {
                if let Some(slot) = pinned.get_mut(c) {
                    *slot = None;
                }
            }
            match p {
                Param::LatticeA | Param::LatticeB => surface = Some(set_lattice(surface, p, v)?),
                Param::OffsetShift => shift = v,
                Param::Cutoff { channel } => channel_mut(&mut channels, channel)?.cutoff = v,
                Param::Overlap { channel } => channel_mut(&mut channels, channel)?.overlap = v,
                Param::Lambda { channel } => {
                    channel_mut(&mut channels, channel)?.coupling = CouplingInput::Lambda(v)
                }
                Param::G { channel } => {
                    channel_mut(&mut channels, channel)?.coupling = CouplingInput::G(v)
                }
                _ => set_pocket(&mut pockets, p, v)?,
            }
        }
        let opts = BuildOptions {
            pinned: &pinned,
            shift,
        };
        Model::build(pockets, channels, surface, &opts)
    }
}

fn channel_param(
    target: &str,
    channel: usize,
    key: &str,
    component: Option<usize>,
) -> Result<Param, InputError> {
    let p = match key {
        "lambda" => Param::Lambda { channel },
        "g" => Param::G { channel },
        "cutoff" => Param::Cutoff { channel },
        "overlap" => Param::Overlap { channel },
        _ => {
            return Err(InputError::new(format!(
                "`{target}` is a channel; its numeric keys are {}",
                CHANNEL_KEYS.join(", ")
            )))
        }
    };
    if component.is_some() {
        return Err(InputError::new(format!("`{key}` has one component")));
    }
    Ok(p)
}

fn channel_mut(
    channels: &mut [super::ChannelSpec],
    i: usize,
) -> Result<&mut super::ChannelSpec, InputError> {
    channels
        .get_mut(i)
        .ok_or_else(|| InputError::new(format!("channel index {i} is out of range")))
}

fn set_lattice(surface: Option<Lattice>, p: Param, v: f64) -> Result<Lattice, InputError> {
    let lat = surface.ok_or_else(|| InputError::new("the configuration has no [surface] table"))?;
    Ok(match (lat, p) {
        (Lattice::Square { .. }, Param::LatticeA) => Lattice::Square { a: v },
        (Lattice::Hexagonal { .. }, Param::LatticeA) => Lattice::Hexagonal { a: v },
        (Lattice::Rectangular { b, .. }, Param::LatticeA) => Lattice::Rectangular { a: v, b },
        (Lattice::Rectangular { a, .. }, _) => Lattice::Rectangular { a, b: v },
        (Lattice::Square { .. }, _) => return Err(only_rectangular("square")),
        (Lattice::Hexagonal { .. }, _) => return Err(only_rectangular("hexagonal")),
    })
}

fn only_rectangular(lat: &str) -> InputError {
    key_error(
        "[surface]",
        "b",
        format!("only a rectangular lattice takes `b` (this one is {lat})"),
    )
}

/// Sets one pocket parameter in the specs; a key that does not fit the way the pocket was given
/// is refused with the message the configuration would give.
fn set_pocket(pockets: &mut [super::PocketSpec], p: Param, v: f64) -> Result<(), InputError> {
    let i = match p {
        Param::Offset { pocket }
        | Param::Mass { pocket, .. }
        | Param::Velocity { pocket, .. }
        | Param::Kf { pocket }
        | Param::Vf { pocket }
        | Param::Angle { pocket }
        | Param::Center { pocket, .. }
        | Param::SpinPhase { pocket } => pocket,
        _ => unreachable!("not a pocket parameter"),
    };
    let spec = pockets
        .get_mut(i)
        .ok_or_else(|| InputError::new(format!("pocket index {i} is out of range")))?;
    let entry = spec.entry();
    let kind = spec.kind;
    let set_pair = |pair: &mut [f64; 2], c: Option<usize>| match c {
        Some(c) => pair[c] = v,
        None => *pair = [v, v],
    };
    let not_both = || {
        entry_error(
            &entry,
            "give either `mass` + `offset`, or `kf` + `vf`, not both",
        )
    };
    match (p, &mut spec.dispersion) {
        (Param::Angle { .. }, _) => spec.angle_deg = v,
        (Param::Center { component, .. }, _) => spec.center[component] = v,
        (Param::SpinPhase { .. }, _) => match &mut spec.spin {
            SpinSpec::Helical { phase_deg, .. } => *phase_deg = v,
            SpinSpec::Degenerate => return Err(degenerate_phase(&spec.name)),
        },
        (Param::Offset { .. }, DispersionSpec::Mass { offset, .. } | DispersionSpec::Cone { offset, .. }) => *offset = v,
        (Param::Offset { .. }, DispersionSpec::FermiPoint { .. }) => {
            return Err(key_error(&entry, "offset", "not allowed with `kf` + `vf` (the band edge follows from them: -+ hbar kF vF / 2)"))
        }
        (Param::Mass { component, .. }, DispersionSpec::Mass { mass, .. }) => set_pair(mass, component),
        (Param::Velocity { component, .. }, DispersionSpec::Cone { velocity, .. }) => set_pair(velocity, component),
        (Param::Kf { .. }, DispersionSpec::FermiPoint { kf, .. }) => *kf = v,
        (Param::Vf { .. }, DispersionSpec::FermiPoint { vf, .. }) => *vf = v,
        (Param::Mass { .. }, DispersionSpec::Cone { .. }) => return Err(dirac_only(&entry, "mass")),
        (Param::Kf { .. }, DispersionSpec::Cone { .. }) => return Err(dirac_only(&entry, "kf")),
        (Param::Vf { .. }, DispersionSpec::Cone { .. }) => return Err(dirac_only(&entry, "vf")),
        (Param::Velocity { .. }, _) => {
            return Err(key_error(&entry, "velocity", format!("a {} pocket takes `mass` + `offset`, or `kf` + `vf`; `velocity` is for \"dirac\" pockets", kind_name(kind))))
        }
        _ => return Err(not_both()),
    }
    Ok(())
}
