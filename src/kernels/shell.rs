//! Geometry of one channel's shell |xi_k| < Lambda at one wavevector q: the polar centre, rays,
//! the radii where xi or a band energy takes a given value, and the per-ray panels on which every
//! shell integral (pair density of states, susceptibility, grand potential) is evaluated.
//!
//! xi_k = [eps_a(k + q) - eps_b(k)]/2 is convex in k for every pocket kind here (eps_a convex,
//! eps_b concave), so every ray from a point below the shell crosses each level of xi once
//! (see the crate docs, [`theory::numerics`](crate::theory::numerics)). k is measured from pocket b's centre, k + q from pocket a's.

use crate::error::NumericalError;
use crate::kernels::quad::{graded_breakpoints, Feature};
use crate::model::{Channel, FormFactor, Model, Pocket};
use num_complex::Complex64;

/// Band energies and their combinations at one k.
#[derive(Debug, Clone, Copy)]
pub struct PairPoint {
    /// eps_a(k + q), meV
    pub eps_a: f64,
    /// eps_b(k), meV
    pub eps_b: f64,
    /// Form factor W = |M_ab|^2.
    pub w: f64,
}

impl PairPoint {
    /// xi_k = (eps_a - eps_b)/2
    #[inline]
    pub fn xi(&self) -> f64 {
        0.5 * (self.eps_a - self.eps_b)
    }
    /// h_k = (eps_a + eps_b)/2, the local mismatch
    #[inline]
    pub fn h(&self) -> f64 {
        0.5 * (self.eps_a + self.eps_b)
    }
}

/// Symmetry of a shell integrand in the ray angle theta.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AngularSymmetry {
    /// No symmetry used: the full circle.
    None,
    /// Independent of theta: one ray.
    SingleRay,
    /// theta -> theta + pi (q = 0): half the circle.
    Inversion,
    /// theta -> -theta (circular pockets, q along x, mirror-symmetric W): half the circle.
    Mirror,
}

/// Which function of k a radius search looks at.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Field {
    Xi,
    EpsA,
    EpsB,
}

/// The shell of one channel at one wavevector.
#[derive(Debug, Clone)]
pub struct Shell<'m> {
    pub a: &'m Pocket,
    pub b: &'m Pocket,
    pub form: FormFactor,
    /// Lambda, meV
    pub cutoff: f64,
    /// Pair wavevector q (1/nm), lab frame.
    pub q: [f64; 2],
    /// Polar centre p (1/nm, from b's centre): the minimum of xi, or a Dirac point below the shell.
    pub centre: [f64; 2],
    /// xi at the centre.
    pub xi_centre: f64,
    /// Lower end of the shell in xi: max(-Lambda, xi_centre).
    pub xi_lo: f64,
    /// Both pockets parabolic: xi is quadratic along every ray.
    parabolic: bool,
    /// A typical momentum scale (1/nm) for bracketing radii.
    k_scale: f64,
    /// One ray represents every direction (circular pockets, rotation-invariant W, q = 0).
    pub single_ray: bool,
    /// Symmetry of the integrand in the ray angle, used to integrate over part of the circle.
    pub symmetry: AngularSymmetry,
    /// The integrand depends on the ray angle only through circular pockets and a
    /// rotation-invariant W: chi depends on |q| only.
    pub isotropic: bool,
}

impl<'m> Shell<'m> {
    pub fn for_channel(
        model: &'m Model,
        ch: &Channel,
        q: [f64; 2],
    ) -> Result<Self, NumericalError> {
        Shell::new(
            &model.pockets()[ch.a()],
            &model.pockets()[ch.b()],
            ch.form(),
            ch.cutoff(),
            q,
        )
    }

    /// The shell of the pair (a at k + q, b at k) with form factor `form` and half-width `cutoff`
    /// (meV) at wavevector q (1/nm): its polar centre (the minimum of xi, or the lower Dirac
    /// point), the level of xi there and the angular symmetry. Errors when the shell is empty or
    /// reaches a Dirac point.
    pub fn new(
        a: &'m Pocket,
        b: &'m Pocket,
        form: FormFactor,
        cutoff: f64,
        q: [f64; 2],
    ) -> Result<Self, NumericalError> {
        let parabolic = !a.is_dirac() && !b.is_dirac();
        let k_scale = [[1.0, 0.0], [0.0, 1.0]]
            .iter()
            .map(|d| a.fermi_momentum_along(*d).max(b.fermi_momentum_along(*d)))
            .fold(0.0, f64::max)
            .max(1e-3);
        let mut shell = Shell {
            a,
            b,
            form,
            cutoff,
            q,
            centre: [0.0, 0.0],
            xi_centre: 0.0,
            xi_lo: 0.0,
            parabolic,
            k_scale,
            single_ray: false,
            symmetry: AngularSymmetry::None,
            isotropic: false,
        };
        shell.centre = if parabolic {
            parabolic_centre(a, b, q)
        } else {
            shell.dirac_centre()?
        };
        shell.xi_centre = shell.at(shell.centre).xi();
        shell.xi_lo = shell.xi_centre.max(-cutoff);
        if shell.xi_centre >= cutoff {
            return Err(NumericalError::EmptyShell {
                xi_centre: shell.xi_centre,
                q,
            });
        }
        shell.set_symmetry();
        Ok(shell)
    }

    /// The lower Dirac point as the polar centre; an error when a Dirac point lies inside the
    /// shell (the branch and the spinor are undefined there).
    fn dirac_centre(&self) -> Result<[f64; 2], NumericalError> {
        // The Dirac points must lie below the shell; the lower one is a valid centre.
        let mut best: Option<([f64; 2], f64)> = None;
        let mut candidates = Vec::new();
        if self.a.is_dirac() {
            candidates.push([-self.q[0], -self.q[1]]);
        }
        if self.b.is_dirac() {
            candidates.push([0.0, 0.0]);
        }
        for c in candidates {
            let x = self.at(c).xi();
            if x >= -self.cutoff {
                return Err(NumericalError::DiracPointInShell(format!(
                    "the shell |xi| < {} meV reaches a Dirac point (xi = {x:.4} meV there at q = ({:.4}, {:.4})/nm): the cutoff must be below {:.4} meV",
                    self.cutoff, self.q[0], self.q[1], -x
                )));
            }
            if best.is_none_or(|(_, bx)| x < bx) {
                best = Some((c, x));
            }
        }
        Ok(best.map(|b| b.0).unwrap_or([0.0, 0.0]))
    }

    /// Whether chi depends on |q| only, and the angular symmetry the rays may use.
    fn set_symmetry(&mut self) {
        let circular = self.a.is_isotropic() && self.b.is_isotropic();
        self.isotropic = circular && self.form.is_rotation_invariant();
        let q_zero = self.q == [0.0, 0.0];
        self.single_ray = self.isotropic && q_zero;
        self.symmetry = if self.single_ray {
            AngularSymmetry::SingleRay
        } else if q_zero {
            // Every dispersion here is even in k and W is unchanged by k -> -k.
            AngularSymmetry::Inversion
        } else if circular && self.q[1] == 0.0 && self.form.is_mirror_symmetric() {
            AngularSymmetry::Mirror
        } else {
            AngularSymmetry::None
        };
    }

    /// Energies and form factor at k (from b's centre).
    #[inline]
    pub fn at(&self, k: [f64; 2]) -> PairPoint {
        let kq = [k[0] + self.q[0], k[1] + self.q[1]];
        let eps_a = self.a.energy(kq);
        let eps_b = self.b.energy(k);
        let w = match self.form {
            FormFactor::Unity => 1.0,
            _ => self
                .form
                .weight(self.a.spinor_direction(kq), self.b.spinor_direction(k)),
        };
        PairPoint { eps_a, eps_b, w }
    }

    /// Value and radial derivative of a field at distance r along unit vector u from the centre.
    #[inline]
    fn field_along(&self, field: Field, u: [f64; 2], r: f64) -> (f64, f64) {
        let k = [self.centre[0] + r * u[0], self.centre[1] + r * u[1]];
        let kq = [k[0] + self.q[0], k[1] + self.q[1]];
        match field {
            Field::EpsA => {
                let (e, g) = self.a.energy_and_gradient(kq);
                (e, g[0] * u[0] + g[1] * u[1])
            }
            Field::EpsB => {
                let (e, g) = self.b.energy_and_gradient(k);
                (e, g[0] * u[0] + g[1] * u[1])
            }
            Field::Xi => {
                let (ea, ga) = self.a.energy_and_gradient(kq);
                let (eb, gb) = self.b.energy_and_gradient(k);
                (
                    0.5 * (ea - eb),
                    0.5 * ((ga[0] - gb[0]) * u[0] + (ga[1] - gb[1]) * u[1]),
                )
            }
        }
    }

    /// Radius along u where xi = level (level > xi_centre): the single crossing.
    pub fn xi_radius(&self, u: [f64; 2], level: f64) -> Result<f64, NumericalError> {
        if level <= self.xi_centre {
            return Ok(0.0);
        }
        if self.parabolic {
            // xi(r) = xi_c + beta r + alpha r^2 exactly.
            let (_, beta) = self.field_along(Field::Xi, u, 0.0);
            let alpha = 0.5 * (quad_form(self.a, u) + quad_form(self.b, u));
            let d = level - self.xi_centre;
            let disc = (beta * beta + 4.0 * alpha * d).sqrt();
            let r = if beta >= 0.0 {
                2.0 * d / (beta + disc)
            } else {
                (disc - beta) / (2.0 * alpha)
            };
            return Ok(r);
        }
        // Bracket by doubling, then safeguarded Newton.
        let mut hi = self.k_scale;
        let mut n = 0;
        while self.field_along(Field::Xi, u, hi).0 < level {
            hi *= 2.0;
            n += 1;
            if n > 60 {
                return Err(NumericalError::NotBracketed {
                    what: format!("radius where xi = {level} meV"),
                    lo: 0.0,
                    hi,
                });
            }
        }
        self.field_root(Field::Xi, u, level, 0.0, hi)
    }

    /// field(r) = c0 + c1 r + c2 r^2 along u, exactly, where the field is quadratic (a parabolic
    /// band, or xi between two parabolic bands).
    fn quadratic_along(&self, field: Field, u: [f64; 2]) -> Option<[f64; 3]> {
        let curvature = |p: &Pocket| match p.dispersion() {
            crate::model::Dispersion::Parabolic { sign, .. } => Some(sign * quad_form(p, u)),
            _ => None,
        };
        let c2 = match field {
            Field::EpsA => curvature(self.a)?,
            Field::EpsB => curvature(self.b)?,
            Field::Xi => 0.5 * (curvature(self.a)? - curvature(self.b)?),
        };
        let (c0, c1) = self.field_along(field, u, 0.0);
        Some([c0, c1, c2])
    }

    /// Root of field(r) = level on [lo, hi] where it changes sign: in closed form where the
    /// field is quadratic along the ray, otherwise (or if rounding puts the closed form outside
    /// the bracket) by safeguarded Newton.
    pub fn field_root(
        &self,
        field: Field,
        u: [f64; 2],
        level: f64,
        mut lo: f64,
        mut hi: f64,
    ) -> Result<f64, NumericalError> {
        let mut flo = self.field_along(field, u, lo).0 - level;
        let fhi = self.field_along(field, u, hi).0 - level;
        if flo == 0.0 {
            return Ok(lo);
        }
        if fhi == 0.0 {
            return Ok(hi);
        }
        if flo.signum() == fhi.signum() {
            return Err(NumericalError::NotBracketed {
                what: format!("radius where {field:?} = {level} meV"),
                lo,
                hi,
            });
        }
        if let Some([c0, c1, c2]) = self.quadratic_along(field, u) {
            if let Some(r) = quadratic_root_in(c0 - level, c1, c2, lo, hi) {
                return Ok(r);
            }
        }
        // Start from the secant through the bracket ends (the fields are close to linear in r
        // over a shell), kept inside the bracket.
        let secant = lo + (hi - lo) * flo / (flo - fhi);
        let mut r = if secant > lo && secant < hi {
            secant
        } else {
            0.5 * (lo + hi)
        };
        for _ in 0..200 {
            let (f, d) = self.field_along(field, u, r);
            let f = f - level;
            if f == 0.0 {
                return Ok(r);
            }
            if f.signum() == flo.signum() {
                lo = r;
                flo = f;
            } else {
                hi = r;
            }
            let newton = r - f / d;
            let next = if d != 0.0 && newton > lo && newton < hi {
                newton
            } else {
                0.5 * (lo + hi)
            };
            if (next - r).abs() <= 1e-15 * r.abs().max(1e-12) || hi - lo <= 1e-15 * hi.abs() {
                return Ok(next);
            }
            r = next;
        }
        Err(NumericalError::NotConverged {
            what: format!("radius where {field:?} = {level} meV"),
            iterations: 200,
            last_change: hi - lo,
            target: 1e-15 * hi.abs(),
        })
    }

    /// The ray at angle theta: its radial extent and the panel breakpoints around the features
    /// (xi = 0 and the two Fermi surfaces, each of energy width `energy_scale`, plus any extra
    /// xi levels with their own widths).
    pub fn ray(
        &self,
        theta: f64,
        energy_scale: f64,
        extra_xi_features: &[(f64, f64)],
        growth: f64,
        breakpoints: &mut Vec<f64>,
    ) -> Result<Ray, NumericalError> {
        let u = [theta.cos(), theta.sin()];
        let r_lo = self.xi_radius(u, self.xi_lo)?;
        let r_hi = self.xi_radius(u, self.cutoff)?;
        let mut feats: Vec<Feature> = Vec::with_capacity(8);
        let add_xi =
            |level: f64, width: f64, feats: &mut Vec<Feature>| -> Result<(), NumericalError> {
                if level > self.xi_lo && level < self.cutoff {
                    // Inside the shell: the crossing lies between the edges found above.
                    let r = if self.parabolic {
                        self.xi_radius(u, level)?
                    } else {
                        self.field_root(Field::Xi, u, level, r_lo, r_hi)?
                    };
                    let (_, d) = self.field_along(Field::Xi, u, r);
                    feats.push(Feature {
                        at: r,
                        scale: width / d.abs().max(1e-300),
                    });
                }
                Ok(())
            };
        add_xi(0.0, energy_scale, &mut feats)?;
        for &(level, width) in extra_xi_features {
            add_xi(level, width, &mut feats)?;
        }
        // Fermi-surface crossings of either band inside the shell: look for sign changes between
        // the shell edges and the nesting line.
        let r0 = feats.first().map(|f| f.at);
        let mut probes = vec![r_lo];
        if let Some(r0) = r0 {
            probes.push(r0);
        }
        probes.push(r_hi);
        for field in [Field::EpsA, Field::EpsB] {
            for w in probes.windows(2) {
                let (f0, _) = self.field_along(field, u, w[0]);
                let (f1, _) = self.field_along(field, u, w[1]);
                if f0.signum() != f1.signum() && f0 != 0.0 && f1 != 0.0 {
                    let r = self.field_root(field, u, 0.0, w[0], w[1])?;
                    let (_, d) = self.field_along(field, u, r);
                    feats.push(Feature {
                        at: r,
                        scale: energy_scale / d.abs().max(1e-300),
                    });
                }
            }
        }
        graded_breakpoints(r_lo, r_hi, &feats, growth, breakpoints);
        Ok(Ray { u, r_lo, r_hi })
    }

    /// Momentum at radius r along unit vector u.
    #[inline]
    pub fn point_on_ray(&self, u: [f64; 2], r: f64) -> [f64; 2] {
        [self.centre[0] + r * u[0], self.centre[1] + r * u[1]]
    }

    /// Radial derivative of xi at radius r along u.
    pub fn xi_slope(&self, u: [f64; 2], r: f64) -> f64 {
        self.field_along(Field::Xi, u, r).1
    }
}

/// One ray of the polar grid.
#[derive(Debug, Clone, Copy)]
pub struct Ray {
    pub u: [f64; 2],
    pub r_lo: f64,
    pub r_hi: f64,
}

/// The lab-frame tensor T of |eps - E0| = k.T k for a parabolic pocket.
fn quadratic_tensor(p: &Pocket) -> [[f64; 2]; 2] {
    let c = match p.dispersion() {
        crate::model::Dispersion::Parabolic { c, .. } => c,
        _ => [0.0, 0.0],
    };
    let (co, si) = (p.angle().cos(), p.angle().sin());
    // R diag(c) R^T
    [
        [c[0] * co * co + c[1] * si * si, (c[0] - c[1]) * co * si],
        [(c[0] - c[1]) * co * si, c[0] * si * si + c[1] * co * co],
    ]
}

/// The root of c0 + c1 r + c2 r^2 in [lo, hi] (stable form of the quadratic formula), if one
/// lies there.
fn quadratic_root_in(c0: f64, c1: f64, c2: f64, lo: f64, hi: f64) -> Option<f64> {
    let inside = |r: f64| r.is_finite() && r >= lo && r <= hi;
    if c2 == 0.0 {
        let r = -c0 / c1;
        return inside(r).then_some(r);
    }
    let disc = c1 * c1 - 4.0 * c2 * c0;
    if disc < 0.0 {
        return None;
    }
    let w = -0.5 * (c1 + disc.sqrt().copysign(c1));
    [w / c2, c0 / w].into_iter().find(|&r| inside(r))
}

fn quad_form(p: &Pocket, u: [f64; 2]) -> f64 {
    let t = quadratic_tensor(p);
    u[0] * (t[0][0] * u[0] + t[0][1] * u[1]) + u[1] * (t[1][0] * u[0] + t[1][1] * u[1])
}

/// e^{i theta} helper for callers that build spinor directions.
pub fn unit(theta: f64) -> Complex64 {
    Complex64::from_polar(1.0, theta)
}

/// The minimum of xi for two parabolic pockets: k = -(A+B)^{-1} A q with A, B their quadratic
/// tensors.
fn parabolic_centre(a: &Pocket, b: &Pocket, q: [f64; 2]) -> [f64; 2] {
    // xi = [(k+q).A(k+q) + k.B k + E0a - E0b]/2: minimum at k = -(A+B)^{-1} A q.
    let ta = quadratic_tensor(a);
    let tb = quadratic_tensor(b);
    let s = [
        [ta[0][0] + tb[0][0], ta[0][1] + tb[0][1]],
        [ta[1][0] + tb[1][0], ta[1][1] + tb[1][1]],
    ];
    let aq = [
        ta[0][0] * q[0] + ta[0][1] * q[1],
        ta[1][0] * q[0] + ta[1][1] * q[1],
    ];
    let det = s[0][0] * s[1][1] - s[0][1] * s[1][0];
    [
        -(s[1][1] * aq[0] - s[0][1] * aq[1]) / det,
        -(-s[1][0] * aq[0] + s[0][0] * aq[1]) / det,
    ]
}

#[cfg(test)]
mod tests {
    use super::quadratic_root_in;

    /// The stable quadratic formula returns the root inside the bracket (both orders of the
    /// roots, a vanishing linear term, a linear equation) and nothing when none lies there.
    #[test]
    fn quadratic_root_in_the_bracket() {
        // (r - 1)(r - 3) = r^2 - 4 r + 3
        assert_eq!(quadratic_root_in(3.0, -4.0, 1.0, 0.0, 2.0), Some(1.0));
        assert_eq!(quadratic_root_in(3.0, -4.0, 1.0, 2.0, 5.0), Some(3.0));
        assert_eq!(quadratic_root_in(3.0, -4.0, 1.0, 1.5, 2.5), None);
        let r = quadratic_root_in(-2.0, 0.0, 1.0, 0.0, 2.0).unwrap();
        assert!((r - 2f64.sqrt()).abs() < 1e-15);
        assert_eq!(quadratic_root_in(-2.0, 1.0, 0.0, 0.0, 3.0), Some(2.0));
    }
}
