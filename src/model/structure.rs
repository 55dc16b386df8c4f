//! Multi-wavevector structures Delta(r) = Delta sum_j e^{i phi_j} exp(i q_j.r) (the crate docs,
//! [`theory::landau`](crate::theory::landau)): the named sets of equal-length wavevectors, and the momentum-conserving ordered
//! quadruples (j1, j2, j3, j4) with q_j1 - q_j2 + q_j3 - q_j4 = 0 that the quartic Landau
//! coefficient sums over.

use std::f64::consts::PI;

/// The named structures, in the order they are reported. The names are part of the interface.
pub const STRUCTURE_NAMES: [&str; 6] = [
    "plane",
    "stripe",
    "orthogonal",
    "triangle",
    "square",
    "hexagon",
];

/// A wavevector with the index pairs (i, j) whose difference q_i - q_j it is.
pub type Harmonic = ([f64; 2], Vec<(usize, usize)>);

/// A set of wavevectors (1/nm) with a name.
#[derive(Debug, Clone, PartialEq)]
pub struct Structure {
    /// Name ("plane", "stripe", ..., or a user's "customN").
    pub name: String,
    /// The first harmonics q_j, 1/nm.
    pub wavevectors: Vec<[f64; 2]>,
}

/// q rotated by `angle` (radians).
pub fn rotate(q: [f64; 2], angle: f64) -> [f64; 2] {
    let (s, c) = angle.sin_cos();
    [c * q[0] - s * q[1], s * q[0] + c * q[1]]
}

impl Structure {
    /// The named structure built on the wavevector `q1` (its length and direction): `plane` (q1),
    /// `stripe` (q1, -q1), `orthogonal` (q1 and q1 turned by 90 degrees), `triangle` (three at 120
    /// degrees), `square` (+-q1 and +- q1 turned by 90 degrees), `hexagon` (six at 60 degrees).
    pub fn named(name: &str, q1: [f64; 2]) -> Option<Structure> {
        let turns: &[f64] = match name {
            "plane" => &[0.0],
            "stripe" => &[0.0, 180.0],
            "orthogonal" => &[0.0, 90.0],
            "triangle" => &[0.0, 120.0, 240.0],
            "square" => &[0.0, 180.0, 90.0, 270.0],
            "hexagon" => &[0.0, 60.0, 120.0, 180.0, 240.0, 300.0],
            _ => return None,
        };
        Some(Structure {
            name: name.to_string(),
            wavevectors: turns.iter().map(|d| rotate(q1, d.to_radians())).collect(),
        })
    }

    /// Every named structure on `q1`, in [`STRUCTURE_NAMES`] order.
    pub fn all_named(q1: [f64; 2]) -> Vec<Structure> {
        STRUCTURE_NAMES
            .iter()
            .filter_map(|n| Structure::named(n, q1))
            .collect()
    }

    /// Number of wavevectors n.
    pub fn len(&self) -> usize {
        self.wavevectors.len()
    }

    /// Whether the structure has no wavevector.
    pub fn is_empty(&self) -> bool {
        self.wavevectors.is_empty()
    }

    /// The longest wavevector, 1/nm.
    pub fn q_max(&self) -> f64 {
        longest(&self.wavevectors)
    }

    /// The ordered quadruples with q_j1 - q_j2 + q_j3 - q_j4 = 0, each once.
    pub fn quadruples(&self) -> Vec<[usize; 4]> {
        let qs = &self.wavevectors;
        let n = qs.len();
        let tol = 1e-9 * self.q_max().max(1e-300);
        let mut out = Vec::new();
        for j1 in 0..n {
            for j2 in 0..n {
                for j3 in 0..n {
                    for j4 in 0..n {
                        let s0 = qs[j1][0] - qs[j2][0] + qs[j3][0] - qs[j4][0];
                        let s1 = qs[j1][1] - qs[j2][1] + qs[j3][1] - qs[j4][1];
                        if s0.abs() <= tol && s1.abs() <= tol {
                            out.push([j1, j2, j3, j4]);
                        }
                    }
                }
            }
        }
        out
    }

    /// The harmonics q_i - q_j (i != j) of the second-order intraband density, distinct, each
    /// with the pairs (i, j) that produce it.
    pub fn difference_harmonics(&self) -> Vec<Harmonic> {
        let qs = &self.wavevectors;
        let tol = 1e-9 * self.q_max().max(1e-300);
        let mut out: Vec<Harmonic> = Vec::new();
        for (i, qi) in qs.iter().enumerate() {
            for (j, qj) in qs.iter().enumerate() {
                if i == j {
                    continue;
                }
                let d = [qi[0] - qj[0], qi[1] - qj[1]];
                if d[0].abs() <= tol && d[1].abs() <= tol {
                    continue;
                }
                match out
                    .iter_mut()
                    .find(|(p, _)| (p[0] - d[0]).abs() <= tol && (p[1] - d[1]).abs() <= tol)
                {
                    Some((_, pairs)) => pairs.push((i, j)),
                    None => out.push((d, vec![(i, j)])),
                }
            }
        }
        out
    }
}

/// The phase combination phi_j1 - phi_j2 + phi_j3 - phi_j4 of a quadruple.
pub fn quadruple_phase(phases: &[f64], j: [usize; 4]) -> f64 {
    phases[j[0]] - phases[j[1]] + phases[j[2]] - phases[j[3]]
}

/// The largest |q| of a list of wavevectors (1/nm; 0 for none).
pub fn longest(qs: &[[f64; 2]]) -> f64 {
    qs.iter().map(|q| q[0].hypot(q[1])).fold(0.0, f64::max)
}

/// Real-space average of |sum_j exp(i q_j.r)|^4 over a large square of side `side` (nm), on an
/// `n x n` grid: equals the number of quadruples for incommensurate-free sets once `side` spans
/// many periods. Used as an independent count in the tests.
pub fn real_space_fourth_moment(qs: &[[f64; 2]], side: f64, n: usize) -> f64 {
    fourth_moment_on_rectangle(qs, side, side, n)
}

/// As [`real_space_fourth_moment`] over a rectangle of sides `lx` x `ly` (nm) on an `n x n` grid.
pub fn fourth_moment_on_rectangle(qs: &[[f64; 2]], lx: f64, ly: f64, n: usize) -> f64 {
    let mut sum = 0.0;
    for iy in 0..n {
        for ix in 0..n {
            let x = lx * (ix as f64 + 0.5) / n as f64;
            let y = ly * (iy as f64 + 0.5) / n as f64;
            let (mut re, mut im) = (0.0, 0.0);
            for q in qs {
                let (s, c) = (q[0] * x + q[1] * y).sin_cos();
                re += c;
                im += s;
            }
            let m2 = re * re + im * im;
            sum += m2 * m2;
        }
    }
    sum / (n * n) as f64
}

/// A full turn, for callers that build directions.
pub const TURN: f64 = 2.0 * PI;

#[cfg(test)]
mod tests {
    use super::*;

    /// The quadruple counts of the named structures against the real-space average of
    /// |sum_j exp(i q_j.r)|^4 (the two are equal by Parseval's theorem; common practice). The grid
    /// covers whole periods of every structure: q = 2 pi/L times small integers, with the
    /// rotated sets on a grid commensurate with them.
    #[test]
    fn quadruple_counts_equal_the_real_space_fourth_moment() {
        // Square-lattice-friendly structures: q1 = 2 pi / 1 nm along x, the box 1 nm x 1 nm.
        for name in ["plane", "stripe", "orthogonal", "square"] {
            let s = Structure::named(name, [TURN, 0.0]).unwrap();
            let count = s.quadruples().len() as f64;
            let avg = real_space_fourth_moment(&s.wavevectors, 1.0, 64);
            assert!((count - avg).abs() < 1e-9, "{name}: {count} vs {avg}");
        }
        // 60- and 120-degree sets are periodic on a rectangle of sides 1 and sqrt(3) (q1 along
        // x of length 4 pi): average over that rectangle.
        for name in ["triangle", "hexagon"] {
            let s = Structure::named(name, [2.0 * TURN, 0.0]).unwrap();
            let count = s.quadruples().len() as f64;
            let avg = fourth_moment_on_rectangle(&s.wavevectors, 1.0, 3f64.sqrt(), 96);
            assert!((count - avg).abs() < 1e-8, "{name}: {count} vs {avg}");
        }
        // The counts themselves: 2 n^2 - n for sets without nontrivial coincidences.
        let count = |n: &str| Structure::named(n, [1.0, 0.0]).unwrap().quadruples().len();
        assert_eq!(count("plane"), 1);
        assert_eq!(count("orthogonal"), 6);
        assert_eq!(count("triangle"), 15);
        assert_eq!(count("stripe"), 6);
    }
}
