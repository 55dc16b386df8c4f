//! The input values of a pocket in the units a user gives them (electron masses, degrees, meV,
//! 1/nm), their range checks, and their conversion into a [`Pocket`]. The configuration layer
//! parses TOML into these specs; [`Model::new`](super::Model::new) and
//! [`Model::with`](super::Model::with) turn them into pockets, so every value check lives here
//! once.

use super::pocket::{Dispersion, Pocket, PocketKind, Spin};
use crate::error::InputError;
use crate::units::HBAR2_OVER_2ME;

/// How a pocket's dispersion was given.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DispersionSpec {
    /// Parabolic band from masses (electron masses, along the pocket's own axes) and the
    /// band-edge offset E0 (meV; < 0 electron, > 0 hole).
    Mass { mass: [f64; 2], offset: f64 },
    /// Isotropic parabolic band from the Fermi momentum kF (1/nm) and hbar vF (meV nm); the band
    /// edge follows as -+ hbar kF vF / 2.
    FermiPoint { kf: f64, vf: f64 },
    /// Dirac cone with hbar v (meV nm, along the pocket's own axes) and the Dirac-point energy
    /// (meV, non-zero; < 0 electron-like, > 0 hole-like).
    Cone { velocity: [f64; 2], offset: f64 },
}

/// How a pocket's spin structure was given.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SpinSpec {
    /// Both spin states at every k.
    Degenerate,
    /// One helical state per k: winding +-1 and texture phase in degrees.
    Helical { winding: i32, phase_deg: f64 },
}

/// A pocket as given by the user, before conversion to internal units.
#[derive(Debug, Clone, PartialEq)]
pub struct PocketSpec {
    /// Unique label (also the NAME of `NAME.key` parameter paths).
    pub name: String,
    pub kind: PocketKind,
    /// Centre K in the zone, 1/nm.
    pub center: [f64; 2],
    /// Rotation of the pocket's first axis from the lab x axis, degrees (counter-clockwise).
    pub angle_deg: f64,
    pub dispersion: DispersionSpec,
    pub spin: SpinSpec,
}

/// An input error about one key of one entry: "ENTRY: `KEY`: WHY" (the configuration layer
/// prefixes the file name).
pub(crate) fn key_error(entry: &str, key: &str, why: impl std::fmt::Display) -> InputError {
    InputError::new(format!("{entry}: `{key}`: {why}"))
}

/// An input error about a whole entry: "ENTRY: WHY".
pub(crate) fn entry_error(entry: &str, why: impl std::fmt::Display) -> InputError {
    InputError::new(format!("{entry}: {why}"))
}

/// A value outside (0, hi] in its unit.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{x} is out of range: expected a number in (0, {hi}] {unit}")]
pub(crate) struct OutOfRange {
    x: f64,
    hi: f64,
    unit: String,
}

/// Checks that x lies in (0, hi] (in `unit`).
pub(crate) fn check_positive(x: f64, unit: &str, hi: f64) -> Result<f64, OutOfRange> {
    if !(x > 0.0 && x <= hi) {
        return Err(OutOfRange {
            x,
            hi,
            unit: unit.to_string(),
        });
    }
    Ok(x)
}

/// The text name of a pocket kind, as in the configuration.
pub(crate) fn kind_name(kind: PocketKind) -> &'static str {
    match kind {
        PocketKind::Electron => "electron",
        PocketKind::Hole => "hole",
        PocketKind::Dirac => "dirac",
    }
}

impl PocketSpec {
    /// The entry name used in messages: `pocket "NAME"`.
    pub(crate) fn entry(&self) -> String {
        format!("pocket \"{}\"", self.name)
    }

    /// Validates the values and builds the pocket, with every offset moved by `shift` meV (a
    /// shift of the common chemical potential by -shift).
    pub(crate) fn build(&self, shift: f64) -> Result<Pocket, InputError> {
        let entry = self.entry();
        if self.center.iter().any(|c| c.abs() > 1e3) {
            return Err(key_error(
                &entry,
                "center",
                "components must lie in [-1000, 1000] 1/nm",
            ));
        }
        if self.angle_deg.abs() > 360.0 {
            return Err(key_error(
                &entry,
                "angle",
                format!(
                    "{} is out of range: expected degrees in [-360, 360]",
                    self.angle_deg
                ),
            ));
        }
        let dispersion = self.dispersion(&entry, shift)?;
        let spin = match self.spin {
            SpinSpec::Degenerate => Spin::Degenerate,
            SpinSpec::Helical { winding, phase_deg } => {
                if winding != 1 && winding != -1 {
                    let sentry = format!("{entry} spin");
                    return Err(key_error(
                        &sentry,
                        "winding",
                        format!("expected 1 or -1, got {winding}"),
                    ));
                }
                Spin::Helical {
                    winding,
                    phase: phase_deg.to_radians(),
                }
            }
        };
        Ok(Pocket::new(
            self.name.clone(),
            self.kind,
            self.center,
            dispersion,
            self.angle_deg.to_radians(),
            spin,
        ))
    }

    /// The dispersion in internal units (c = hbar^2/(2m) in meV nm^2, offsets in meV).
    fn dispersion(&self, entry: &str, shift: f64) -> Result<Dispersion, InputError> {
        if let DispersionSpec::Mass { offset: o, .. } | DispersionSpec::Cone { offset: o, .. } =
            self.dispersion
        {
            if o.abs() > 1e5 {
                return Err(key_error(
                    entry,
                    "offset",
                    format!("{o} is out of range: expected |offset| <= 1e5 meV"),
                ));
            }
        }
        let kind = self.kind;
        match (kind, self.dispersion) {
            (PocketKind::Dirac, DispersionSpec::Cone { velocity, offset }) => {
                cone(entry, velocity, offset + shift)
            }
            (PocketKind::Dirac, DispersionSpec::Mass { .. }) => Err(dirac_only(entry, "mass")),
            (PocketKind::Dirac, DispersionSpec::FermiPoint { .. }) => Err(dirac_only(entry, "kf")),
            (_, DispersionSpec::Cone { .. }) => Err(key_error(
                entry,
                "velocity",
                format!("a {} pocket takes `mass` + `offset`, or `kf` + `vf`; `velocity` is for \"dirac\" pockets", kind_name(kind)),
            )),
            (_, spec) => parabolic(entry, kind, spec, shift),
        }
    }
}

/// The message for a texture phase asked of the spin-degenerate pocket `name` (an override may
/// change a value, never a pocket's spin structure).
pub(crate) fn degenerate_phase(name: &str) -> InputError {
    InputError::new(format!(
        "pocket {name} is spin-degenerate; a texture phase exists only for a helical pocket (give spin = {{ winding = ..., phase = ... }} in the file): an override may change a value, never the kind of a pocket or its spin structure"
    ))
}

/// The message for a parabolic key on a Dirac pocket.
pub(crate) fn dirac_only(entry: &str, key: &str) -> InputError {
    key_error(entry, key, "a \"dirac\" pocket takes `velocity` (hbar v, meV nm) and `offset` (Dirac-point energy, meV)")
}

/// A range check of one value of `entry`.
fn positive(entry: &str, key: &str, x: f64, unit: &str, hi: f64) -> Result<f64, InputError> {
    check_positive(x, unit, hi).map_err(|why| key_error(entry, key, why))
}

/// A Dirac cone with hbar v (meV nm) and the Dirac point at `offset` (meV, shift included).
fn cone(entry: &str, velocity: [f64; 2], offset: f64) -> Result<Dispersion, InputError> {
    for v in velocity {
        positive(entry, "velocity", v, "meV nm", 1e5)?;
    }
    if offset == 0.0 {
        return Err(key_error(entry, "offset", "0 meV: a Dirac point at the chemical potential has no Fermi surface; the offset must be non-zero (< 0 electron-like, > 0 hole-like)"));
    }
    Ok(Dispersion::Dirac {
        branch: if offset < 0.0 { 1.0 } else { -1.0 },
        v: velocity,
        offset,
    })
}

/// A parabolic band from masses or from kF + vF; its band edge must lie on the carrier side.
fn parabolic(
    entry: &str,
    kind: PocketKind,
    spec: DispersionSpec,
    shift: f64,
) -> Result<Dispersion, InputError> {
    let sign = if kind == PocketKind::Electron {
        1.0
    } else {
        -1.0
    };
    let (c, offset) = match spec {
        DispersionSpec::Mass { mass, offset } => {
            for m in mass {
                positive(entry, "mass", m, "electron masses", 1e3)?;
            }
            if mass.iter().any(|&x| x < 1e-3) {
                return Err(key_error(
                    entry,
                    "mass",
                    "out of range: expected masses in [0.001, 1000] electron masses",
                ));
            }
            (
                [HBAR2_OVER_2ME / mass[0], HBAR2_OVER_2ME / mass[1]],
                offset + shift,
            )
        }
        DispersionSpec::FermiPoint { kf, vf } => {
            positive(entry, "kf", kf, "1/nm", 1e2)?;
            positive(entry, "vf", vf, "meV nm", 1e5)?;
            // m = hbar kF / vF: hbar^2/(2m) = (hbar vF)/(2 kF); E0 = -+ hbar kF vF / 2.
            let c = vf / (2.0 * kf);
            let edge = kf * vf / 2.0;
            if edge <= 0.0 || !c.is_finite() {
                return Err(key_error(
                    entry,
                    "vf",
                    format!("kf = {kf} 1/nm with vf = {vf} meV nm gives a band edge kf vf / 2 = {edge} meV, which is not usable; allowed: kf vf / 2 > 0 and vf / kf finite"),
                ));
            }
            ([c, c], -sign * edge + shift)
        }
        DispersionSpec::Cone { .. } => unreachable!("a cone is not parabolic"),
    };
    if sign * offset >= 0.0 {
        let why = if kind == PocketKind::Electron {
            format!("{offset} meV: an electron pocket's band edge must lie below the chemical potential (offset < 0), otherwise it has no Fermi surface")
        } else {
            format!("{offset} meV: a hole pocket's band edge must lie above the chemical potential (offset > 0), otherwise it has no Fermi surface")
        };
        return Err(key_error(entry, "offset", why));
    }
    Ok(Dispersion::Parabolic { sign, c, offset })
}
