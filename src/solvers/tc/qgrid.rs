//! The coarse global grid over q of the critical-temperature solver and the small records the
//! wavevector searches pass around (starting points, located maxima, scan points).

/// Relative value tolerance of the local maximisation over q, as a fraction of the
/// susceptibility target: the maximum is located until the parabola predicts less gain.
pub(super) const VALUE_TOL: f64 = 1e-2;

/// Rounds (|q|, then direction, then along the displacement) of the local search over q.
pub(super) const MAX_ROUNDS: usize = 20;

/// Relative value tolerance of the refinements in the coarse temperature scan (and of the
/// coarse stage of `max_over_q`): the coarse integration target itself.
pub(super) const SCAN_TOL: f64 = 1e-6;

/// Relative value tolerance when a second maximum of chi(q) is refined at the root (it competes
/// if it exceeds the maximum found by 1e-4 relative).
pub(super) const COMPETITOR_TOL: f64 = 1e-6;

/// Smallest relative step of the parabolic searches in |q| (and, in radians, in direction):
/// the drop of chi over the stencil must stay well above the integration noise.
pub(super) const MIN_STEP: f64 = 2e-3;

/// In the scans, a refinement near a grid point is assumed to gain at most this multiple of
/// what the parabola through the neighbouring grid values predicts, plus `UPPER_MARGIN`.
pub(super) const UPPER_FACTOR: f64 = 4.0;
pub(super) const UPPER_MARGIN: f64 = 2e-3;

/// Fewest points of the coarse |q| scan (where the thermal scale allows fewer than `q_points`).
pub(super) const MIN_Q_POINTS: usize = 6;

/// The point at |q| = m along the direction phi.
pub(super) fn polar(m: f64, phi: f64) -> [f64; 2] {
    [m * phi.cos(), m * phi.sin()]
}

/// Where a local search over q starts: the point, the steps of the first stencil in |q| and in
/// direction, and values of g chi already known at (|q| - step_r, |q|, |q| + step_r).
#[derive(Debug, Clone, Copy)]
pub(super) struct Start {
    pub(super) q: [f64; 2],
    pub(super) step_r: f64,
    pub(super) step_phi: f64,
    pub(super) known: [Option<f64>; 3],
    /// Relative value tolerance, where not the default.
    pub(super) tol: Option<f64>,
}

impl Start {
    pub(super) fn at(q: [f64; 2], step_r: f64, step_phi: f64) -> Self {
        Start {
            q,
            step_r,
            step_phi,
            known: [None; 3],
            tol: None,
        }
    }
}

/// A local maximum of g chi over q at one temperature.
#[derive(Debug, Clone, Copy)]
pub(super) struct QMax {
    pub(super) q: [f64; 2],
    pub(super) value: f64,
    /// Estimated shortfall of `value` below the maximum (the gain the last parabolas still
    /// predict).
    pub(super) shortfall: f64,
    /// -d^2(g chi)/d|q|^2 (nm^2) and -d^2(g chi)/dphi^2 at the maximum.
    pub(super) curv_r: f64,
    pub(super) curv_phi: f64,
}

/// One temperature of the downward scan.
#[derive(Debug, Clone, Copy)]
pub(super) struct ScanPoint {
    pub(super) t: f64,
    pub(super) q: [f64; 2],
    /// max over q of g chi: refined, or the best grid value where no refinement can reach 1.
    pub(super) value: f64,
    pub(super) refined: bool,
}

/// The coarse global scan over q at one temperature.
#[derive(Debug, Clone)]
pub(super) struct QGrid {
    /// Directions of q over [0, pi).
    pub(super) dirs: Vec<f64>,
    /// Spacing of |q|.
    pub(super) dq: f64,
    /// g chi at q = 0.
    pub(super) zero: f64,
    /// values[j][i] = g chi at |q| = i dq along dirs[j] (values[j][0] = zero).
    pub(super) values: Vec<Vec<f64>>,
    /// The best grid point (direction, magnitude index); magnitude index 0 is q = 0.
    pub(super) best: (usize, usize),
    /// Where q = 0 is the best grid point: the direction with the largest rise at a quarter
    /// spacing, that |q| and the value there.
    pub(super) small: Option<(usize, f64, f64)>,
    /// T / v_a (1/nm), v_a the largest Fermi velocity of pocket a: chi(q, T) is smooth on
    /// scales of |q| above this (its structure is thermally smeared over v_a q ~ T), so parabolas through grid values are meaningful
    /// only where the grid steps are at most twice this.
    pub(super) thermal_q: f64,
}

impl QGrid {
    pub(super) fn new(dirs: Vec<f64>, dq: f64, zero: f64, values: Vec<Vec<f64>>) -> Self {
        let mut best = (0, 0);
        let mut best_v = zero;
        for (j, row) in values.iter().enumerate() {
            for (i, &v) in row.iter().enumerate().skip(1) {
                if v > best_v {
                    best_v = v;
                    best = (j, i);
                }
            }
        }
        QGrid {
            dirs,
            dq,
            zero,
            values,
            best,
            small: None,
            thermal_q: 0.0,
        }
    }

    pub(super) fn q_at(&self, j: usize, i: usize) -> [f64; 2] {
        polar(self.dq * i as f64, self.dirs[j])
    }

    /// A local search from grid point (j, i >= 1) with the grid spacing as its steps and the
    /// neighbouring values in |q| as known values; relative value tolerance `tol`.
    pub(super) fn start_at(&self, j: usize, i: usize, tol: Option<f64>) -> Start {
        Start {
            q: self.q_at(j, i),
            step_r: self.dq,
            step_phi: self.dir_step(),
            known: [
                Some(self.values[j][i - 1]),
                Some(self.values[j][i]),
                self.values[j].get(i + 1).copied(),
            ],
            tol,
        }
    }

    pub(super) fn dir_step(&self) -> f64 {
        std::f64::consts::PI / self.dirs.len() as f64
    }

    /// Neighbouring directions of j at the same |q| (chi(q) = chi(-q) closes the circle).
    pub(super) fn dir_neighbours(&self, j: usize, i: usize) -> (f64, f64) {
        let n = self.dirs.len();
        (self.values[(j + n - 1) % n][i], self.values[(j + 1) % n][i])
    }

    /// Value a refinement near grid point (j, i >= 1) might reach: the gains of the parabolas
    /// through its neighbours in |q| and in direction, times a safety factor, plus a margin.
    /// Infinite (no bound) at the edge of the grid and where the grid steps exceed the thermal
    /// scale, on which chi(q) can have sharp peaks between grid points.
    pub(super) fn upper_at(&self, j: usize, i: usize) -> f64 {
        let row = &self.values[j];
        let v = row[i];
        let Some(&right) = row.get(i + 1) else {
            return f64::INFINITY;
        };
        let tangential = if self.dirs.len() > 1 {
            self.dq * (i + 1) as f64 * self.dir_step()
        } else {
            0.0
        };
        if self.dq.max(tangential) > 2.0 * self.thermal_q {
            return f64::INFINITY;
        }
        let mut gain = parabola_gain(row[i - 1], v, right);
        if self.dirs.len() > 1 {
            let (l, r) = self.dir_neighbours(j, i);
            gain += parabola_gain(l, v, r);
        }
        v + UPPER_FACTOR * gain + UPPER_MARGIN
    }

    /// Grid points (i >= 1, not at the edge) at least as high as their neighbours in |q| and in
    /// direction.
    pub(super) fn local_maxima(&self) -> Vec<(usize, usize)> {
        let mut out = Vec::new();
        for (j, row) in self.values.iter().enumerate() {
            for i in 1..row.len().saturating_sub(1) {
                let v = row[i];
                if v < row[i - 1] || v < row[i + 1] {
                    continue;
                }
                if self.dirs.len() > 1 {
                    let (l, r) = self.dir_neighbours(j, i);
                    if v < l || v < r {
                        continue;
                    }
                }
                out.push((j, i));
            }
        }
        out
    }
}

/// Largest gain over the middle value of the parabola through three equally spaced values,
/// within the span of the three points.
pub(super) fn parabola_gain(l: f64, m: f64, r: f64) -> f64 {
    let k = 2.0 * m - l - r;
    let s = 0.5 * (r - l);
    if k <= 0.0 {
        return (l.max(r) - m).max(0.0);
    }
    let u = (s / k).clamp(-1.0, 1.0);
    (s * u - 0.5 * k * u * u).max(0.0)
}
