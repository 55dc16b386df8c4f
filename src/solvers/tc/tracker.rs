//! The temperature search at full accuracy of the modulated Tc: max over q of g chi(q, T) - 1
//! with the local maximum over q followed from temperature to temperature.

use super::qgrid::*;
use super::qsearch::QSearch;
use crate::error::NumericalError;

/// A full-accuracy point of the temperature search.
#[derive(Debug, Clone, Copy)]
pub(super) struct FinePoint {
    pub(super) t: f64,
    pub(super) q: [f64; 2],
    pub(super) value: f64,
    pub(super) shortfall: f64,
    /// A located maximum (not a single evaluation at a predicted q*).
    pub(super) refined: bool,
    pub(super) curv_r: f64,
    pub(super) curv_phi: f64,
}

/// max over q of g chi(q, T) - 1 at full accuracy along the temperature search, with the local
/// maximum over q followed from temperature to temperature (and every point kept, so that a
/// temperature asked for twice is not recomputed).
pub(super) struct Tracker<'a> {
    /// The channel's search over q (its counter counts every evaluation).
    pub(super) search: QSearch<'a>,
    pub(super) seed: [f64; 2],
    pub(super) points: Vec<FinePoint>,
}

impl<'a> Tracker<'a> {
    pub(super) fn new(search: QSearch<'a>, seed: [f64; 2]) -> Self {
        Tracker {
            search,
            seed,
            points: Vec::new(),
        }
    }

    pub(super) fn eval(&mut self, t: f64) -> Result<f64, NumericalError> {
        Ok(self.at(t)?.value - 1.0)
    }

    pub(super) fn at(&mut self, t: f64) -> Result<FinePoint, NumericalError> {
        if let Some(p) = self.points.iter().find(|p| p.t == t) {
            return Ok(*p);
        }
        let search = self.search;
        let acc = &search.solver.acc;
        let mut refined: Vec<FinePoint> =
            self.points.iter().filter(|p| p.refined).copied().collect();
        let dist = |p: &FinePoint| (p.t / t).ln().abs();
        refined.sort_by(|a, b| dist(a).total_cmp(&dist(b)));
        let parts = |q: [f64; 2]| (q[0].hypot(q[1]), q[1].atan2(q[0]));
        let start = match refined.as_slice() {
            [] => {
                let (m, _) = parts(self.seed);
                if m > 0.0 {
                    Start::at(self.seed, 0.05 * m, 0.05)
                } else {
                    // No wavevector to start from (the coarse maximum sat at q = 0).
                    let s = 0.05 * search.solver.q_scale(search.model, search.ch, t);
                    Start::at([s, 0.0], s, 0.05)
                }
            }
            [p] => {
                let (m, _) = parts(p.q);
                let d = dist(p);
                Start::at(
                    p.q,
                    (2.0 * d).clamp(MIN_STEP, 0.1) * m,
                    (2.0 * d).clamp(MIN_STEP, 0.1),
                )
            }
            [p1, p2, ..] => {
                let ((m1, f1), (m2, f2)) = (parts(p1.q), parts(p2.q));
                // Directions are defined modulo pi (chi(q) = chi(-q)).
                let df = (f2 - f1 + 0.5 * std::f64::consts::PI).rem_euclid(std::f64::consts::PI)
                    - 0.5 * std::f64::consts::PI;
                let w = (t - p1.t) / (p2.t - p1.t);
                let (m, f) = (m1 + w * (m2 - m1), f1 + w * df);
                let (dr, dp) = ((m - m1).abs(), (w * df).abs());
                let predicted = 2.0 * p1.shortfall + p1.curv_r * dr * dr + p1.curv_phi * dp * dp;
                let q = if search.iso { [m, 0.0] } else { polar(m, f) };
                if predicted <= VALUE_TOL * acc.rtol * p1.value.abs() {
                    search.count.set(search.count.get() + 1);
                    let value = search.solver.g_chi(search.model, search.ch, q, t, acc)?;
                    let p = FinePoint {
                        t,
                        q,
                        value,
                        shortfall: predicted,
                        refined: false,
                        curv_r: p1.curv_r,
                        curv_phi: p1.curv_phi,
                    };
                    self.points.push(p);
                    return Ok(p);
                }
                Start::at(q, (2.0 * dr).max(MIN_STEP * m), (2.0 * dp).max(MIN_STEP))
            }
        };
        let m = search.local_max(t, acc, start)?;
        let p = FinePoint {
            t,
            q: m.q,
            value: m.value,
            shortfall: m.shortfall,
            refined: true,
            curv_r: m.curv_r,
            curv_phi: m.curv_phi,
        };
        self.points.push(p);
        Ok(p)
    }
}
