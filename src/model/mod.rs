//! The validated, frozen model: pockets, their spin structure, pairing channels and the surface
//! lattice. Built by [`Model::new`] (from specs, in code or by [`crate::config`]) and varied by
//! [`Model::with`]; kernels and solvers only read it.
//!
//! Conventions (the crate docs, [`theory::pockets`](crate::theory::pockets) and [`theory::channels`](crate::theory::channels)): energies in meV from the common chemical potential,
//! momenta in 1/nm measured from each pocket's centre, hbar v in meV nm, masses in electron masses.

mod build;
#[cfg(test)]
mod build_tests;
mod params;
pub mod pocket;
mod spec;
pub mod structure;

pub use build::ChannelSpec;
pub use params::{Param, CHANNEL_KEYS, POCKET_KEYS, SURFACE_KEYS};
pub use pocket::{Dispersion, Pocket, PocketKind, Spin};
pub(crate) use spec::{check_positive, degenerate_phase};
pub use spec::{DispersionSpec, PocketSpec, SpinSpec};

use num_complex::Complex64;

/// Spin matrix M of the order parameter (the crate docs, [`theory::channels`](crate::theory::channels)).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum SpinMatrix {
    /// Charge channel, spin-conserving: M = 1.
    #[serde(rename = "1")]
    Identity,
    #[serde(rename = "x")]
    X,
    #[serde(rename = "y")]
    Y,
    #[serde(rename = "z")]
    Z,
}

impl SpinMatrix {
    pub fn label(self) -> &'static str {
        match self {
            SpinMatrix::Identity => "1",
            SpinMatrix::X => "x",
            SpinMatrix::Y => "y",
            SpinMatrix::Z => "z",
        }
    }

    /// The 2x2 matrix, row-major.
    pub fn matrix(self) -> [[Complex64; 2]; 2] {
        let o = Complex64::new(0.0, 0.0);
        let one = Complex64::new(1.0, 0.0);
        let i = Complex64::new(0.0, 1.0);
        match self {
            SpinMatrix::Identity => [[one, o], [o, one]],
            SpinMatrix::X => [[o, one], [one, o]],
            SpinMatrix::Y => [[o, -i], [i, o]],
            SpinMatrix::Z => [[one, o], [o, -one]],
        }
    }

    fn is_diagonal(self) -> bool {
        matches!(self, SpinMatrix::Identity | SpinMatrix::Z)
    }
}

/// Band form factor of a channel: how W = |M_ab(k)|^2 depends on the two momenta.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FormFactor {
    /// W = 1: at least one pocket is spin-degenerate (the crate docs, [`theory::channels`](crate::theory::channels)).
    Unity,
    /// Both pockets helical: W depends on the two spinor angles.
    Helical {
        /// s_a s_b
        signs: f64,
        winding_a: i32,
        winding_b: i32,
        /// e^{i phi_a}, e^{i phi_b}
        phase_a: Complex64,
        phase_b: Complex64,
        matrix: SpinMatrix,
    },
}

impl FormFactor {
    /// W for spinor directions `ua` = e^{i theta_a} (pocket a at k + q) and `ub` = e^{i theta_b}
    /// (pocket b at k).
    #[inline]
    pub fn weight(&self, ua: Complex64, ub: Complex64) -> f64 {
        match *self {
            FormFactor::Unity => 1.0,
            FormFactor::Helical {
                signs,
                winding_a,
                winding_b,
                phase_a,
                phase_b,
                matrix,
            } => {
                // e^{i(w theta + phi)} for w = +-1.
                let pa = phase_a * if winding_a > 0 { ua } else { ua.conj() };
                let pb = phase_b * if winding_b > 0 { ub } else { ub.conj() };
                // Closed forms of |<chi_a|M|chi_b>|^2 with chi = (1, s e^{i p})/sqrt(2); checked
                // against the explicit matrix product in the tests below.
                match matrix {
                    SpinMatrix::Identity => 0.5 * (1.0 + signs * (pb * pa.conj()).re),
                    SpinMatrix::Z => 0.5 * (1.0 - signs * (pb * pa.conj()).re),
                    SpinMatrix::X => 0.5 * (1.0 + signs * (pa * pb).re),
                    SpinMatrix::Y => 0.5 * (1.0 - signs * (pa * pb).re),
                }
            }
        }
    }

    /// Whether W is the same for every k.
    pub fn is_constant(&self) -> bool {
        matches!(self, FormFactor::Unity)
    }

    /// Whether W is unchanged by the mirror ky -> -ky of both momenta (theta -> -theta).
    pub fn is_mirror_symmetric(&self) -> bool {
        match *self {
            FormFactor::Unity => true,
            FormFactor::Helical {
                winding_a,
                winding_b,
                phase_a,
                phase_b,
                matrix,
                ..
            } => {
                // W depends on cos(w (theta_b - theta_a) + phi_b - phi_a): even in theta when the
                // phase difference is 0 or pi.
                matrix.is_diagonal()
                    && winding_a == winding_b
                    && (phase_b * phase_a.conj()).im.abs() < 1e-14
            }
        }
    }

    /// Whether W is unchanged when both momenta rotate together (so chi(q) depends on |q| only for
    /// circular pockets).
    pub fn is_rotation_invariant(&self) -> bool {
        match *self {
            FormFactor::Unity => true,
            FormFactor::Helical {
                winding_a,
                winding_b,
                matrix,
                ..
            } => {
                if matrix.is_diagonal() {
                    winding_a == winding_b
                } else {
                    winding_a == -winding_b
                }
            }
        }
    }
}

/// How the coupling was given in the configuration.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub enum CouplingInput {
    Lambda(f64),
    G(f64),
}

/// A pairing channel between an electron-like pocket `a` and a hole-like pocket `b`, with its
/// derived quantities. Read through the accessors; built only by [`Model::new`].
#[derive(Debug, Clone)]
pub struct Channel {
    name: Option<String>,
    label: String,
    a: usize,
    b: usize,
    g: f64,
    g_pinned: bool,
    coupling_input: CouplingInput,
    cutoff: f64,
    spin_matrix: SpinMatrix,
    overlap: f64,
    spin_channels: f64,
    form: FormFactor,
    nu: f64,
    mismatch: f64,
    mismatch_range: [f64; 2],
}

impl Channel {
    /// Optional user name (the NAME of `NAME.key` parameter paths).
    pub fn name(&self) -> Option<&str> {
        self.name.as_deref()
    }
    /// Display label: the name, or "A-B".
    pub fn label(&self) -> &str {
        &self.label
    }
    /// Index of the electron-like pocket.
    pub fn a(&self) -> usize {
        self.a
    }
    /// Index of the hole-like pocket.
    pub fn b(&self) -> usize {
        self.b
    }
    /// Contact coupling g > 0 in meV nm^2 (attractive), per spin channel.
    pub fn g(&self) -> f64 {
        self.g
    }
    /// Whether g was held at a base model's value (a sweep or search point) rather than taken
    /// from the coupling given for this model.
    pub fn g_pinned(&self) -> bool {
        self.g_pinned
    }
    /// How the coupling was given.
    pub fn coupling_input(&self) -> CouplingInput {
        self.coupling_input
    }
    /// Shell half-width Lambda in meV: |xi_k| < Lambda.
    pub fn cutoff(&self) -> f64 {
        self.cutoff
    }
    /// Spin matrix M of the order parameter.
    pub fn spin_matrix(&self) -> SpinMatrix {
        self.spin_matrix
    }
    /// Orbital overlap factor m_ab for the density modulation (default 1).
    pub fn overlap(&self) -> f64 {
        self.overlap
    }
    /// Number of equivalent spin channels: 2 for two degenerate pockets, else 1.
    pub fn spin_channels(&self) -> f64 {
        self.spin_channels
    }
    /// Band form factor W of the pair.
    pub fn form(&self) -> FormFactor {
        self.form
    }
    /// Pair density of states nu_ab per spin channel at q = 0, 1/(meV nm^2).
    pub fn nu(&self) -> f64 {
        self.nu
    }
    /// Mismatch h on the nesting line (meV).
    pub fn mismatch(&self) -> f64 {
        self.mismatch
    }
    /// Minimum and maximum of the mismatch along the nesting line (meV).
    pub fn mismatch_range(&self) -> [f64; 2] {
        self.mismatch_range
    }
    /// Dimensionless coupling lambda = g nu_ab.
    pub fn lambda(&self) -> f64 {
        self.g * self.nu
    }
    /// Nesting vector K_a - K_b (1/nm), given the model's pockets.
    pub fn nesting_vector(&self, model: &Model) -> [f64; 2] {
        let (ka, kb) = (
            model.pockets[self.a].center(),
            model.pockets[self.b].center(),
        );
        [ka[0] - kb[0], ka[1] - kb[1]]
    }
}

/// Real-space lattice of the surface, for folding wavevectors into the first zone.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub enum Lattice {
    Square { a: f64 },
    Rectangular { a: f64, b: f64 },
    Hexagonal { a: f64 },
}

/// The frozen model: built only by [`Model::new`] or [`Model::with`], so that every derived
/// quantity matches the specs it came from.
#[derive(Debug, Clone)]
pub struct Model {
    pocket_specs: Vec<PocketSpec>,
    channel_specs: Vec<ChannelSpec>,
    pockets: Vec<Pocket>,
    channels: Vec<Channel>,
    surface: Option<Lattice>,
    warnings: Vec<String>,
    /// Common shift of every offset from the specs, meV.
    shift: f64,
}

impl Model {
    /// The pockets, in configuration order.
    pub fn pockets(&self) -> &[Pocket] {
        &self.pockets
    }
    /// The pairing channels, in configuration order.
    pub fn channels(&self) -> &[Channel] {
        &self.channels
    }
    /// The surface lattice, if given.
    pub fn surface(&self) -> Option<Lattice> {
        self.surface
    }
    /// Legal but questionable input, to be shown to the user.
    pub fn warnings(&self) -> &[String] {
        &self.warnings
    }
    /// The pocket specs the model was built from.
    pub fn pocket_specs(&self) -> &[PocketSpec] {
        &self.pocket_specs
    }
    /// The channel specs the model was built from.
    pub fn channel_specs(&self) -> &[ChannelSpec] {
        &self.channel_specs
    }
    /// The electron-like pocket of a channel.
    pub fn pocket_a(&self, c: &Channel) -> &Pocket {
        &self.pockets[c.a]
    }
    /// The hole-like pocket of a channel.
    pub fn pocket_b(&self, c: &Channel) -> &Pocket {
        &self.pockets[c.b]
    }
}

/// Form factor of the pair (a, b) for spin matrix `m` (the crate docs, [`theory::channels`](crate::theory::channels)).
pub fn form_factor(a: &Pocket, b: &Pocket, m: SpinMatrix) -> FormFactor {
    match (a.spin(), b.spin()) {
        (
            Spin::Helical {
                winding: wa,
                phase: pa,
            },
            Spin::Helical {
                winding: wb,
                phase: pb,
            },
        ) => FormFactor::Helical {
            signs: a.carrier_sign() * b.carrier_sign(),
            winding_a: wa,
            winding_b: wb,
            phase_a: Complex64::from_polar(1.0, pa),
            phase_b: Complex64::from_polar(1.0, pb),
            matrix: m,
        },
        _ => FormFactor::Unity,
    }
}

/// Number of equivalent spin channels: 2 when both pockets are spin-degenerate.
pub fn spin_channels(a: &Pocket, b: &Pocket) -> f64 {
    if matches!(a.spin(), Spin::Degenerate) && matches!(b.spin(), Spin::Degenerate) {
        2.0
    } else {
        1.0
    }
}

/// The band form factor M_ab = <chi_a(p_a)| M |chi_b(p_b)> between pocket a at momentum p_a and
/// pocket b at p_b (each from its own centre): the helical matrix element when both pockets are
/// helical, otherwise 1 (a degenerate pocket's spin is summed into W = 1, the crate docs, [`theory::channels`](crate::theory::channels)).
pub fn band_matrix_element(
    a: &Pocket,
    b: &Pocket,
    m: SpinMatrix,
    pa: [f64; 2],
    pb: [f64; 2],
) -> Complex64 {
    match (a.spin(), b.spin()) {
        (
            Spin::Helical {
                winding: wa,
                phase: fa,
            },
            Spin::Helical {
                winding: wb,
                phase: fb,
            },
        ) => {
            let ta = wa as f64 * a.spinor_direction(pa).arg() + fa;
            let tb = wb as f64 * b.spinor_direction(pb).arg() + fb;
            helical_matrix_element(a.carrier_sign(), ta, b.carrier_sign(), tb, m)
        }
        _ => Complex64::new(1.0, 0.0),
    }
}

/// The matrix element M_ab = <chi_a(theta_a)| M |chi_b(theta_b)> for two helical spinors,
/// chi = (1, s e^{i(w theta + phi)})/sqrt(2). Used to check the closed forms and by the N x N
/// mean field.
pub fn helical_matrix_element(sa: f64, pa: f64, sb: f64, pb: f64, m: SpinMatrix) -> Complex64 {
    let r = std::f64::consts::FRAC_1_SQRT_2;
    let chi_a = [Complex64::new(r, 0.0), Complex64::from_polar(r, pa) * sa];
    let chi_b = [Complex64::new(r, 0.0), Complex64::from_polar(r, pb) * sb];
    let mm = m.matrix();
    let mut acc = Complex64::new(0.0, 0.0);
    for i in 0..2 {
        for j in 0..2 {
            acc += chi_a[i].conj() * mm[i][j] * chi_b[j];
        }
    }
    acc
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The closed forms in `FormFactor::weight` equal |<chi_a|M|chi_b>|^2 from the explicit
    /// spinors (an independent route: matrix algebra instead of trigonometry). Absolute 1e-14:
    /// both are O(1) sums of a few terms.
    #[test]
    fn closed_form_weights_match_matrix_elements() {
        let e = |t: f64| Complex64::from_polar(1.0, t);
        for m in [
            SpinMatrix::Identity,
            SpinMatrix::X,
            SpinMatrix::Y,
            SpinMatrix::Z,
        ] {
            for (sa, sb) in [(1.0, -1.0), (1.0, 1.0), (-1.0, -1.0)] {
                for (wa, wb) in [(1, 1), (1, -1), (-1, 1)] {
                    let ff = FormFactor::Helical {
                        signs: sa * sb,
                        winding_a: wa,
                        winding_b: wb,
                        phase_a: e(0.3),
                        phase_b: e(-1.1),
                        matrix: m,
                    };
                    for (ta, tb) in [(0.0, 0.0), (0.7, 2.0), (-2.5, 1.3)] {
                        let me = helical_matrix_element(
                            sa,
                            wa as f64 * ta + 0.3,
                            sb,
                            wb as f64 * tb - 1.1,
                            m,
                        );
                        assert!((me.norm_sqr() - ff.weight(e(ta), e(tb))).abs() < 1e-14);
                    }
                }
            }
        }
    }

    /// Upper and lower cone with the same texture: W = 0 in the charge channel (the crate docs,
    /// [`theory::channels`](crate::theory::channels)).
    #[test]
    fn same_texture_upper_and_lower_cone_has_no_charge_weight() {
        let ff = FormFactor::Helical {
            signs: -1.0,
            winding_a: 1,
            winding_b: 1,
            phase_a: Complex64::from_polar(1.0, 0.4),
            phase_b: Complex64::from_polar(1.0, 0.4),
            matrix: SpinMatrix::Identity,
        };
        for t in [0.0, 1.0, 2.0, 4.0] {
            let u = Complex64::from_polar(1.0, t);
            assert!(ff.weight(u, u).abs() < 1e-15);
        }
    }
}

impl Lattice {
    /// Primitive reciprocal vectors (1/nm).
    pub fn reciprocal(&self) -> [[f64; 2]; 2] {
        let tau = 2.0 * std::f64::consts::PI;
        match *self {
            Lattice::Square { a } => [[tau / a, 0.0], [0.0, tau / a]],
            Lattice::Rectangular { a, b } => [[tau / a, 0.0], [0.0, tau / b]],
            // Real-space a1 = a (1, 0), a2 = a (1/2, sqrt(3)/2).
            Lattice::Hexagonal { a } => {
                let s3 = 3f64.sqrt();
                [[tau / a, -tau / (a * s3)], [0.0, 2.0 * tau / (a * s3)]]
            }
        }
    }

    /// The wavevector p folded into the first Brillouin zone (the shortest p - G over
    /// reciprocal vectors G).
    pub fn fold(&self, p: [f64; 2]) -> [f64; 2] {
        let [b1, b2] = self.reciprocal();
        let mut best = p;
        let mut best_n = p[0].hypot(p[1]);
        // Reduce coarsely first so that the small search below suffices for any p.
        let det = b1[0] * b2[1] - b1[1] * b2[0];
        let c1 = ((p[0] * b2[1] - p[1] * b2[0]) / det).round();
        let c2 = ((b1[0] * p[1] - b1[1] * p[0]) / det).round();
        for n1 in -2..=2 {
            for n2 in -2..=2 {
                let (m1, m2) = (c1 + n1 as f64, c2 + n2 as f64);
                let q = [
                    p[0] - m1 * b1[0] - m2 * b2[0],
                    p[1] - m1 * b1[1] - m2 * b2[1],
                ];
                let n = q[0].hypot(q[1]);
                if n < best_n - 1e-12 {
                    best = q;
                    best_n = n;
                }
            }
        }
        best
    }
}

#[cfg(test)]
mod lattice_tests {
    use super::*;

    /// Folding: the zone-edge midpoint of a square lattice stays at |p| = pi/a (its two images
    /// are equally short), a full reciprocal vector folds to zero, and a hexagonal K point
    /// (4 pi/(3a) along x) stays at that length (common practice).
    #[test]
    fn folds_into_the_first_zone() {
        let sq = Lattice::Square { a: 0.4 };
        let x = std::f64::consts::PI / 0.4;
        let f = sq.fold([x, 0.0]);
        assert!((f[0].hypot(f[1]) - x).abs() < 1e-12);
        let f = sq.fold([2.0 * x, 0.0]);
        assert!(f[0].hypot(f[1]) < 1e-12);
        let f = sq.fold([2.0 * x + 0.1, 3.0 * 2.0 * x - 0.2]);
        assert!((f[0] - 0.1).abs() < 1e-12 && (f[1] + 0.2).abs() < 1e-12);
        let hx = Lattice::Hexagonal { a: 0.5 };
        let k = 4.0 * std::f64::consts::PI / (3.0 * 0.5);
        let f = hx.fold([k, 0.0]);
        assert!((f[0].hypot(f[1]) - k).abs() < 1e-9);
        let b = hx.reciprocal();
        let f = hx.fold([b[0][0] + b[1][0], b[0][1] + b[1][1]]);
        assert!(f[0].hypot(f[1]) < 1e-12);
    }
}
