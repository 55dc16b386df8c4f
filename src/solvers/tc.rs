//! Critical temperatures from the linearised gap equation g chi(q, T) = 1 (physics.md section 3):
//! Tc(q) as the largest root in T (scan from the top, then Brent), the uniform Tc = Tc(0), and
//! the modulated Tc = max over q of Tc(q) with its wavevector q* (global scan over |q| and, for
//! anisotropic channels, the direction; then Brent refinement). Temperatures are k_B T in meV.

use crate::error::NumericalError;
use crate::kernels::susceptibility::{susceptibility, susceptibility_checked};
use crate::kernels::{Accuracy, Shell};
use crate::model::{Channel, Model};
use crate::solvers::optimize::brent_max;
use crate::solvers::roots::brent_root;
use std::cell::Cell;

/// Tolerances of the critical-temperature searches.
#[derive(Debug, Clone, Copy)]
pub struct TcSolver {
    /// Accuracy of each susceptibility.
    pub acc: Accuracy,
    /// Relative tolerance of the temperature root.
    pub t_rel: f64,
    /// Lowest temperature searched for the uniform Tc, as a fraction of the nested Tc
    /// 1.134 Lambda exp(-1/lambda).
    pub uniform_floor: f64,
    /// Lowest temperature searched for the modulated Tc (the angular structure of chi(q) sharpens
    /// as T falls, so this floor is higher).
    pub modulated_floor: f64,
    /// Points of the coarse |q| scan.
    pub q_points: usize,
    /// Directions of the coarse scan over q's direction for anisotropic channels (over 180 degrees).
    pub directions: usize,
}

impl Default for TcSolver {
    fn default() -> Self {
        TcSolver {
            acc: Accuracy::default(),
            t_rel: 1e-10,
            uniform_floor: 1e-4,
            modulated_floor: 5e-3,
            q_points: 16,
            directions: 6,
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TcStatus {
    /// An instability was found at `tc`.
    Unstable,
    /// No instability above the temperature floor (tc = 0).
    NoInstability,
}

/// Outcome of one critical-temperature search.
#[derive(Debug, Clone, serde::Serialize)]
pub struct TcReport {
    /// k_B Tc in meV (0 when there is no instability).
    pub tc: f64,
    /// Estimated absolute error of tc in meV (susceptibility error over the slope, plus the
    /// bracket).
    pub error: f64,
    pub status: TcStatus,
    /// Why no instability was found, where none was.
    pub reason: Option<String>,
    /// Susceptibility evaluations used.
    pub evaluations: usize,
}

/// The modulated instability: Tc at the best wavevector.
#[derive(Debug, Clone, serde::Serialize)]
pub struct ModulatedTc {
    pub tc: TcReport,
    /// q* in 1/nm (lab frame); along +x for an isotropic channel; zero when the uniform state wins.
    pub q: [f64; 2],
    /// chi depends only on |q| (circular pockets, rotation-invariant form factor).
    pub isotropic: bool,
    /// Rough uncertainty of |q*| in 1/nm: the maximum in q is flat, so q* is known to fewer
    /// digits than Tc.
    pub q_error: f64,
}

/// Scale of |q| (1/nm) for searches over the wavevector: 2 (|h| + 2T)/v, with v the smallest
/// Fermi velocity of the channel's pockets over a few directions and |h| the largest |h_k| on the
/// nesting line (v q/2 ~ h is where the modulated instability lies).
pub fn q_search_scale(model: &Model, ch: &Channel, t: f64) -> f64 {
    let (a, b) = (&model.pockets()[ch.a()], &model.pockets()[ch.b()]);
    let mut v = f64::INFINITY;
    for d in [[1.0, 0.0], [0.0, 1.0], [0.6, 0.8], [-0.8, 0.6]] {
        v = v
            .min(a.fermi_velocity_along(d))
            .min(b.fermi_velocity_along(d));
    }
    let h = ch
        .mismatch()
        .abs()
        .max(ch.mismatch_range()[0].abs())
        .max(ch.mismatch_range()[1].abs());
    2.0 * (h + 2.0 * t) / v
}

/// The nested Tc 1.134 Lambda exp(-1/lambda) in meV (BCS weak coupling), the reference scale of
/// the searches; None when lambda = 0.
pub fn nested_tc(ch: &Channel) -> Option<f64> {
    let l = ch.lambda();
    if l > 0.0 {
        Some(
            2.0 * crate::special::EULER_GAMMA.exp() / std::f64::consts::PI
                * ch.cutoff()
                * (-1.0 / l).exp(),
        )
    } else {
        None
    }
}

impl TcSolver {
    /// g chi(q, T).
    pub fn g_chi(
        &self,
        model: &Model,
        ch: &Channel,
        q: [f64; 2],
        t: f64,
        acc: &Accuracy,
    ) -> Result<f64, NumericalError> {
        let shell = Shell::for_channel(model, ch, q)?;
        Ok(ch.g() * susceptibility(&shell, t, acc)?.value)
    }

    /// A temperature above every instability of the channel (g chi(0, T) < 1 there).
    fn top_temperature(
        &self,
        model: &Model,
        ch: &Channel,
        count: &Cell<usize>,
    ) -> Result<f64, NumericalError> {
        let mut t = nested_tc(ch)
            .map(|t| 1.5 * t)
            .unwrap_or(ch.cutoff())
            .min(ch.cutoff());
        for _ in 0..40 {
            count.set(count.get() + 1);
            if self.g_chi(model, ch, [0.0, 0.0], t, &self.acc.coarse())? < 0.9 {
                return Ok(t);
            }
            t *= 2.0;
        }
        Err(NumericalError::UnstableAtTop(format!(
            "channel {}: g chi stays above 1 up to T = {t:.3e} meV",
            ch.label()
        )))
    }

    /// Largest root in T of `f` (f < 0 at `t_top`), scanning down to `t_floor`, then Brent.
    /// Where no sign change is found the maximum over T is located before concluding.
    fn largest_root<F>(
        &self,
        what: &str,
        t_top: f64,
        t_floor: f64,
        x_rel: f64,
        mut f: F,
    ) -> Result<Option<(f64, f64, f64)>, NumericalError>
    where
        F: FnMut(f64) -> Result<f64, NumericalError>,
    {
        let ratio = 0.8;
        let mut prev = (t_top, f(t_top)?);
        if prev.1 >= 0.0 {
            return Err(NumericalError::UnstableAtTop(format!(
                "{what}: unstable at the top temperature {t_top:.4e} meV"
            )));
        }
        let mut best = prev;
        let mut grid = vec![prev];
        let mut t = t_top;
        while t > t_floor {
            t = (t * ratio).max(t_floor);
            let v = f(t)?;
            grid.push((t, v));
            if v >= 0.0 {
                let r = brent_root(what, t, prev.0, x_rel, &mut f)?;
                return Ok(Some((r.x, t, prev.0)));
            }
            if v > best.1 {
                best = (t, v);
            }
            prev = (t, v);
            if t <= t_floor {
                break;
            }
        }
        // No sign change on the grid: the curve may poke above zero between two grid points
        // (the uniform line bends back near its nose). Maximise over ln T around the best point.
        let i = grid.iter().position(|p| p.0 == best.0).unwrap_or(0);
        if i == 0 || i + 1 >= grid.len() {
            return Ok(None);
        }
        let (lo, hi) = (grid[i + 1].0.ln(), grid[i - 1].0.ln());
        let m = brent_max(what, lo, hi, 1e-6, |x| f(x.exp()))?;
        if m.value >= 0.0 {
            let tm = m.x.exp();
            let r = brent_root(what, tm, grid[i - 1].0, x_rel, &mut f)?;
            return Ok(Some((r.x, tm, grid[i - 1].0)));
        }
        Ok(None)
    }

    /// Error of a root T of g chi(q, T) = 1 from the checked susceptibility and the slope.
    fn root_error(
        &self,
        model: &Model,
        ch: &Channel,
        q: [f64; 2],
        t: f64,
        count: &Cell<usize>,
    ) -> Result<(f64, f64), NumericalError> {
        let shell = Shell::for_channel(model, ch, q)?;
        let checked = susceptibility_checked(&shell, t, &self.acc)?;
        let dt = 1e-4 * t;
        let up = ch.g() * susceptibility(&shell, t + dt, &self.acc)?.value;
        let dn = ch.g() * susceptibility(&shell, t - dt, &self.acc)?.value;
        count.set(count.get() + 4);
        let slope = ((up - dn) / (2.0 * dt)).abs();
        let err = ch.g() * checked.error / slope.max(1e-300) + self.t_rel * t;
        Ok((err, slope))
    }

    /// Tc(q) for a fixed wavevector.
    pub fn at_q(
        &self,
        model: &Model,
        ch: &Channel,
        q: [f64; 2],
    ) -> Result<TcReport, NumericalError> {
        let count = Cell::new(0);
        let Some(t_ref) = nested_tc(ch) else {
            return Ok(no_instability(
                "the pair density of states vanishes (the form factor is zero on the nesting line)"
                    .into(),
                0,
            ));
        };
        let t_top = self.top_temperature(model, ch, &count)?;
        let floor = self.uniform_floor * t_ref;
        let shell = Shell::for_channel(model, ch, q)?;
        let found = self.largest_root(
            &format!("Tc of channel {}", ch.label()),
            t_top,
            floor,
            self.t_rel,
            |t| {
                count.set(count.get() + 1);
                Ok(ch.g() * susceptibility(&shell, t, &self.acc)?.value - 1.0)
            },
        )?;
        match found {
            Some((tc, _, _)) => {
                let (error, _) = self.root_error(model, ch, q, tc, &count)?;
                if error > 1e-5 * tc {
                    return Err(NumericalError::NotConverged {
                        what: format!("Tc of channel {}", ch.label()),
                        iterations: count.get(),
                        last_change: error,
                        target: 1e-5 * tc,
                    });
                }
                Ok(TcReport {
                    tc,
                    error,
                    status: TcStatus::Unstable,
                    reason: None,
                    evaluations: count.get(),
                })
            }
            None => Ok(no_instability(
                format!(
                    "g chi(q, T) < 1 for every T above the floor {:.3e} meV",
                    floor
                ),
                count.get(),
            )),
        }
    }

    /// The uniform Tc = Tc(q = 0).
    pub fn uniform(&self, model: &Model, ch: &Channel) -> Result<TcReport, NumericalError> {
        self.at_q(model, ch, [0.0, 0.0])
    }

    /// Scale of |q| for the search: see [`q_search_scale`].
    fn q_scale(&self, model: &Model, ch: &Channel, t: f64) -> f64 {
        q_search_scale(model, ch, t)
    }

    /// max over q of g chi(q, T): global coarse scan, then refinement. Returns (q, g chi).
    pub fn best_q(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
        acc: &Accuracy,
        count: &Cell<usize>,
    ) -> Result<([f64; 2], f64), NumericalError> {
        let iso = Shell::for_channel(model, ch, [0.0, 0.0])?.isotropic;
        let grid = self.grid_scan(model, ch, t, acc, iso, count)?;
        let m = self.refine_grid(model, ch, t, acc, iso, &grid, None, count)?;
        Ok((m.q, m.value))
    }

    /// Global maximum over q of g chi(q, T) at accuracy `self.acc`: coarse scan, then local
    /// refinement. Returns (q*, g chi(q*, T)); q* = 0 when the uniform susceptibility is largest.
    pub fn max_over_q(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
    ) -> Result<([f64; 2], f64), NumericalError> {
        let count = Cell::new(0);
        let iso = Shell::for_channel(model, ch, [0.0, 0.0])?.isotropic;
        let coarse = self.acc.coarse();
        let grid = self.grid_scan(model, ch, t, &coarse, iso, &count)?;
        let c = self.refine_grid(model, ch, t, &coarse, iso, &grid, Some(SCAN_TOL), &count)?;
        let zero = [0.0, 0.0];
        if c.q == zero {
            return Ok((zero, self.g_chi(model, ch, zero, t, &self.acc)?));
        }
        let qm = c.q[0].hypot(c.q[1]);
        let f = self.local_max(
            model,
            ch,
            t,
            &self.acc,
            iso,
            Start::at(c.q, 0.02 * qm, 0.02),
            &count,
        )?;
        if f.q == zero {
            return Ok((zero, self.g_chi(model, ch, zero, t, &self.acc)?));
        }
        Ok((f.q, f.value))
    }

    /// Curvature d^2 chi / dq^2 at q = 0 along the unit vector `dir` (1/(meV nm^2) nm^2), by
    /// Richardson-extrapolated central differences (chi(q) = chi(-q)) with steps well below T/v.
    /// Returns (curvature, error estimate).
    pub fn chi_q_curvature(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
        dir: [f64; 2],
    ) -> Result<(f64, f64), NumericalError> {
        let acc = Accuracy {
            rtol: 1e-12,
            ..self.acc
        };
        let v = {
            let (a, b) = (&model.pockets()[ch.a()], &model.pockets()[ch.b()]);
            a.fermi_velocity_along(dir).max(b.fermi_velocity_along(dir))
        };
        let step = 0.1 * t / v;
        let chi = |q: f64| -> Result<f64, NumericalError> {
            let shell = Shell::for_channel(model, ch, [q * dir[0], q * dir[1]])?;
            Ok(susceptibility(&shell, t, &acc)?.value)
        };
        let c0 = chi(0.0)?;
        let c1 = 2.0 * (chi(step)? - c0) / (step * step);
        let c2 = 2.0 * (chi(0.5 * step)? - c0) / (0.25 * step * step);
        let c4 = 2.0 * (chi(0.25 * step)? - c0) / (0.0625 * step * step);
        let r1 = (4.0 * c2 - c1) / 3.0;
        let r2 = (4.0 * c4 - c2) / 3.0;
        Ok((r2, (r2 - r1).abs()))
    }

    /// The coarse global scan over q at one temperature: |q| on a grid of `q_points` up to
    /// 4 (|h| + 2T)/v (doubled, up to three times, while the best point sits at the edge) along
    /// `directions` directions over 180 degrees (one for an isotropic channel), and, where q = 0
    /// is the best grid point, a probe at a quarter of the spacing for a maximum below the first
    /// grid point.
    fn grid_scan(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
        acc: &Accuracy,
        iso: bool,
        count: &Cell<usize>,
    ) -> Result<QGrid, NumericalError> {
        let eval = |q: [f64; 2]| -> Result<f64, NumericalError> {
            count.set(count.get() + 1);
            self.g_chi(model, ch, q, t, acc)
        };
        let dirs: Vec<f64> = if iso {
            vec![0.0]
        } else {
            (0..self.directions.max(1))
                .map(|i| std::f64::consts::PI * i as f64 / self.directions.max(1) as f64)
                .collect()
        };
        let mut qmax = 2.0 * self.q_scale(model, ch, t);
        // chi depends on q only through eps_a(k + q): its structure in q is smeared over
        // |q| ~ T / v_a.
        let v_max = {
            let a = &model.pockets()[ch.a()];
            [[1.0, 0.0], [0.0, 1.0], [0.6, 0.8], [-0.8, 0.6]]
                .iter()
                .map(|d| a.fermi_velocity_along(*d))
                .fold(0.0, f64::max)
        };
        // Where T is large enough, fewer points already resolve chi(q) on its thermal scale
        // (steps of at most 2 T / v_max, see `QGrid::upper_at`).
        let resolving = (qmax * v_max / (2.0 * t)).ceil() as usize + 1;
        let n = self.q_points.min(resolving.max(MIN_Q_POINTS)).max(4);
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
    #[allow(clippy::too_many_arguments)]
    fn refine_grid(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
        acc: &Accuracy,
        iso: bool,
        grid: &QGrid,
        tol: Option<f64>,
        count: &Cell<usize>,
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
            Start {
                q: grid.q_at(j, i),
                step_r: grid.dq,
                step_phi: grid.dir_step(),
                known: [
                    Some(grid.values[j][i - 1]),
                    Some(grid.values[j][i]),
                    grid.values[j].get(i + 1).copied(),
                ],
                tol,
            }
        };
        let m = self.local_max(model, ch, t, acc, iso, start, count)?;
        if m.value <= grid.zero {
            return Ok(zero);
        }
        Ok(m)
    }

    /// Local maximum of g chi(q, T) over q from `start`: successive parabolic interpolation in
    /// |q| and, for anisotropic channels, alternately in the direction (and along each round's
    /// displacement), until a round gains less than the start's tolerance (by default a
    /// hundredth of the susceptibility target).
    #[allow(clippy::too_many_arguments)]
    fn local_max(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
        acc: &Accuracy,
        iso: bool,
        start: Start,
        count: &Cell<usize>,
    ) -> Result<QMax, NumericalError> {
        let eval = |q: [f64; 2]| -> Result<f64, NumericalError> {
            count.set(count.get() + 1);
            self.g_chi(model, ch, q, t, acc)
        };
        let tol_rel = start.tol.unwrap_or(VALUE_TOL * acc.rtol);
        let mut qm = start.q[0].hypot(start.q[1]);
        let mut phi = if iso || qm == 0.0 {
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
            if iso || qm == 0.0 {
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
                let line = parabolic_max(
                    "q* along the ridge",
                    0.0,
                    1.0,
                    [None, Some(value), None],
                    tol_rel,
                    1e-9,
                    |x| eval(polar(qm + x * dq, phi + x * dp)),
                )?;
                if line.value > value {
                    qm += line.x * dq;
                    phi += line.x * dp;
                    if qm < 0.0 {
                        qm = -qm;
                        phi += std::f64::consts::PI;
                    }
                    value = line.value;
                }
            }
            sr = dq.abs().max(MIN_STEP * qm);
            sp = dp.abs().max(MIN_STEP);
            known = [None, Some(value), None];
        }
        Err(NumericalError::NotConverged {
            what: format!(
                "maximum of chi over q of channel {} at T = {t:.6e} meV",
                ch.label()
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
    fn scan_point(
        &self,
        model: &Model,
        ch: &Channel,
        t: f64,
        iso: bool,
        prev: Option<[f64; 2]>,
        count: &Cell<usize>,
    ) -> Result<ScanPoint, NumericalError> {
        let coarse = self.acc.coarse();
        let grid = self.grid_scan(model, ch, t, &coarse, iso, count)?;
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
                && (iso || dphi.abs() <= grid.dir_step());
            if close && pm > 0.0 {
                let start = Start {
                    q: p,
                    step_r: (4.0 * grid.thermal_q).max(MIN_STEP * pm).min(grid.dq),
                    step_phi: (4.0 * grid.thermal_q / pm).clamp(MIN_STEP, grid.dir_step()),
                    known: [None; 3],
                    tol: Some(SCAN_TOL),
                };
                let m = self.local_max(model, ch, t, &coarse, iso, start, count)?;
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
        let m = self.refine_grid(model, ch, t, &coarse, iso, &grid, Some(SCAN_TOL), count)?;
        Ok(ScanPoint {
            t,
            q: m.q,
            value: m.value,
            refined: true,
        })
    }

    /// The modulated Tc: the largest T at which max over q of g chi(q, T) = 1, with q*.
    ///
    /// Strategy: if the uniform instability exists and q = 0 is the global maximum of chi(q) at
    /// the uniform Tc, the uniform state is the instability (chi at higher T favours q = 0 even
    /// more). Otherwise a downward scan in T (ratio 0.8) from a temperature where the normal
    /// state is stable, with a coarse global search over q at each temperature, brackets the
    /// largest root (down to the uniform Tc, where max over q of g chi >= 1, or to the floor);
    /// where no sign change is found the maximum over T is located before concluding there is
    /// none. The root is then solved at full accuracy in ln T (secant steps to a tight bracket,
    /// then Brent), with the local maximum over q followed from temperature to temperature: the
    /// maximum is flat, so where the predicted move of q* costs less than the value tolerance a
    /// single evaluation at the predicted q* serves. A global check over q at the root follows.
    pub fn modulated(
        &self,
        model: &Model,
        ch: &Channel,
        uniform: &TcReport,
    ) -> Result<ModulatedTc, NumericalError> {
        let count = Cell::new(0);
        let iso = Shell::for_channel(model, ch, [0.0, 0.0])?.isotropic;
        let none = |reason: String, n: usize| ModulatedTc {
            tc: no_instability(reason, n),
            q: [0.0, 0.0],
            isotropic: iso,
            q_error: 0.0,
        };
        let uniform_wins = || ModulatedTc {
            tc: uniform.clone(),
            q: [0.0, 0.0],
            isotropic: iso,
            q_error: 0.0,
        };
        let Some(t_ref) = nested_tc(ch) else {
            return Ok(none(
                "the pair density of states vanishes (the form factor is zero on the nesting line)"
                    .into(),
                0,
            ));
        };
        let coarse = self.acc.coarse();
        let unstable = uniform.status == TcStatus::Unstable;
        // The lowest point of the scan: the uniform Tc, where max over q of g chi >= 1, or the
        // floor. If q = 0 is the global maximum at the uniform Tc, the uniform state wins. That
        // check is made first where the uniform Tc is high; where it is low (evaluations there
        // are costly) it is made only if the scan from the top reaches it.
        let t_top = self.top_temperature(model, ch, &count)?;
        let bottom = if unstable {
            let tu = uniform.tc;
            if tu >= LOW_UNIFORM_TC * t_ref {
                let (q1, v1) = self.best_q(model, ch, tu, &coarse, &count)?;
                if q1 == [0.0, 0.0] {
                    return Ok(uniform_wins());
                }
                Bottom::Known(ScanPoint {
                    t: tu,
                    q: q1,
                    value: v1.max(1.0),
                    refined: true,
                })
            } else {
                Bottom::Uniform(tu)
            }
        } else {
            Bottom::Floor(self.modulated_floor * t_ref)
        };
        let floor = bottom.t();
        let what = format!("modulated Tc of channel {}", ch.label());
        let (lo, hi) = match self.scan_down(model, ch, iso, t_top, bottom, &what, &count)? {
            Scan::Bracket(lo, hi) => (lo, hi),
            Scan::UniformWins => return Ok(uniform_wins()),
            Scan::Nothing => {
                return Ok(none(
                    format!(
                        "max over q of g chi(q, T) < 1 for every T above the floor {floor:.3e} meV"
                    ),
                    count.get(),
                ))
            }
        };
        // Fine stage in x = ln T.
        let mut track = Tracker::new(self, model, ch, iso, &count, lo.q);
        let (x_lo, x_hi) = (lo.t.ln(), hi.t.ln());
        let slope = {
            let s = (hi.value - lo.value) / (x_hi - x_lo);
            if s < 0.0 {
                s
            } else {
                -ch.lambda().max(1e-3)
            }
        };
        // Limits of the bracket search: the coarse rule may misplace the root slightly, but
        // never below the uniform Tc or the floor, nor above the top temperature.
        let lim_lo = if unstable {
            floor.ln()
        } else {
            (x_lo - 0.1).max(floor.ln())
        };
        let lim_hi = (x_hi + 0.1).min(t_top.ln());
        let guess = (x_lo - (lo.value - 1.0) / slope).clamp(x_lo, x_hi);
        let bracket = self.fine_bracket(&mut track, guess, slope, lim_lo, lim_hi)?;
        let Some((a, b)) = bracket else {
            // max over q of g chi < 1 already at the uniform Tc at full accuracy: the gain of
            // q != 0 is below the resolution, and the uniform state is the instability.
            if unstable {
                return Ok(uniform_wins());
            }
            return Err(NumericalError::NotBracketed {
                what,
                lo: lim_lo.exp(),
                hi: lim_hi.exp(),
            });
        };
        let root_t = if a == b {
            a.exp()
        } else {
            brent_root(&what, a.exp(), b.exp(), self.t_rel, |t| track.eval(t))?.x
        };
        let fin = track.at(root_t)?;
        let q = fin.q;
        // Global check at the root: no other wavevector may be more unstable.
        let grid = self.grid_scan(model, ch, root_t, &coarse, iso, &count)?;
        let vl =
            ch.g() * susceptibility(&Shell::for_channel(model, ch, q)?, root_t, &coarse)?.value;
        count.set(count.get() + 1);
        let qn = q[0].hypot(q[1]);
        let near = |p: [f64; 2]| {
            (p[0] - q[0])
                .hypot(p[1] - q[1])
                .min((p[0] + q[0]).hypot(p[1] + q[1]))
                <= 0.1 * qn
        };
        let limit = vl * (1.0 + 1e-4);
        if grid.zero > limit {
            return Err(self.competing(ch, [0.0, 0.0], q));
        }
        for (j, i) in grid.local_maxima() {
            if near(grid.q_at(j, i)) || grid.upper_at(j, i) <= limit {
                continue;
            }
            let start = Start {
                q: grid.q_at(j, i),
                step_r: grid.dq,
                step_phi: grid.dir_step(),
                known: [
                    Some(grid.values[j][i - 1]),
                    Some(grid.values[j][i]),
                    grid.values[j].get(i + 1).copied(),
                ],
                tol: Some(COMPETITOR_TOL),
            };
            let m = self.local_max(model, ch, root_t, &coarse, iso, start, &count)?;
            if m.value > limit && !near(m.q) {
                return Err(self.competing(ch, m.q, q));
            }
        }
        if unstable && root_t <= uniform.tc + uniform.error {
            return Ok(uniform_wins());
        }
        let (error, slope) = self.root_error(model, ch, q, root_t, &count)?;
        let error = error + fin.shortfall / slope.max(1e-300);
        if error > 1e-5 * root_t {
            return Err(NumericalError::NotConverged {
                what,
                iterations: count.get(),
                last_change: error,
                target: 1e-5 * root_t,
            });
        }
        let q = if iso {
            [qn, 0.0]
        } else if q[0] < 0.0 || (q[0] == 0.0 && q[1] < 0.0) {
            [-q[0], -q[1]]
        } else {
            q
        };
        Ok(ModulatedTc {
            tc: TcReport {
                tc: root_t,
                error,
                status: TcStatus::Unstable,
                reason: None,
                evaluations: count.get(),
            },
            q,
            isotropic: iso,
            q_error: 1e-3 * qn,
        })
    }

    fn competing(&self, ch: &Channel, qg: [f64; 2], q: [f64; 2]) -> NumericalError {
        NumericalError::CompetingMaxima(format!(
            "modulated Tc of channel {}: a second maximum of chi(q) at q = ({:.4e}, {:.4e})/nm competes with q = ({:.4e}, {:.4e})/nm",
            ch.label(), qg[0], qg[1], q[0], q[1]
        ))
    }

    /// Downward scan in T (ratio 0.8) from `t_top` to the bottom for the largest T where the
    /// global maximum over q of g chi reaches 1. At the uniform Tc (the bottom where there is a
    /// uniform instability) max over q of g chi >= 1 holds. Where no sign change is found, the
    /// maximum over T around the best point is located before concluding.
    #[allow(clippy::too_many_arguments)]
    fn scan_down(
        &self,
        model: &Model,
        ch: &Channel,
        iso: bool,
        t_top: f64,
        bottom: Bottom,
        what: &str,
        count: &Cell<usize>,
    ) -> Result<Scan, NumericalError> {
        let ratio = 0.8;
        let t_stop = bottom.t();
        let top = self.scan_point(model, ch, t_top, iso, None, count)?;
        if top.value >= 1.0 {
            return Err(NumericalError::UnstableAtTop(format!(
                "{what}: unstable at the top temperature {t_top:.4e} meV"
            )));
        }
        let mut pts = vec![top];
        let mut t = t_top;
        while t > t_stop {
            t = (t * ratio).max(t_stop);
            let p = match bottom {
                Bottom::Known(b) if t <= t_stop => b,
                Bottom::Uniform(tu) if t <= t_stop => {
                    let (q1, v1) = self.best_q(model, ch, tu, &self.acc.coarse(), count)?;
                    if q1 == [0.0, 0.0] {
                        return Ok(Scan::UniformWins);
                    }
                    ScanPoint {
                        t: tu,
                        q: q1,
                        value: v1.max(1.0),
                        refined: true,
                    }
                }
                _ => {
                    let prev = pts
                        .last()
                        .filter(|p| p.refined && p.q != [0.0, 0.0])
                        .map(|p| p.q);
                    self.scan_point(model, ch, t, iso, prev, count)?
                }
            };
            let prev = pts.last().copied().unwrap_or(p);
            if p.value >= 1.0 {
                return Ok(Scan::Bracket(p, prev));
            }
            pts.push(p);
        }
        // No sign change on the grid: the curve may poke above 1 between two grid points.
        let mut i = 0;
        for (k, p) in pts.iter().enumerate() {
            if p.value > pts[i].value {
                i = k;
            }
        }
        if i == 0 || i + 1 >= pts.len() {
            return Ok(Scan::Nothing);
        }
        let (lo, hi) = (pts[i + 1].t.ln(), pts[i - 1].t.ln());
        let coarse = self.acc.coarse();
        let global = |t: f64| -> Result<QMax, NumericalError> {
            let grid = self.grid_scan(model, ch, t, &coarse, iso, count)?;
            self.refine_grid(model, ch, t, &coarse, iso, &grid, None, count)
        };
        let m = brent_max(what, lo, hi, 1e-6, |x| Ok(global(x.exp())?.value))?;
        if m.value >= 1.0 {
            let t = m.x.exp();
            let r = global(t)?;
            let p = ScanPoint {
                t,
                q: r.q,
                value: r.value,
                refined: true,
            };
            return Ok(Scan::Bracket(p, pts[i - 1]));
        }
        Ok(Scan::Nothing)
    }

    /// A bracket [a, b] of x = ln T with a sign change of max over q of g chi - 1 at full
    /// accuracy, by secant steps from `x0` (overshooting by half a step so that the root is
    /// passed), within [lim_lo, lim_hi]. None when the lower limit is reached still stable.
    fn fine_bracket(
        &self,
        track: &mut Tracker,
        x0: f64,
        slope: f64,
        lim_lo: f64,
        lim_hi: f64,
    ) -> Result<Option<(f64, f64)>, NumericalError> {
        let mut slope = slope;
        let (mut x, mut f) = (x0, track.eval(x0.exp())?);
        for _ in 0..30 {
            if f == 0.0 {
                return Ok(Some((x, x)));
            }
            let dx = (-f / slope * 1.5).clamp(-0.25, 0.25);
            let dx = if dx.abs() < 1e-9 {
                1e-9 * dx.signum()
            } else {
                dx
            };
            let x1 = (x + dx).clamp(lim_lo, lim_hi);
            if x1 == x {
                if x1 == lim_lo && f < 0.0 {
                    return Ok(None);
                }
                break;
            }
            let f1 = track.eval(x1.exp())?;
            if (f1 >= 0.0) != (f >= 0.0) {
                return Ok(Some(if x1 < x { (x1, x) } else { (x, x1) }));
            }
            let s = (f1 - f) / (x1 - x);
            slope = if s < 0.0 { s } else { 2.0 * slope };
            x = x1;
            f = f1;
        }
        Err(NumericalError::NotBracketed {
            what: "modulated Tc at full accuracy".into(),
            lo: lim_lo.exp(),
            hi: lim_hi.exp(),
        })
    }
}

fn no_instability(reason: String, evaluations: usize) -> TcReport {
    TcReport {
        tc: 0.0,
        error: 0.0,
        status: TcStatus::NoInstability,
        reason: Some(reason),
        evaluations,
    }
}

/// Relative value tolerance of the local maximisation over q, as a fraction of the
/// susceptibility target: the maximum is located until the parabola predicts less gain.
const VALUE_TOL: f64 = 1e-2;

/// Rounds (|q|, then direction, then along the displacement) of the local search over q.
const MAX_ROUNDS: usize = 20;

/// Relative value tolerance of the refinements in the coarse temperature scan (and of the
/// coarse stage of `max_over_q`): the coarse integration target itself.
const SCAN_TOL: f64 = 1e-6;

/// Relative value tolerance when a second maximum of chi(q) is refined at the root (it competes
/// if it exceeds the maximum found by 1e-4 relative).
const COMPETITOR_TOL: f64 = 1e-6;

/// Smallest relative step of the parabolic searches in |q| (and, in radians, in direction):
/// the drop of chi over the stencil must stay well above the integration noise.
const MIN_STEP: f64 = 2e-3;

/// In the scans, a refinement near a grid point is assumed to gain at most this multiple of
/// what the parabola through the neighbouring grid values predicts, plus `UPPER_MARGIN`.
const UPPER_FACTOR: f64 = 4.0;
const UPPER_MARGIN: f64 = 2e-3;

/// Below this fraction of the nested Tc, the check of q = 0 at the uniform Tc waits until the
/// downward scan reaches the uniform Tc (chi at low T is costly, and a modulated Tc well above
/// the uniform one is found first).
const LOW_UNIFORM_TC: f64 = 0.25;

/// The bottom of the downward temperature scan.
#[derive(Debug, Clone, Copy)]
enum Bottom {
    /// The uniform Tc, with the coarse maximum over q there (q != 0).
    Known(ScanPoint),
    /// The uniform Tc, not yet examined.
    Uniform(f64),
    /// The temperature floor (no uniform instability).
    Floor(f64),
}

impl Bottom {
    fn t(&self) -> f64 {
        match self {
            Bottom::Known(p) => p.t,
            Bottom::Uniform(t) | Bottom::Floor(t) => *t,
        }
    }
}

/// Outcome of the downward scan.
enum Scan {
    /// (unstable end, stable end).
    Bracket(ScanPoint, ScanPoint),
    /// q = 0 is the global maximum at the uniform Tc.
    UniformWins,
    /// No instability above the floor.
    Nothing,
}

/// Fewest points of the coarse |q| scan (where the thermal scale allows fewer than `q_points`).
const MIN_Q_POINTS: usize = 6;

/// Growth of the bracketing steps (the golden ratio) and the golden section.
const GROW: f64 = 1.618_033_988_749_895;
const GOLDEN_SECTION: f64 = 0.381_966_011_250_105_1;

/// The point at |q| = m along the direction phi.
fn polar(m: f64, phi: f64) -> [f64; 2] {
    [m * phi.cos(), m * phi.sin()]
}

/// Where a local search over q starts: the point, the steps of the first stencil in |q| and in
/// direction, and values of g chi already known at (|q| - step_r, |q|, |q| + step_r).
#[derive(Debug, Clone, Copy)]
struct Start {
    q: [f64; 2],
    step_r: f64,
    step_phi: f64,
    known: [Option<f64>; 3],
    /// Relative value tolerance, where not the default.
    tol: Option<f64>,
}

impl Start {
    fn at(q: [f64; 2], step_r: f64, step_phi: f64) -> Self {
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
struct QMax {
    q: [f64; 2],
    value: f64,
    /// Estimated shortfall of `value` below the maximum (the gain the last parabolas still
    /// predict).
    shortfall: f64,
    /// -d^2(g chi)/d|q|^2 (nm^2) and -d^2(g chi)/dphi^2 at the maximum.
    curv_r: f64,
    curv_phi: f64,
}

/// One temperature of the downward scan.
#[derive(Debug, Clone, Copy)]
struct ScanPoint {
    t: f64,
    q: [f64; 2],
    /// max over q of g chi: refined, or the best grid value where no refinement can reach 1.
    value: f64,
    refined: bool,
}

/// The coarse global scan over q at one temperature.
#[derive(Debug, Clone)]
struct QGrid {
    /// Directions of q over [0, pi).
    dirs: Vec<f64>,
    /// Spacing of |q|.
    dq: f64,
    /// g chi at q = 0.
    zero: f64,
    /// values[j][i] = g chi at |q| = i dq along dirs[j] (values[j][0] = zero).
    values: Vec<Vec<f64>>,
    /// The best grid point (direction, magnitude index); magnitude index 0 is q = 0.
    best: (usize, usize),
    /// Where q = 0 is the best grid point: the direction with the largest rise at a quarter
    /// spacing, that |q| and the value there.
    small: Option<(usize, f64, f64)>,
    /// T / v_a (1/nm), v_a the largest Fermi velocity of pocket a: chi(q, T) is smooth on
    /// scales of |q| above this (its structure is thermally smeared over v_a q ~ T), so parabolas through grid values are meaningful
    /// only where the grid steps are at most twice this.
    thermal_q: f64,
}

impl QGrid {
    fn new(dirs: Vec<f64>, dq: f64, zero: f64, values: Vec<Vec<f64>>) -> Self {
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

    fn q_at(&self, j: usize, i: usize) -> [f64; 2] {
        polar(self.dq * i as f64, self.dirs[j])
    }

    fn dir_step(&self) -> f64 {
        std::f64::consts::PI / self.dirs.len() as f64
    }

    /// Neighbouring directions of j at the same |q| (chi(q) = chi(-q) closes the circle).
    fn dir_neighbours(&self, j: usize, i: usize) -> (f64, f64) {
        let n = self.dirs.len();
        (self.values[(j + n - 1) % n][i], self.values[(j + 1) % n][i])
    }

    /// Value a refinement near grid point (j, i >= 1) might reach: the gains of the parabolas
    /// through its neighbours in |q| and in direction, times a safety factor, plus a margin.
    /// Infinite (no bound) at the edge of the grid and where the grid steps exceed the thermal
    /// scale, on which chi(q) can have sharp peaks between grid points.
    fn upper_at(&self, j: usize, i: usize) -> f64 {
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
    fn local_maxima(&self) -> Vec<(usize, usize)> {
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
fn parabola_gain(l: f64, m: f64, r: f64) -> f64 {
    let k = 2.0 * m - l - r;
    let s = 0.5 * (r - l);
    if k <= 0.0 {
        return (l.max(r) - m).max(0.0);
    }
    let u = (s / k).clamp(-1.0, 1.0);
    (s * u - 0.5 * k * u * u).max(0.0)
}

/// A located one-dimensional maximum.
#[derive(Debug, Clone, Copy)]
struct Max1 {
    x: f64,
    value: f64,
    /// The value at the starting point.
    start: f64,
    /// Gain the last parabola still predicts above `value`.
    gain: f64,
    /// -f'' of the last parabola (>= 0).
    curvature: f64,
}

/// Maximum near `x0` of a smooth function: a bracketing triple a < b < c with
/// f(b) >= f(a), f(c) (stepping out from x0 -+ step), then successive parabolic interpolation,
/// with a golden-section test step where the vertex falls on the middle point. It stops, after at
/// least one step, when the parabola through the triple predicts a gain below tol_rel |f(b)|, or
/// when the triple is narrower than `x_res`. `known` holds values already at hand at
/// (x0 - step, x0, x0 + step).
fn parabolic_max<F>(
    what: &str,
    x0: f64,
    step: f64,
    known: [Option<f64>; 3],
    tol_rel: f64,
    x_res: f64,
    mut f: F,
) -> Result<Max1, NumericalError>
where
    F: FnMut(f64) -> Result<f64, NumericalError>,
{
    if !(step > 0.0 && step.is_finite() && x0.is_finite()) {
        return Err(NumericalError::RootSearch(format!(
            "{what}: bad starting step {step:e} at {x0:e}"
        )));
    }
    let mut get = |x: f64, k: Option<f64>| -> Result<(f64, f64), NumericalError> {
        Ok((
            x,
            match k {
                Some(v) => v,
                None => f(x)?,
            },
        ))
    };
    let mut b = get(x0, known[1])?;
    let start = b.1;
    let mut a = get(x0 - step, known[0])?;
    let mut c = get(x0 + step, known[2])?;
    let mut outward = 0;
    while a.1 > b.1 || c.1 > b.1 {
        outward += 1;
        if outward > 60 {
            return Err(NumericalError::NotBracketed {
                what: what.to_string(),
                lo: a.0,
                hi: c.0,
            });
        }
        if a.1 > c.1 {
            c = b;
            b = a;
            a = get(b.0 - GROW * (c.0 - b.0), None)?;
        } else {
            a = b;
            b = c;
            c = get(b.0 + GROW * (b.0 - a.0), None)?;
        }
    }
    let mut stepped = false;
    for _ in 0..100 {
        let (p, r) = (b.0 - a.0, c.0 - b.0);
        let (da, dc) = (b.1 - a.1, b.1 - c.1);
        let k = 2.0 * (da / p + dc / r) / (p + r);
        if k.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
            // Equal values: the maximum is b to the resolution of f.
            return Ok(Max1 {
                x: b.0,
                value: b.1,
                start,
                gain: 0.0,
                curvature: 0.0,
            });
        }
        let slope = da / p - 0.5 * k * p;
        let shift = slope / k;
        let gain = 0.5 * slope * shift;
        if (stepped && gain <= tol_rel * b.1.abs()) || c.0 - a.0 <= x_res {
            return Ok(Max1 {
                x: b.0,
                value: b.1,
                start,
                gain,
                curvature: k,
            });
        }
        let u = if shift.abs() >= 0.02 * p.min(r) {
            b.0 + shift
        } else if r > p {
            b.0 + GOLDEN_SECTION * r
        } else {
            b.0 - GOLDEN_SECTION * p
        };
        let u = u.clamp(a.0 + 1e-3 * p, c.0 - 1e-3 * r);
        let fu = get(u, None)?;
        stepped = true;
        if fu.1 >= b.1 {
            if u < b.0 {
                c = b;
            } else {
                a = b;
            }
            b = fu;
        } else if u < b.0 {
            a = fu;
        } else {
            c = fu;
        }
    }
    Err(NumericalError::NotConverged {
        what: what.to_string(),
        iterations: 100,
        last_change: c.0 - a.0,
        target: x_res,
    })
}

/// A full-accuracy point of the temperature search.
#[derive(Debug, Clone, Copy)]
struct FinePoint {
    t: f64,
    q: [f64; 2],
    value: f64,
    shortfall: f64,
    /// A located maximum (not a single evaluation at a predicted q*).
    refined: bool,
    curv_r: f64,
    curv_phi: f64,
}

/// max over q of g chi(q, T) - 1 at full accuracy along the temperature search, with the local
/// maximum over q followed from temperature to temperature (and every point kept, so that a
/// temperature asked for twice is not recomputed).
struct Tracker<'a> {
    solver: &'a TcSolver,
    model: &'a Model,
    ch: &'a Channel,
    iso: bool,
    count: &'a Cell<usize>,
    seed: [f64; 2],
    points: Vec<FinePoint>,
}

impl<'a> Tracker<'a> {
    fn new(
        solver: &'a TcSolver,
        model: &'a Model,
        ch: &'a Channel,
        iso: bool,
        count: &'a Cell<usize>,
        seed: [f64; 2],
    ) -> Self {
        Tracker {
            solver,
            model,
            ch,
            iso,
            count,
            seed,
            points: Vec::new(),
        }
    }

    fn eval(&mut self, t: f64) -> Result<f64, NumericalError> {
        Ok(self.at(t)?.value - 1.0)
    }

    fn at(&mut self, t: f64) -> Result<FinePoint, NumericalError> {
        if let Some(p) = self.points.iter().find(|p| p.t == t) {
            return Ok(*p);
        }
        let acc = &self.solver.acc;
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
                    let s = 0.05 * self.solver.q_scale(self.model, self.ch, t);
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
                let q = if self.iso { [m, 0.0] } else { polar(m, f) };
                if predicted <= VALUE_TOL * acc.rtol * p1.value.abs() {
                    self.count.set(self.count.get() + 1);
                    let value = self.solver.g_chi(self.model, self.ch, q, t, acc)?;
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
        let m = self
            .solver
            .local_max(self.model, self.ch, t, acc, self.iso, start, self.count)?;
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

#[cfg(test)]
mod tests {
    use super::*;

    /// The parabolic search finds a smooth maximum from a start off to one side (stepping out),
    /// to the value tolerance, and rejects a zero step. cos has its maximum 1 at 0.3 here.
    #[test]
    fn parabolic_search_finds_a_smooth_maximum() {
        let mut n = 0;
        let m = parabolic_max("cos", 2.0, 0.1, [None; 3], 1e-12, 1e-14, |x| {
            n += 1;
            Ok((x - 0.3f64).cos())
        })
        .unwrap();
        assert!((m.value - 1.0).abs() < 1e-11, "{}", m.value);
        assert!((m.x - 0.3).abs() < 1e-5, "{}", m.x);
        assert!(m.gain <= 1e-12 && (m.curvature - 1.0).abs() < 0.05);
        assert!(n < 40, "{n} evaluations");
        assert!(parabolic_max("zero", 1.0, 0.0, [None; 3], 1e-9, 1e-12, |x| Ok(-x * x)).is_err());
    }

    /// The gain of the parabola through three equally spaced values: zero for a symmetric
    /// triple, 1/8 of the second difference for a one-sided one, never negative.
    #[test]
    fn parabola_gain_of_grid_triples() {
        assert_eq!(parabola_gain(0.0, 1.0, 0.0), 0.0);
        assert!((parabola_gain(0.0, 1.0, 1.0) - 0.125).abs() < 1e-15);
        assert_eq!(parabola_gain(1.0, 0.5, 0.0), 0.5);
    }
}
