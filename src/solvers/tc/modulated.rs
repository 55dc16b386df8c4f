//! The modulated critical temperature: the largest T at which max over q of g chi(q, T) = 1,
//! by a downward temperature scan, a fine bracket in ln T and Brent, with a global check at the root.

use super::qgrid::*;
use super::qsearch::QSearch;
use super::tracker::{FinePoint, Tracker};
use super::{nested_tc, no_instability, ModulatedTc, TcReport, TcSolver, TcStatus, TcStop};
use crate::error::NumericalError;
use crate::kernels::susceptibility::susceptibility;
use crate::kernels::Shell;
use crate::model::{Channel, Model};
use crate::solvers::optimize::brent_max;
use crate::solvers::roots::brent_root;
use std::cell::Cell;

impl TcSolver {
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
        let out = Outcomes { iso, uniform };
        let Some(t_ref) = nested_tc(ch) else {
            let reason =
                "the pair density of states vanishes (the form factor is zero on the nesting line)";
            return Ok(out.none(reason.into(), 0, TcStop::NoPairDensity));
        };
        let unstable = uniform.status == TcStatus::Unstable;
        let t_top = self.top_temperature(model, ch, &count)?;
        let Some(bottom) = self.scan_bottom(model, ch, uniform, t_ref, &count)? else {
            return Ok(out.uniform_wins());
        };
        let floor = bottom.t();
        let what = format!("modulated Tc of channel {}", ch.label());
        let (lo, hi) = match self.scan_down(model, ch, iso, t_top, bottom, &what, &count)? {
            Scan::Bracket(lo, hi) => (lo, hi),
            Scan::UniformWins => return Ok(out.uniform_wins()),
            Scan::Nothing => {
                let reason = format!(
                    "max over q of g chi(q, T) < 1 for every T above the floor {floor:.3e} meV"
                );
                return Ok(out.none(reason, count.get(), TcStop::BelowFloor));
            }
        };
        // Fine stage in x = ln T.
        let mut track = Tracker::new(self.q_search(model, ch, iso, &count), lo.q);
        let limits = FineLimits {
            floor,
            t_top,
            unstable,
        };
        let Some(root_t) = self.fine_root(&mut track, lo, hi, limits, &what)? else {
            // max over q of g chi < 1 already at the uniform Tc at full accuracy: the gain of
            // q != 0 is below the resolution, and the uniform state is the instability.
            return Ok(out.uniform_wins());
        };
        let fin = track.at(root_t)?;
        self.check_global(model, ch, iso, root_t, fin.q, &count)?;
        if unstable && root_t <= uniform.tc + uniform.error {
            return Ok(out.uniform_wins());
        }
        self.modulated_report(model, ch, iso, root_t, fin, &what, &count)
    }

    /// The bottom of the downward scan: the uniform Tc (checked at once where it is high: None
    /// when q = 0 is the global maximum there, so that the uniform state wins), or the floor.
    fn scan_bottom(
        &self,
        model: &Model,
        ch: &Channel,
        uniform: &TcReport,
        t_ref: f64,
        count: &Cell<usize>,
    ) -> Result<Option<Bottom>, NumericalError> {
        // The lowest point of the scan: the uniform Tc, where max over q of g chi >= 1, or the
        // floor. If q = 0 is the global maximum at the uniform Tc, the uniform state wins. That
        // check is made first where the uniform Tc is high; where it is low (evaluations there
        // are costly) it is made only if the scan from the top reaches it.
        if uniform.status != TcStatus::Unstable {
            return Ok(Some(Bottom::Floor(self.modulated_floor * t_ref)));
        }
        let tu = uniform.tc;
        if tu < LOW_UNIFORM_TC * t_ref {
            return Ok(Some(Bottom::Uniform(tu)));
        }
        let (q1, v1) = self.best_q(model, ch, tu, &self.acc.coarse(), count)?;
        if q1 == [0.0, 0.0] {
            return Ok(None);
        }
        Ok(Some(Bottom::Known(ScanPoint {
            t: tu,
            q: q1,
            value: v1.max(1.0),
            refined: true,
        })))
    }

    /// The root in T at full accuracy between the coarse bracket (lo unstable, hi stable): secant
    /// steps in ln T to a tight bracket, then Brent. None when the lower limit is reached still
    /// stable with a uniform instability (the uniform state wins).
    fn fine_root(
        &self,
        track: &mut Tracker,
        lo: ScanPoint,
        hi: ScanPoint,
        lim: FineLimits,
        what: &str,
    ) -> Result<Option<f64>, NumericalError> {
        let (x_lo, x_hi) = (lo.t.ln(), hi.t.ln());
        let slope = {
            let s = (hi.value - lo.value) / (x_hi - x_lo);
            if s < 0.0 {
                s
            } else {
                -track.search.ch.lambda().max(1e-3)
            }
        };
        // Limits of the bracket search: the coarse rule may misplace the root slightly, but
        // never below the uniform Tc or the floor, nor above the top temperature.
        let lim_lo = if lim.unstable {
            lim.floor.ln()
        } else {
            (x_lo - 0.1).max(lim.floor.ln())
        };
        let lim_hi = (x_hi + 0.1).min(lim.t_top.ln());
        let guess = (x_lo - (lo.value - 1.0) / slope).clamp(x_lo, x_hi);
        let Some((a, b)) = self.fine_bracket(track, guess, slope, lim_lo, lim_hi)? else {
            if lim.unstable {
                return Ok(None);
            }
            return Err(NumericalError::NotBracketed {
                what: what.to_string(),
                lo: lim_lo.exp(),
                hi: lim_hi.exp(),
            });
        };
        if a == b {
            return Ok(Some(a.exp()));
        }
        let r = brent_root(what, a.exp(), b.exp(), self.t_rel, |t| track.eval(t))?;
        Ok(Some(r.x))
    }

    /// Global check at the root: no other wavevector may be more unstable than q (by 1e-4
    /// relative at the coarse accuracy); a competing maximum is an error.
    fn check_global(
        &self,
        model: &Model,
        ch: &Channel,
        iso: bool,
        root_t: f64,
        q: [f64; 2],
        count: &Cell<usize>,
    ) -> Result<(), NumericalError> {
        let coarse = self.acc.coarse();
        let grid = self
            .q_search(model, ch, iso, count)
            .grid_scan(root_t, &coarse)?;
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
            let start = grid.start_at(j, i, Some(COMPETITOR_TOL));
            let m = self
                .q_search(model, ch, iso, count)
                .local_max(root_t, &coarse, start)?;
            if m.value > limit && !near(m.q) {
                return Err(self.competing(ch, m.q, q));
            }
        }
        Ok(())
    }

    /// The report of a modulated root at `root_t` with the full-accuracy point `fin`: its error
    /// (the checked susceptibility over the slope, plus the shortfall of the maximum over q),
    /// rejected above 1e-5 relative; q* in the half plane q_x > 0 (along +x if isotropic).
    #[allow(clippy::too_many_arguments)]
    fn modulated_report(
        &self,
        model: &Model,
        ch: &Channel,
        iso: bool,
        root_t: f64,
        fin: FinePoint,
        what: &str,
        count: &Cell<usize>,
    ) -> Result<ModulatedTc, NumericalError> {
        let q = fin.q;
        let qn = q[0].hypot(q[1]);
        let (error, slope) = self.root_error(model, ch, q, root_t, count)?;
        let error = error + fin.shortfall / slope.max(1e-300);
        if error > 1e-5 * root_t {
            return Err(NumericalError::NotConverged {
                what: what.to_string(),
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
                stop: TcStop::Converged,
            },
            q,
            isotropic: iso,
            q_error: 1e-3 * qn,
        })
    }

    pub(super) fn competing(&self, ch: &Channel, qg: [f64; 2], q: [f64; 2]) -> NumericalError {
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
    pub(super) fn scan_down(
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
        let top = self
            .q_search(model, ch, iso, count)
            .scan_point(t_top, None)?;
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
                    self.q_search(model, ch, iso, count).scan_point(t, prev)?
                }
            };
            let prev = pts.last().copied().unwrap_or(p);
            if p.value >= 1.0 {
                return Ok(Scan::Bracket(p, prev));
            }
            pts.push(p);
        }
        // No sign change on the grid: the curve may poke above 1 between two grid points.
        self.between_scan_points(self.q_search(model, ch, iso, count), &pts, what)
    }

    /// Where the downward scan `pts` shows no sign change: the maximum over ln T of the global
    /// maximum over q around the best scan point; a bracket if it reaches 1.
    fn between_scan_points(
        &self,
        search: QSearch,
        pts: &[ScanPoint],
        what: &str,
    ) -> Result<Scan, NumericalError> {
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
            let grid = search.grid_scan(t, &coarse)?;
            search.refine_grid(t, &coarse, &grid, None)
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
    pub(super) fn fine_bracket(
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

/// Below this fraction of the nested Tc, the check of q = 0 at the uniform Tc waits until the
/// downward scan reaches the uniform Tc (chi at low T is costly, and a modulated Tc well above
/// the uniform one is found first).
pub(super) const LOW_UNIFORM_TC: f64 = 0.25;

/// The results of the modulated search that need no root: no instability, or the uniform state.
struct Outcomes<'a> {
    iso: bool,
    uniform: &'a TcReport,
}

impl Outcomes<'_> {
    fn none(&self, reason: String, evaluations: usize, stop: TcStop) -> ModulatedTc {
        ModulatedTc {
            tc: no_instability(reason, evaluations, stop),
            q: [0.0, 0.0],
            isotropic: self.iso,
            q_error: 0.0,
        }
    }

    fn uniform_wins(&self) -> ModulatedTc {
        ModulatedTc {
            tc: self.uniform.clone(),
            q: [0.0, 0.0],
            isotropic: self.iso,
            q_error: 0.0,
        }
    }
}

/// Limits of the fine temperature search: the bottom of the scan, the top temperature, and
/// whether there is a uniform instability (the bottom is then the uniform Tc).
#[derive(Debug, Clone, Copy)]
struct FineLimits {
    floor: f64,
    t_top: f64,
    unstable: bool,
}

/// The bottom of the downward temperature scan.
#[derive(Debug, Clone, Copy)]
pub(super) enum Bottom {
    /// The uniform Tc, with the coarse maximum over q there (q != 0).
    Known(ScanPoint),
    /// The uniform Tc, not yet examined.
    Uniform(f64),
    /// The temperature floor (no uniform instability).
    Floor(f64),
}

impl Bottom {
    pub(super) fn t(&self) -> f64 {
        match self {
            Bottom::Known(p) => p.t,
            Bottom::Uniform(t) | Bottom::Floor(t) => *t,
        }
    }
}

/// Outcome of the downward scan.
pub(super) enum Scan {
    /// (unstable end, stable end).
    Bracket(ScanPoint, ScanPoint),
    /// q = 0 is the global maximum at the uniform Tc.
    UniformWins,
    /// No instability above the floor.
    Nothing,
}
