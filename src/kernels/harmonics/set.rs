//! Harmonic sets of the multi-wavevector mean field: the first harmonics of a structure, the
//! order-m windows around a centre state, and the Fourier set they hold (momenta in 1/nm). First
//! stage of the harmonic kernel: the ray evaluator and Omega work on these windows.

use crate::error::NumericalError;
use crate::model::structure::longest;
use num_complex::Complex64;

/// Which pocket of the channel a state belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Species {
    /// The electron-like pocket a.
    A,
    /// The hole-like pocket b.
    B,
}

/// One state of a window: its pocket and momentum offset from the centre state.
#[derive(Debug, Clone)]
pub(super) struct State {
    pub(super) species: Species,
    /// Momentum offset from the centre state (1/nm).
    pub(super) offset: [f64; 2],
    /// Steps from the centre.
    pub(super) distance: usize,
}

/// A coupling a_{p + o_a} - b_{p + o_b} with o_a - o_b = fourier[g].
#[derive(Debug, Clone, Copy)]
pub(super) struct Edge {
    pub(super) a: usize,
    pub(super) b: usize,
    pub(super) g: usize,
}

/// The states within m steps of a centre state and the couplings between them.
#[derive(Debug, Clone)]
pub(super) struct Window {
    pub(super) states: Vec<State>,
    pub(super) edges: Vec<Edge>,
    /// Edges at each state.
    pub(super) adjacency: Vec<Vec<usize>>,
    /// Largest |offset|, 1/nm.
    pub(super) reach: f64,
}

/// The harmonic truncation of a structure: its first harmonics, the order m, the Fourier set that
/// the order-m windows hold, and the windows themselves.
#[derive(Debug, Clone)]
pub struct HarmonicSet {
    /// First harmonics q_j (1/nm), as given.
    pub wavevectors: Vec<[f64; 2]>,
    /// Truncation order m (steps from the centre state).
    pub order: usize,
    /// The Fourier set: the first harmonics (in the order given), then the higher harmonics in the
    /// order the window search meets them.
    pub fourier: Vec<[f64; 2]>,
    /// Windows centred on a b state and on an a state.
    pub(super) windows: [Window; 2],
    /// Tolerance (1/nm) for identifying lattice vectors.
    pub(super) tol: f64,
}

/// x + y.
pub(super) fn add(x: [f64; 2], y: [f64; 2]) -> [f64; 2] {
    [x[0] + y[0], x[1] + y[1]]
}

/// x - y.
pub(super) fn sub(x: [f64; 2], y: [f64; 2]) -> [f64; 2] {
    [x[0] - y[0], x[1] - y[1]]
}

/// x and y agree componentwise to `tol`.
pub(super) fn same(x: [f64; 2], y: [f64; 2], tol: f64) -> bool {
    (x[0] - y[0]).abs() <= tol && (x[1] - y[1]).abs() <= tol
}

/// q rotated by `angle` (radians).
pub(super) fn rotate(q: [f64; 2], angle: f64) -> [f64; 2] {
    let (s, c) = angle.sin_cos();
    [c * q[0] - s * q[1], s * q[0] + c * q[1]]
}

/// States within `order` first-harmonic steps of a centre of species `centre`.
fn window_states(centre: Species, qs: &[[f64; 2]], order: usize, tol: f64) -> Vec<State> {
    let mut states = vec![State {
        species: centre,
        offset: [0.0, 0.0],
        distance: 0,
    }];
    let mut frontier = vec![0usize];
    for d in 1..=order {
        let mut next = Vec::new();
        for &i in &frontier {
            let (sp, o) = (states[i].species, states[i].offset);
            for &q in qs {
                let (nsp, no) = match sp {
                    Species::B => (Species::A, add(o, q)),
                    Species::A => (Species::B, sub(o, q)),
                };
                if !states
                    .iter()
                    .any(|s| s.species == nsp && same(s.offset, no, tol))
                {
                    states.push(State {
                        species: nsp,
                        offset: no,
                        distance: d,
                    });
                    next.push(states.len() - 1);
                }
            }
        }
        frontier = next;
    }
    states
}

impl HarmonicSet {
    /// The truncation of order `order` >= 1 of the structure with first harmonics `wavevectors`
    /// (1/nm, distinct).
    pub fn new(wavevectors: &[[f64; 2]], order: usize) -> Result<Self, NumericalError> {
        if wavevectors.is_empty() {
            return Err(NumericalError::BadArgument(
                "a structure needs at least one wavevector".into(),
            ));
        }
        if order == 0 {
            return Err(NumericalError::BadArgument(
                "the harmonic order must be at least 1".into(),
            ));
        }
        if wavevectors
            .iter()
            .any(|q| !q[0].is_finite() || !q[1].is_finite())
        {
            return Err(NumericalError::BadArgument(
                "wavevectors must be finite".into(),
            ));
        }
        let qmax = longest(wavevectors);
        let tol = 1e-9 * qmax + 1e-15;
        for (i, q) in wavevectors.iter().enumerate() {
            if wavevectors[..i].iter().any(|p| same(*p, *q, tol)) {
                return Err(NumericalError::BadArgument(format!(
                    "wavevector ({:.6}, {:.6})/nm is given twice",
                    q[0], q[1]
                )));
            }
        }
        let b_states = window_states(Species::B, wavevectors, order, tol);
        let a_states = window_states(Species::A, wavevectors, order, tol);
        let fourier: Vec<[f64; 2]> = b_states
            .iter()
            .filter(|s| s.species == Species::A)
            .map(|s| s.offset)
            .collect();
        let build = |states: Vec<State>| -> Window {
            let mut edges = Vec::new();
            for (i, si) in states.iter().enumerate() {
                if si.species != Species::A {
                    continue;
                }
                for (j, sj) in states.iter().enumerate() {
                    if sj.species != Species::B {
                        continue;
                    }
                    let d = sub(si.offset, sj.offset);
                    if let Some(g) = fourier.iter().position(|f| same(*f, d, tol)) {
                        edges.push(Edge { a: i, b: j, g });
                    }
                }
            }
            let mut adjacency = vec![Vec::new(); states.len()];
            for (e, ed) in edges.iter().enumerate() {
                adjacency[ed.a].push(e);
                adjacency[ed.b].push(e);
            }
            let reach = states
                .iter()
                .map(|s| s.offset[0].hypot(s.offset[1]))
                .fold(0.0, f64::max);
            Window {
                states,
                edges,
                adjacency,
                reach,
            }
        };
        Ok(HarmonicSet {
            wavevectors: wavevectors.to_vec(),
            order,
            windows: [build(b_states), build(a_states)],
            fourier,
            tol,
        })
    }

    /// Index of the lattice vector `g` in the Fourier set.
    pub fn index(&self, g: [f64; 2]) -> Option<usize> {
        self.fourier.iter().position(|f| same(*f, g, self.tol))
    }

    /// Number of states in the b-centred and the a-centred window.
    pub fn window_sizes(&self) -> [usize; 2] {
        [self.windows[0].states.len(), self.windows[1].states.len()]
    }

    /// Longest first harmonic, 1/nm.
    pub fn q_max(&self) -> f64 {
        longest(&self.wavevectors)
    }

    /// The distinct differences q_i - q_j != 0 of the first harmonics (the wavevectors of the
    /// second-order intraband density modulation), in order of first appearance.
    pub fn difference_wavevectors(&self) -> Vec<[f64; 2]> {
        let mut out: Vec<[f64; 2]> = Vec::new();
        for qi in &self.wavevectors {
            for qj in &self.wavevectors {
                let d = sub(*qi, *qj);
                if same(d, [0.0, 0.0], self.tol) || out.iter().any(|o| same(*o, d, self.tol)) {
                    continue;
                }
                out.push(d);
            }
        }
        out
    }

    /// The components Delta_G (meV) placed on the Fourier set, zero elsewhere; an error for a
    /// G outside it.
    pub fn place(
        &self,
        components: &[([f64; 2], Complex64)],
    ) -> Result<Vec<Complex64>, NumericalError> {
        let mut out = vec![Complex64::new(0.0, 0.0); self.fourier.len()];
        for (g, d) in components {
            match self.index(*g) {
                Some(i) => out[i] += *d,
                None => {
                    return Err(NumericalError::BadArgument(format!(
                        "component G = ({:.6}, {:.6})/nm is not in the Fourier set of order {}",
                        g[0], g[1], self.order
                    )))
                }
            }
        }
        Ok(out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;
    /// Window sizes and Fourier sets by hand (common practice: counting lattice points). Stripe
    /// (q, -q): order 2 holds b0, a(+-q), b(+-2q) and the first harmonics only; order 3 adds
    /// a(+-3q) and the harmonics +-3q. One wavevector: the window closes at two states, at every
    /// order.
    #[test]
    fn window_sizes_and_fourier_sets() {
        let q = [0.05, 0.0];
        let mq = [-0.05, 0.0];
        let s2 = HarmonicSet::new(&[q, mq], 2).unwrap();
        assert_eq!(s2.window_sizes(), [5, 5]);
        assert_eq!(s2.fourier.len(), 2);
        let s3 = HarmonicSet::new(&[q, mq], 3).unwrap();
        assert_eq!(s3.window_sizes(), [7, 7]);
        assert_eq!(s3.fourier.len(), 4);
        assert!(s3.index([0.15, 0.0]).is_some() && s3.index([-0.15, 0.0]).is_some());
        for m in 1..5 {
            let p = HarmonicSet::new(&[q], m).unwrap();
            assert_eq!(p.window_sizes(), [2, 2]);
            assert_eq!(p.fourier.len(), 1);
        }
        // Square, order 3: q_i - q_j + q_k over the four unit vectors reaches the odd points
        // with |n| + |l| <= 3: 4 at distance 1, 8 of type (2, 1), 4 of type (3, 0).
        let sq = HarmonicSet::new(&[[1.0, 0.0], [-1.0, 0.0], [0.0, 1.0], [0.0, -1.0]], 3).unwrap();
        assert_eq!(sq.fourier.len(), 16);
        // Hexagon, order 3: q_i - q_j + q_k includes G = 0 (q(0) - q(60) + q(120) = 0).
        let hex: Vec<[f64; 2]> = (0..6)
            .map(|j| rotate([1.0, 0.0], PI / 3.0 * j as f64))
            .collect();
        let hx = HarmonicSet::new(&hex, 3).unwrap();
        assert!(hx.index([0.0, 0.0]).is_some());
        assert_eq!(HarmonicSet::new(&hex, 2).unwrap().fourier.len(), 6);
    }
}
