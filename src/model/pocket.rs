//! One Fermi-surface pocket: its dispersion, spin structure and derived single-pocket quantities
//! (Fermi momenta and velocities, carrier density, density of states). See the crate docs, [`theory::pockets`](crate::theory::pockets).
//!
//! Momentum k (1/nm) is measured from the pocket's centre K in the lab frame; the pocket's own
//! axes are rotated by `angle` (counter-clockwise) from the lab x axis.

use crate::units::HBAR2_OVER_2ME;
use num_complex::Complex64;

#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum PocketKind {
    Electron,
    Hole,
    Dirac,
}

impl PocketKind {
    /// The label of tables and JSON: "electron", "hole" or "dirac".
    pub fn label(self) -> &'static str {
        match self {
            PocketKind::Electron => "electron",
            PocketKind::Hole => "hole",
            PocketKind::Dirac => "dirac",
        }
    }
}

impl std::fmt::Display for PocketKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.label())
    }
}

/// Dispersion in the pocket's own axes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Dispersion {
    /// eps = sign (cx kx'^2 + cy ky'^2) + offset, with c = hbar^2/(2 m) in meV nm^2;
    /// sign = +1 electron, -1 hole.
    Parabolic { sign: f64, c: [f64; 2], offset: f64 },
    /// eps = branch sqrt(vx^2 kx'^2 + vy^2 ky'^2) + offset, hbar v in meV nm; branch = +1 for an
    /// electron-like (offset < 0) and -1 for a hole-like (offset > 0) cone.
    Dirac {
        branch: f64,
        v: [f64; 2],
        offset: f64,
    },
}

/// Spin structure of a pocket.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Spin {
    /// Both spin states at every k.
    Degenerate,
    /// One state per k, spinor (1, s e^{i(w theta + phase)})/sqrt(2); phase in radians.
    Helical { winding: i32, phase: f64 },
}

/// One pocket in internal units; read through the accessors.
#[derive(Debug, Clone)]
pub struct Pocket {
    name: String,
    kind: PocketKind,
    center: [f64; 2],
    dispersion: Dispersion,
    angle: f64,
    cos: f64,
    sin: f64,
    spin: Spin,
}

impl Pocket {
    /// A pocket from its values in internal units (angle in radians). Unchecked: a model
    /// validates its pockets through [`crate::model::PocketSpec`].
    pub fn new(
        name: String,
        kind: PocketKind,
        center: [f64; 2],
        dispersion: Dispersion,
        angle: f64,
        spin: Spin,
    ) -> Self {
        Pocket {
            name,
            kind,
            center,
            dispersion,
            angle,
            cos: angle.cos(),
            sin: angle.sin(),
            spin,
        }
    }

    /// Unique label.
    pub fn name(&self) -> &str {
        &self.name
    }
    /// Electron, hole or Dirac.
    pub fn kind(&self) -> PocketKind {
        self.kind
    }
    /// Centre K in the zone, 1/nm.
    pub fn center(&self) -> [f64; 2] {
        self.center
    }
    /// Dispersion in the pocket's own axes.
    pub fn dispersion(&self) -> Dispersion {
        self.dispersion
    }
    /// Rotation of the pocket's first axis from the lab x axis, radians.
    pub fn angle(&self) -> f64 {
        self.angle
    }
    /// Spin structure.
    pub fn spin(&self) -> Spin {
        self.spin
    }

    /// The offset E0 or ED (meV).
    pub fn offset(&self) -> f64 {
        match self.dispersion {
            Dispersion::Parabolic { offset, .. } | Dispersion::Dirac { offset, .. } => offset,
        }
    }

    /// +1 for an electron-like pocket, -1 for a hole-like one.
    pub fn carrier_sign(&self) -> f64 {
        match self.dispersion {
            Dispersion::Parabolic { sign, .. } => sign,
            Dispersion::Dirac { branch, .. } => branch,
        }
    }

    pub fn is_electron_like(&self) -> bool {
        self.carrier_sign() > 0.0
    }

    pub fn is_dirac(&self) -> bool {
        matches!(self.dispersion, Dispersion::Dirac { .. })
    }

    /// Whether the dispersion is the same in every direction.
    pub fn is_isotropic(&self) -> bool {
        match self.dispersion {
            Dispersion::Parabolic { c, .. } => c[0] == c[1],
            Dispersion::Dirac { v, .. } => v[0] == v[1],
        }
    }

    /// Lab momentum to the pocket's own axes.
    #[inline]
    pub fn to_local(&self, k: [f64; 2]) -> [f64; 2] {
        [
            self.cos * k[0] + self.sin * k[1],
            -self.sin * k[0] + self.cos * k[1],
        ]
    }

    /// Band energy (meV) at lab momentum k measured from the centre.
    #[inline]
    pub fn energy(&self, k: [f64; 2]) -> f64 {
        let l = self.to_local(k);
        match self.dispersion {
            Dispersion::Parabolic { sign, c, offset } => {
                sign * (c[0] * l[0] * l[0] + c[1] * l[1] * l[1]) + offset
            }
            Dispersion::Dirac { branch, v, offset } => {
                branch * ((v[0] * l[0]).powi(2) + (v[1] * l[1]).powi(2)).sqrt() + offset
            }
        }
    }

    /// Energy and lab-frame gradient (meV nm) at lab momentum k.
    #[inline]
    pub fn energy_and_gradient(&self, k: [f64; 2]) -> (f64, [f64; 2]) {
        let l = self.to_local(k);
        let (e, gl) = match self.dispersion {
            Dispersion::Parabolic { sign, c, offset } => (
                sign * (c[0] * l[0] * l[0] + c[1] * l[1] * l[1]) + offset,
                [2.0 * sign * c[0] * l[0], 2.0 * sign * c[1] * l[1]],
            ),
            Dispersion::Dirac { branch, v, offset } => {
                let a = v[0] * v[0] * l[0];
                let b = v[1] * v[1] * l[1];
                let r = ((v[0] * l[0]).powi(2) + (v[1] * l[1]).powi(2)).sqrt();
                if r == 0.0 {
                    (offset, [0.0, 0.0])
                } else {
                    (branch * r + offset, [branch * a / r, branch * b / r])
                }
            }
        };
        // Back to the lab frame: g_lab = R g_local.
        (
            e,
            [
                self.cos * gl[0] - self.sin * gl[1],
                self.sin * gl[0] + self.cos * gl[1],
            ],
        )
    }

    /// e^{i theta} of the spinor at lab momentum k: theta is the polar angle of k for a parabolic
    /// pocket, arg R(angle) (vx kx', vy ky') for a Dirac cone (the crate docs, [`theory::pockets`](crate::theory::pockets)). Returns 1 at
    /// k = 0, where the angle is undefined.
    #[inline]
    pub fn spinor_direction(&self, k: [f64; 2]) -> Complex64 {
        let (x, y) = match self.dispersion {
            Dispersion::Dirac { v, .. } if v[0] != v[1] => {
                let l = self.to_local(k);
                let (x, y) = (v[0] * l[0], v[1] * l[1]);
                (self.cos * x - self.sin * y, self.sin * x + self.cos * y)
            }
            _ => (k[0], k[1]),
        };
        let r = x.hypot(y);
        if r > 0.0 {
            Complex64::new(x / r, y / r)
        } else {
            Complex64::new(1.0, 0.0)
        }
    }

    /// Number of spin states per k: 2 for degenerate, 1 for helical.
    pub fn spin_states(&self) -> f64 {
        match self.spin {
            Spin::Degenerate => 2.0,
            Spin::Helical { .. } => 1.0,
        }
    }

    /// Fermi momentum (1/nm) along the lab direction `dir` (unit vector): radius of the Fermi
    /// contour in that direction.
    pub fn fermi_momentum_along(&self, dir: [f64; 2]) -> f64 {
        let l = self.to_local(dir);
        match self.dispersion {
            Dispersion::Parabolic { sign, c, offset } => {
                let curv = c[0] * l[0] * l[0] + c[1] * l[1] * l[1];
                (-offset * sign / curv).max(0.0).sqrt()
            }
            Dispersion::Dirac { v, offset, .. } => {
                offset.abs() / ((v[0] * l[0]).powi(2) + (v[1] * l[1]).powi(2)).sqrt()
            }
        }
    }

    /// Fermi velocity |grad eps| (as hbar v, meV nm) at the Fermi point along lab direction `dir`.
    pub fn fermi_velocity_along(&self, dir: [f64; 2]) -> f64 {
        let kf = self.fermi_momentum_along(dir);
        let (_, g) = self.energy_and_gradient([kf * dir[0], kf * dir[1]]);
        (g[0] * g[0] + g[1] * g[1]).sqrt()
    }

    /// Carrier density per nm^2 (both spin states of a degenerate pocket), counted from the band
    /// edge or the Dirac point: area of the Fermi contour / (2 pi)^2 per spin state.
    pub fn density(&self) -> f64 {
        let per_spin = match self.dispersion {
            Dispersion::Parabolic { c, offset, .. } => {
                // Ellipse with semi-axes sqrt(|E0|/cx), sqrt(|E0|/cy).
                offset.abs() / (c[0] * c[1]).sqrt() / (4.0 * std::f64::consts::PI)
            }
            Dispersion::Dirac { v, offset, .. } => {
                offset * offset / (v[0] * v[1]) / (4.0 * std::f64::consts::PI)
            }
        };
        per_spin * self.spin_states()
    }

    /// Density of states at the chemical potential, per meV per nm^2 (both spin states of a
    /// degenerate pocket): m/(2 pi hbar^2) per spin for a parabolic band, |ED|/(2 pi vx vy) for a cone.
    pub fn dos(&self) -> f64 {
        let per_spin = match self.dispersion {
            Dispersion::Parabolic { c, .. } => {
                1.0 / (4.0 * std::f64::consts::PI * (c[0] * c[1]).sqrt())
            }
            Dispersion::Dirac { v, offset, .. } => {
                offset.abs() / (2.0 * std::f64::consts::PI * v[0] * v[1])
            }
        };
        per_spin * self.spin_states()
    }

    /// Masses (electron masses) along the pocket's own axes, for a parabolic pocket.
    pub fn masses(&self) -> Option<[f64; 2]> {
        match self.dispersion {
            Dispersion::Parabolic { c, .. } => Some([HBAR2_OVER_2ME / c[0], HBAR2_OVER_2ME / c[1]]),
            Dispersion::Dirac { .. } => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    fn electron(mx: f64, my: f64, e0: f64, angle: f64) -> Pocket {
        Pocket::new(
            "e".into(),
            PocketKind::Electron,
            [0.0, 0.0],
            Dispersion::Parabolic {
                sign: 1.0,
                c: [HBAR2_OVER_2ME / mx, HBAR2_OVER_2ME / my],
                offset: e0,
            },
            angle,
            Spin::Degenerate,
        )
    }

    /// Hand formulas (common practice): isotropic 2D band, kF = sqrt(2 m |E0|)/hbar, density per
    /// spin kF^2/(4 pi), DOS per spin m/(2 pi hbar^2), vF = hbar kF/m. Relative 1e-12 (closed forms).
    #[test]
    fn isotropic_parabolic_pocket_matches_hand_formulas() {
        let p = electron(0.5, 0.5, -100.0, 0.0);
        let kf = (0.5 * 100.0 / HBAR2_OVER_2ME).sqrt();
        assert!((p.fermi_momentum_along([1.0, 0.0]) / kf - 1.0).abs() < 1e-12);
        assert!((p.density() / (2.0 * kf * kf / (4.0 * PI)) - 1.0).abs() < 1e-12);
        assert!((p.dos() / (2.0 * 0.5 / (4.0 * PI * HBAR2_OVER_2ME)) - 1.0).abs() < 1e-12);
        // hbar vF = hbar^2 kF / m = 2 (hbar^2/2m_e) kF / m.
        let vf = 2.0 * HBAR2_OVER_2ME * kf / 0.5;
        assert!((p.fermi_velocity_along([0.0, 1.0]) / vf - 1.0).abs() < 1e-12);
    }

    /// Rotating an anisotropic pocket by 90 degrees swaps its Fermi momenta along x and y; the
    /// ellipse area gives the density pi kx ky / (2 pi)^2 per spin.
    #[test]
    fn anisotropic_rotated_pocket() {
        let p = electron(0.3, 1.2, -50.0, 0.0);
        let q = electron(0.3, 1.2, -50.0, PI / 2.0);
        let (kx, ky) = (
            p.fermi_momentum_along([1.0, 0.0]),
            p.fermi_momentum_along([0.0, 1.0]),
        );
        assert!((q.fermi_momentum_along([0.0, 1.0]) / kx - 1.0).abs() < 1e-12);
        assert!((q.fermi_momentum_along([1.0, 0.0]) / ky - 1.0).abs() < 1e-12);
        assert!((p.density() / (2.0 * PI * kx * ky / (4.0 * PI * PI)) - 1.0).abs() < 1e-12);
        // The Fermi point lies on the Fermi surface.
        assert!(q.energy([kx * 0.0, kx]).abs() < 1e-10);
    }

    /// Dirac cone (common practice): kF = |ED|/(hbar v), density kF^2/(4 pi) per helical state,
    /// DOS |ED|/(2 pi (hbar v)^2).
    #[test]
    fn dirac_pocket_matches_hand_formulas() {
        let p = Pocket::new(
            "d".into(),
            PocketKind::Dirac,
            [0.0, 0.0],
            Dispersion::Dirac {
                branch: -1.0,
                v: [300.0, 300.0],
                offset: 120.0,
            },
            0.0,
            Spin::Helical {
                winding: 1,
                phase: 0.0,
            },
        );
        let kf = 120.0 / 300.0;
        assert!((p.fermi_momentum_along([0.6, 0.8]) / kf - 1.0).abs() < 1e-12);
        assert!((p.density() / (kf * kf / (4.0 * PI)) - 1.0).abs() < 1e-12);
        assert!((p.dos() / (120.0 / (2.0 * PI * 300.0 * 300.0)) - 1.0).abs() < 1e-12);
        assert!((p.fermi_velocity_along([1.0, 0.0]) - 300.0).abs() < 1e-9);
        assert!(!p.is_electron_like());
    }

    /// The analytic gradient equals a central finite difference (step 1e-6/nm, relative 1e-6).
    #[test]
    fn gradient_matches_finite_difference() {
        let mut pockets = vec![electron(0.3, 0.9, -40.0, 0.6)];
        pockets.push(Pocket::new(
            "d".into(),
            PocketKind::Dirac,
            [0.0, 0.0],
            Dispersion::Dirac {
                branch: 1.0,
                v: [250.0, 400.0],
                offset: -80.0,
            },
            -0.4,
            Spin::Degenerate,
        ));
        for p in &pockets {
            let k = [0.13, -0.21];
            let (_, g) = p.energy_and_gradient(k);
            let h = 1e-6;
            let gx = (p.energy([k[0] + h, k[1]]) - p.energy([k[0] - h, k[1]])) / (2.0 * h);
            let gy = (p.energy([k[0], k[1] + h]) - p.energy([k[0], k[1] - h])) / (2.0 * h);
            assert!((gx - g[0]).abs() < 1e-6 * g[0].abs().max(1.0));
            assert!((gy - g[1]).abs() < 1e-6 * g[1].abs().max(1.0));
        }
    }
}
