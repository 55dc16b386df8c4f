//! The angular symmetry the harmonic k integral may use: the full circle, a single ray (uniform
//! state of circular pockets), or one sector of an n-fold rotation that maps pockets, form factor
//! and components onto themselves.

use super::set::{rotate, same, HarmonicSet};
use crate::model::{Channel, FormFactor, Model, SpinMatrix};
use num_complex::Complex64;
use std::f64::consts::PI;

/// How the angular integral uses the symmetry of the integrand.
#[derive(Debug, Clone, PartialEq)]
pub enum RaySymmetry {
    /// The full circle.
    Full,
    /// Uniform state of circular pockets: one ray.
    Isotropic,
    /// An n-fold rotation maps pockets, form factor and components onto themselves: one sector;
    /// `perm[g]` is the index of R g in the Fourier set (R the rotation by 2 pi/n).
    Fold { n: usize, perm: Vec<usize> },
}

impl RaySymmetry {
    /// The orbits of the Fourier set under the rotations (each index once), for projecting
    /// components onto the symmetric subspace.
    pub fn orbits(&self, len: usize) -> Vec<Vec<usize>> {
        match self {
            RaySymmetry::Fold { n, perm } => {
                let mut seen = vec![false; len];
                let mut out = Vec::new();
                for g in 0..len {
                    if seen[g] {
                        continue;
                    }
                    let mut orbit = Vec::new();
                    let mut x = g;
                    for _ in 0..*n {
                        if !seen[x] {
                            seen[x] = true;
                            orbit.push(x);
                        }
                        x = perm[x];
                    }
                    out.push(orbit);
                }
                out
            }
            _ => (0..len).map(|g| vec![g]).collect(),
        }
    }

    /// Fold order (1 for the full circle, 0 for a single ray).
    pub fn fold(&self) -> usize {
        match self {
            RaySymmetry::Full => 1,
            RaySymmetry::Isotropic => 0,
            RaySymmetry::Fold { n, .. } => *n,
        }
    }
}

/// Whether rotating every momentum leaves the vertex M_ab itself (not only |M_ab|^2) unchanged.
fn vertex_rotation_invariant(ch: &Channel) -> bool {
    match ch.form() {
        FormFactor::Unity => true,
        FormFactor::Helical {
            winding_a,
            winding_b,
            matrix,
            ..
        } => matches!(matrix, SpinMatrix::Identity | SpinMatrix::Z) && winding_a == winding_b,
    }
}

/// The symmetry the angular integral may use for these components: a rotation by 2 pi/n
/// (n = 6, 4, 3, 2, largest first) that maps the circular pockets and the form factor onto
/// themselves and Delta_{R G} = Delta_G for every G (within 1e-12 relative).
pub fn ray_symmetry(
    model: &Model,
    ch: usize,
    set: &HarmonicSet,
    deltas: &[Complex64],
) -> RaySymmetry {
    let c = &model.channels()[ch];
    let (a, b) = (&model.pockets()[c.a()], &model.pockets()[c.b()]);
    if !(a.is_isotropic() && b.is_isotropic() && vertex_rotation_invariant(c)) {
        return RaySymmetry::Full;
    }
    if set.fourier.len() == 1 && same(set.fourier[0], [0.0, 0.0], set.tol) {
        return RaySymmetry::Isotropic;
    }
    let big = deltas.iter().map(|d| d.norm()).fold(0.0, f64::max);
    'fold: for n in [6usize, 4, 3, 2] {
        let ang = 2.0 * PI / n as f64;
        let mut perm = Vec::with_capacity(set.fourier.len());
        for g in &set.fourier {
            match set.index(rotate(*g, ang)) {
                Some(i) => perm.push(i),
                None => continue 'fold,
            }
        }
        // The first harmonics must map onto themselves too (the windows are built from them).
        for q in &set.wavevectors {
            let r = rotate(*q, ang);
            if !set.wavevectors.iter().any(|p| same(*p, r, set.tol)) {
                continue 'fold;
            }
        }
        if deltas
            .iter()
            .enumerate()
            .all(|(g, d)| (deltas[perm[g]] - d).norm() <= 1e-12 * big)
        {
            return RaySymmetry::Fold { n, perm };
        }
    }
    RaySymmetry::Full
}
