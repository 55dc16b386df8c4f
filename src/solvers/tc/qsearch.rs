//! Searches over the wavevector at one temperature for the critical-temperature solver: the
//! coarse global grid, its refinement and the local maximisation of g chi(q, T) over q.

use super::parabolic::*;
use super::qgrid::*;
use super::TcSolver;
use crate::error::NumericalError;
use crate::kernels::Accuracy;
use crate::model::{Channel, Model};
use std::cell::Cell;

/// The search over q of one channel: the solver's settings, the channel, whether g chi depends
/// on |q| only, and the counter of evaluations (the temperature and accuracy vary per call).
#[derive(Clone, Copy)]
pub(super) struct QSearch<'a> {
    pub(super) solver: &'a TcSolver,
    pub(super) model: &'a Model,
    pub(super) ch: &'a Channel,
    pub(super) iso: bool,
    pub(super) count: &'a Cell<usize>,
}

impl QSearch<'_> {
    /// g chi(q, T) at fixed T as a function of q, counting evaluations in `count`.
    fn counted_g_chi<'b>(
        &'b self,
        t: f64,
        acc: &'b Accuracy,
    ) -> impl Fn([f64; 2]) -> Result<f64, NumericalError> + 'b {
        move |q| {
            self.count.set(self.count.get() + 1);
            self.solver.g_chi(self.model, self.ch, q, t, acc)
        }
    }

    /// The coarse global scan over q at one temperature: |q| on a grid of `q_points` up to
    /// 4 (|h| + 2T)/v (doubled, up to three times, while the best point sits at the edge) along
    /// `directions` directions over 180 degrees (one for an isotropic channel), and, where q = 0
    /// is the best grid point, a probe at a quarter of the spacing for a maximum below the first
    /// grid point.
    pub(super) fn grid_scan(&self, t: f64, acc: &Accuracy) -> Result<QGrid, NumericalError> {
        let eval = self.counted_g_chi(t, acc);
        let dirs: Vec<f64> = if self.iso {
            vec![0.0]
        } else {
            (0..self.solver.directions.max(1))
                .map(|i| std::f64::consts::PI * i as f64 / self.solver.directions.max(1) as f64)
                .collect()
        };
        let mut qmax = 2.0 * self.solver.q_scale(self.model, self.ch, t);
        // chi depends on q only through eps_a(k + q): its structure in q is smeared over
        // |q| ~ T / v_a.
        let v_max = {
            let a = &self.model.pockets()[self.ch.a()];
            [[1.0, 0.0], [0.0, 1.0], [0.6, 0.8], [-0.8, 0.6]]
                .iter()
                .map(|d| a.fermi_velocity_along(*d))
                .fold(0.0, f64::max)
        };
        // Where T is large enough, fewer points already resolve chi(q) on its thermal scale
        // (steps of at most 2 T / v_max, see `QGrid::upper_at`).
        let resolving = (qmax * v_max / (2.0 * t)).ceil() as usize + 1;
        let n = self.solver.q_points.min(resolving.max(MIN_Q_POINTS)).max(4);
        let zero = eval([0.0, 0.0])?;
        let mut values: Vec<Vec<f64>> = Vec::new();
        let mut extend = 0;
        loop {
            let dq = qmax / (n - 1) as f64;
            let mut rows = Vec::with_capacity(dirs.len());
            for (j, &phi) in dirs.iter().enumerate() {
                let mut row = Vec::with_capacity(n);
                row.push(zero);
                for i in 1..n {
                    // After doubling the range, the even points of the old grid are reused.
                    let v = match values.get(j) {
                        Some(old) if 2 * i < n => old[2 * i],
                        _ => eval(polar(dq * i as f64, phi))?,
                    };
                    row.push(v);
                }
                rows.push(row);
            }
            values = rows;
            let mut grid = QGrid::new(dirs.clone(), dq, zero, values.clone());
            grid.thermal_q = t / v_max;
            if grid.best.1 == n - 1 && extend < 3 {
                qmax *= 2.0;
                extend += 1;
                continue;
            }
            if grid.best.1 == 0 {
                // A maximum below the first grid point shows as a rise at a quarter spacing.
                let small = 0.25 * dq;
                let mut rise: Option<(usize, f64)> = None;
                for (j, &phi) in dirs.iter().enumerate() {
                    let v = eval(polar(small, phi))?;
                    if v > zero && rise.is_none_or(|(_, b)| v > b) {
                        rise = Some((j, v));
                    }
                }
                grid.small = rise.map(|(j, v)| (j, small, v));
            }
            return Ok(grid);
        }
    }

    /// Refinement of the best point of a grid scan (at the grid's accuracy). q = 0 when the
    /// uniform susceptibility is the largest.
    pub(super) fn refine_grid(
        &self,
        t: f64,
        acc: &Accuracy,
        grid: &QGrid,
        tol: Option<f64>,
    ) -> Result<QMax, NumericalError> {
        let zero = QMax {
            q: [0.0, 0.0],
            value: grid.zero,
            shortfall: 0.0,
            curv_r: 0.0,
            curv_phi: 0.0,
        };
        let (j, i) = grid.best;
        let start = if i == 0 {
            let Some((j, small, v)) = grid.small else {
                return Ok(zero);
            };
            Start {
                q: polar(small, grid.dirs[j]),
                step_r: small,
                step_phi: grid.dir_step(),
                known: [Some(grid.zero), Some(v), None],
                tol,
            }
        } else {
            grid.start_at(j, i, tol)
        };
        let m = self.local_max(t, acc, start)?;
        if m.value <= grid.zero {
            return Ok(zero);
        }
        Ok(m)
    }

    /// Local maximum of g chi(q, T) over q from `start`: successive parabolic interpolation in
    /// |q| and, for anisotropic channels, alternately in the direction (and along each round's
    /// displacement), until a round gains less than the start's tolerance (by default a
    /// hundredth of the susceptibility target).
    pub(super) fn local_max(
        &self,
        t: f64,
        acc: &Accuracy,
        start: Start,
    ) -> Result<QMax, NumericalError> {
        let eval = self.counted_g_chi(t, acc);
        let tol_rel = start.tol.unwrap_or(VALUE_TOL * acc.rtol);
        let mut qm = start.q[0].hypot(start.q[1]);
        let mut phi = if self.iso || qm == 0.0 {
            0.0
        } else {
            start.q[1].atan2(start.q[0])
        };
        let (mut sr, mut sp) = (start.step_r.abs(), start.step_phi.abs());
        let mut known = start.known;
        let scale = qm.max(sr);
        for round in 0..MAX_ROUNDS {
            let (q0, p0) = (qm, phi);
            let m = parabolic_max("q* magnitude", qm, sr, known, tol_rel, 1e-10 * scale, |x| {
                eval(polar(x.abs(), phi))
            })?;
            let round_start = m.start;
            qm = m.x.abs();
            if self.iso || qm == 0.0 {
                return Ok(QMax {
                    q: polar(qm, phi),
                    value: m.value,
                    shortfall: m.gain,
                    curv_r: m.curvature,
                    curv_phi: 0.0,
                });
            }
            let d = parabolic_max(
                "q* direction",
                phi,
                sp,
                [None, Some(m.value), None],
                tol_rel,
                1e-10,
                |p| eval(polar(qm, p)),
            )?;
            phi = d.x;
            let mut value = d.value;
            if value - round_start <= tol_rel * value.abs() {
                return Ok(QMax {
                    q: polar(qm, phi),
                    value,
                    shortfall: (value - round_start).max(0.0) + m.gain + d.gain,
                    curv_r: m.curvature,
                    curv_phi: d.curvature,
                });
            }
            let (dq, dp) = (qm - q0, phi - p0);
            if round > 0 {
                // A ridge across the axes: search along this round's displacement too.
                (qm, phi, value) = along_ridge(&eval, (qm, phi), (dq, dp), value, tol_rel)?;
            }
            sr = dq.abs().max(MIN_STEP * qm);
            sp = dp.abs().max(MIN_STEP);
            known = [None, Some(value), None];
        }
        Err(NumericalError::NotConverged {
            what: format!(
                "maximum of chi over q of channel {} at T = {t:.6e} meV",
                self.ch.label()
            ),
            iterations: MAX_ROUNDS,
            last_change: f64::NAN,
            target: tol_rel,
        })
    }

    /// One temperature of the downward scan: the coarse global estimate of max over q of g chi,
    /// refined only where the grid leaves a refinement able to reach 1.
    ///
    /// `prev` is the maximum refined at the previous (higher) temperature: where it lies next to
    /// the best grid point, the refinement starts from it with a short step, which locates a
    /// peak sharpened by the low temperature in fewer steps than from the grid spacing.
    pub(super) fn scan_point(
        &self,
        t: f64,
        prev: Option<[f64; 2]>,
    ) -> Result<ScanPoint, NumericalError> {
        let coarse = self.solver.acc.coarse();
        let grid = self.grid_scan(t, &coarse)?;
        let (j, i) = grid.best;
        if i == 0 && grid.small.is_none() {
            return Ok(ScanPoint {
                t,
                q: [0.0, 0.0],
                value: grid.zero,
                refined: true,
            });
        }
        if i > 0 && grid.upper_at(j, i) < 1.0 {
            return Ok(ScanPoint {
                t,
                q: grid.q_at(j, i),
                value: grid.values[j][i],
                refined: false,
            });
        }
        if let Some(p) = prev.filter(|_| i > 0) {
            let (pm, pphi) = (p[0].hypot(p[1]), p[1].atan2(p[0]));
            let dphi = (pphi - grid.dirs[j] + 0.5 * std::f64::consts::PI)
                .rem_euclid(std::f64::consts::PI)
                - 0.5 * std::f64::consts::PI;
            let close = (pm - grid.dq * i as f64).abs() <= grid.dq
                && (self.iso || dphi.abs() <= grid.dir_step());
            if close && pm > 0.0 {
                let start = Start {
                    q: p,
                    step_r: (4.0 * grid.thermal_q).max(MIN_STEP * pm).min(grid.dq),
                    step_phi: (4.0 * grid.thermal_q / pm).clamp(MIN_STEP, grid.dir_step()),
                    known: [None; 3],
                    tol: Some(SCAN_TOL),
                };
                let m = self.local_max(t, &coarse, start)?;
                if m.value >= grid.values[j][i] {
                    return Ok(ScanPoint {
                        t,
                        q: m.q,
                        value: m.value,
                        refined: true,
                    });
                }
            }
        }
        let m = self.refine_grid(t, &coarse, &grid, Some(SCAN_TOL))?;
        Ok(ScanPoint {
            t,
            q: m.q,
            value: m.value,
            refined: true,
        })
    }
}

/// One parabolic search from (|q|, phi) along the displacement (dq, dphi) of the last round,
/// taken where it gains; returns the new (|q|, phi, value).
fn along_ridge(
    eval: &impl Fn([f64; 2]) -> Result<f64, NumericalError>,
    (qm, phi): (f64, f64),
    (dq, dp): (f64, f64),
    value: f64,
    tol_rel: f64,
) -> Result<(f64, f64, f64), NumericalError> {
    let line = parabolic_max(
        "q* along the ridge",
        0.0,
        1.0,
        [None, Some(value), None],
        tol_rel,
        1e-9,
        |x| eval(polar(qm + x * dq, phi + x * dp)),
    )?;
    if line.value <= value {
        return Ok((qm, phi, value));
    }
    let (mut qm, mut phi) = (qm + line.x * dq, phi + line.x * dp);
    if qm < 0.0 {
        qm = -qm;
        phi += std::f64::consts::PI;
    }
    Ok((qm, phi, line.value))
}
