//! The phase diagram of one channel in the (parameter, temperature) plane: per parameter value
//! (in parallel) the instability lines and the chosen state on a temperature grid; then the
//! first-order line (equal Omega of the uniform and normal minima), the spinodal where the uniform
//! minimum disappears, and the tricritical (beta = 0) and Lifshitz (q-curvature = 0) points on
//! the uniform instability line, each refined in the parameter by Brent's method.

use super::lifshitz::lowest_curvature;
use super::{par_map, Grid, Sweep};
use crate::config::ConfigSource;
use crate::error::{InputError, NestorError, NumericalError};
use crate::kernels::grand_potential::quartic_loop;
use crate::kernels::Shell;
use crate::model::Model;
use crate::solvers::canonical::canonical_state;
use crate::solvers::ordered::{plane_wave_q_scale, OrderedSolver, StateKind};
use crate::solvers::roots::brent_root;
use crate::solvers::{TcSolver, TcStatus};

/// One grid cell.
#[derive(Debug, Clone)]
pub struct Cell {
    pub state: StateKind,
    pub delta: f64,
    pub q: [f64; 2],
    /// Omega of the chosen state per spin channel, meV/nm^2.
    pub omega: f64,
    /// Lowest Omega among uniform minima (None when there is none).
    pub uniform_omega: Option<f64>,
    /// Lowest Omega among the other minima (normal, plane wave); None when there is none.
    pub other_omega: Option<f64>,
    /// Canonical mode: the ordered fraction when the point lies in a coexistence region.
    pub coexistence: Option<f64>,
    /// Canonical mode: the normal phase is unstable at the fixed density but no single phase
    /// was found (phase separation between ordered states, not constructed).
    pub undetermined: bool,
    /// Whether the normal state is a local minimum (alpha > 0).
    pub normal_minimum: bool,
}

/// One column (parameter value) of the diagram.
#[derive(Debug, Clone)]
pub struct Column {
    pub value: f64,
    /// Uniform instability temperature (meV; 0 when none) and the quartic coefficient there.
    pub t_uniform: f64,
    pub beta_uniform: Option<f64>,
    /// q-curvature of chi at q = 0 on the uniform line (lowest eigenvalue for anisotropic
    /// channels), 1/(meV nm^2) nm^2.
    pub curvature_uniform: Option<f64>,
    pub t_modulated: f64,
    pub q_star: [f64; 2],
    pub cells: Vec<Result<Cell, String>>,
}

/// A special point on the uniform instability line.
#[derive(Debug, Clone, Copy)]
pub struct SpecialPoint {
    pub value: f64,
    /// meV
    pub t: f64,
    /// Whether it lies on the actual phase boundary (not preempted by another state).
    pub on_boundary: bool,
}

#[derive(Debug, Clone)]
pub struct PhaseDiagram {
    pub channel: usize,
    pub temperatures: Vec<f64>,
    pub columns: Vec<Result<Column, String>>,
    /// First-order line (parameter, T meV).
    pub first_order: Vec<(f64, f64)>,
    /// Where the uniform minimum disappears (parameter, T meV).
    pub spinodal: Vec<(f64, f64)>,
    pub tricritical: Option<SpecialPoint>,
    pub lifshitz: Option<SpecialPoint>,
    /// Special-point searches that failed (so that a missing point is not read as "none").
    pub special_point_failures: Vec<String>,
    /// The preferred structure at points of the modulated instability line (filled by
    /// [`mark_structures`]).
    pub structure_marks: Vec<StructureMark>,
}

/// The structure ranking at one point of the modulated instability line.
#[derive(Debug, Clone, serde::Serialize)]
pub struct StructureMark {
    pub value: f64,
    /// meV.
    pub t: f64,
    /// The preferred structure's name (None: no positive quartic coefficient, or failed).
    pub preferred: Option<String>,
    /// Its number of wavevectors.
    pub wavevectors: usize,
    /// Names of structures with a negative quartic coefficient (first order there).
    pub first_order: Vec<String>,
    pub failure: Option<String>,
}

/// Ranks the structures at up to `count` points spread along the modulated instability line of
/// `d` (columns where q* != 0), in parallel; the marks land in `d.structure_marks`.
pub fn mark_structures(
    sweep: &Sweep,
    d: &mut PhaseDiagram,
    ps: &crate::solvers::pattern::PatternSolver,
    count: usize,
    threads: Option<usize>,
) {
    let on_line: Vec<(usize, f64, f64, [f64; 2])> = d
        .columns
        .iter()
        .enumerate()
        .filter_map(|(i, c)| c.as_ref().ok().map(|c| (i, c)))
        .filter(|(_, c)| c.t_modulated > 0.0 && c.q_star != [0.0, 0.0])
        .map(|(i, c)| (i, c.value, c.t_modulated, c.q_star))
        .collect();
    if on_line.is_empty() || count == 0 {
        return;
    }
    let picks: Vec<(usize, f64, f64, [f64; 2])> = if on_line.len() <= count {
        on_line
    } else {
        (0..count)
            .map(|k| on_line[(k * (on_line.len() - 1) + (count - 1) / 2) / (count - 1).max(1)])
            .collect()
    };
    let path = sweep.grid.axes[0].path();
    let channel = d.channel;
    let marks = par_map(picks.len(), threads, false, |k| {
        let (i, value, t, q) = picks[k];
        let fail = |e: String| StructureMark {
            value,
            t,
            preferred: None,
            wavevectors: 0,
            first_order: vec![],
            failure: Some(e),
        };
        let m = match sweep.model_at(i) {
            Ok(m) => m,
            Err(e) => return fail(e.0),
        };
        let line = match ps.line_point_at(&m, channel, &path, value, value, t, q) {
            Ok(l) => l,
            Err(e) => return fail(e.to_string()),
        };
        let structures = crate::solvers::pattern::PatternSolver::candidate_structures(&line, &[]);
        match ps.rank(&m, channel, &line, &structures) {
            Ok(r) => {
                let best = r.iter().find(|s| s.preferred);
                StructureMark {
                    value,
                    t,
                    preferred: best.map(|b| b.name.clone()),
                    wavevectors: best.map(|b| b.wavevectors.len()).unwrap_or(0),
                    first_order: r
                        .iter()
                        .filter(|s| s.on_line && s.first_order)
                        .map(|s| s.name.clone())
                        .collect(),
                    failure: None,
                }
            }
            Err(e) => fail(e.to_string()),
        }
    });
    d.structure_marks = marks;
}

/// Options of the phase-diagram computation.
#[derive(Debug, Clone, Copy)]
pub struct PhaseOptions {
    pub channel: usize,
    /// Highest temperature, meV.
    pub t_max: f64,
    pub temperatures: usize,
    /// Compute plane-wave states where the modulated instability lies above the uniform one.
    pub modulated: bool,
    /// Canonical mode: the net carrier density of the configuration's normal state at T = 0 is
    /// held fixed (uniform and normal states; a first-order jump becomes coexistence).
    pub fixed_density: bool,
    pub threads: Option<usize>,
    pub progress: bool,
}

/// All states at one cell, the plane wave searched near the instability's q*.
fn solve_cell(
    os: &OrderedSolver,
    m: &Model,
    ch: &crate::model::Channel,
    t: f64,
    q_scale: Option<f64>,
    hint: [f64; 2],
) -> Result<crate::solvers::ordered::OrderedStates, NumericalError> {
    let mut st = os.solve(m, ch, t, None)?;
    if let Some(qs) = q_scale {
        if let Some(pw) = os.plane_wave_near(m, ch, t, qs, Some(hint))? {
            if pw.q[0].hypot(pw.q[1]) > 1e-3 * qs {
                st.solutions.push(pw);
                st.reclassify();
            }
        }
    }
    Ok(st)
}

fn column(
    m: &Model,
    opts: &PhaseOptions,
    temps: &[f64],
    tc: &TcSolver,
    os: &OrderedSolver,
    value: f64,
) -> Result<Column, NestorError> {
    let ch = &m.channels()[opts.channel];
    let u = tc.uniform(m, ch)?;
    let md = tc.modulated(m, ch, &u)?;
    let (t_u, beta, curv) = if u.status == TcStatus::Unstable {
        let shell = Shell::for_channel(m, ch, [0.0, 0.0])?;
        let b = quartic_loop(&shell, u.tc, &tc.acc)?.value;
        (u.tc, Some(b), Some(lowest_curvature(tc, m, ch, u.tc)?))
    } else {
        (0.0, None, None)
    };
    let modulated_above = md.tc.status == TcStatus::Unstable && md.q != [0.0, 0.0];
    let mut cells = Vec::with_capacity(temps.len());
    for &t in temps {
        let want_pw = opts.modulated && modulated_above && t < md.tc.tc;
        let qs = want_pw.then(|| plane_wave_q_scale(m, ch, t).max(2.0 * md.q[0].hypot(md.q[1])));
        if opts.fixed_density {
            let window = crate::solvers::defaults::fixed_density_window(m, opts.channel, t);
            let cell = canonical_state(os, m, opts.channel, t, window).map(|c| Cell {
                state: if c.state == "normal" {
                    StateKind::Normal
                } else {
                    StateKind::Uniform
                },
                undetermined: c.state == "undetermined",
                delta: c.delta,
                q: [0.0, 0.0],
                omega: f64::NAN,
                uniform_omega: None,
                normal_minimum: true,
                other_omega: None,
                coexistence: c.ordered_fraction,
            });
            cells.push(cell.map_err(|e| e.to_string()));
            continue;
        }
        let cell = solve_cell(os, m, ch, t, qs, md.q).map(|st| {
            let c = st.chosen();
            Cell {
                state: c.state,
                delta: c.delta,
                q: c.q,
                omega: c.omega,
                uniform_omega: st
                    .solutions
                    .iter()
                    .filter(|s| s.state == StateKind::Uniform && s.minimum)
                    .map(|s| s.omega)
                    .reduce(f64::min),
                normal_minimum: st.solutions[0].minimum,
                other_omega: st
                    .solutions
                    .iter()
                    .filter(|s| s.state != StateKind::Uniform && s.minimum)
                    .map(|s| s.omega)
                    .reduce(f64::min),
                coexistence: None,
                undetermined: false,
            }
        });
        cells.push(cell.map_err(|e| e.to_string()));
    }
    Ok(Column {
        value,
        t_uniform: t_u,
        beta_uniform: beta,
        curvature_uniform: curv,
        t_modulated: if md.tc.status == TcStatus::Unstable {
            md.tc.tc
        } else {
            0.0
        },
        q_star: md.q,
        cells,
    })
}

/// Computes the phase diagram over a 1D grid of the parameter.
pub fn phase_diagram(
    base: &ConfigSource,
    base_model: &Model,
    grid: &Grid,
    opts: &PhaseOptions,
    tc: &TcSolver,
    os: &OrderedSolver,
) -> Result<PhaseDiagram, InputError> {
    if grid.axes.len() != 1 {
        return Err(InputError::new(
            "phases: give exactly one --vary range (the temperature is the other axis)",
        ));
    }
    if opts.channel >= base_model.channels().len() {
        return Err(InputError::new(
            "phases: the configuration has no such channel",
        ));
    }
    let sweep = Sweep::new(base, base_model, grid)?;
    let n_t = opts.temperatures.max(2);
    // The lowest row sits at a quarter step above T = 0, where Omega at q != 0 has kinks in angle.
    let temps: Vec<f64> = (0..n_t)
        .map(|j| opts.t_max * (j as f64).max(0.25) / (n_t - 1) as f64)
        .collect();
    let columns: Vec<Result<Column, String>> =
        par_map(grid.len(), opts.threads, opts.progress, |i| {
            let value = grid.values(i)[0];
            sweep
                .model_at(i)
                .map_err(NestorError::from)
                .and_then(|m| column(&m, opts, &temps, tc, os, value))
                .map_err(|e| e.to_string())
        });
    // First-order line and spinodal, by interpolation along the parameter at each temperature.
    let mut first_order = Vec::new();
    let mut spinodal = Vec::new();
    for (j, &t) in temps.iter().enumerate() {
        for w in columns.windows(2) {
            let (Ok(a), Ok(b)) = (&w[0], &w[1]) else {
                continue;
            };
            let (Ok(ca), Ok(cb)) = (&a.cells[j], &b.cells[j]) else {
                continue;
            };
            // Equal Omega of the uniform minimum and the best other minimum (normal or plane wave).
            if let (Some(ua), Some(ub), Some(oa), Some(ob)) = (
                ca.uniform_omega,
                cb.uniform_omega,
                ca.other_omega,
                cb.other_omega,
            ) {
                let (da, db) = (ua - oa, ub - ob);
                if da.signum() != db.signum() {
                    let x = a.value + (b.value - a.value) * da / (da - db);
                    first_order.push((x, t));
                }
            }
            if ca.uniform_omega.is_some() != cb.uniform_omega.is_some()
                && ca.normal_minimum
                && cb.normal_minimum
            {
                spinodal.push((0.5 * (a.value + b.value), t));
            }
        }
    }
    // Special points along the uniform line, refined in the parameter.
    // Whether the uniform line exists at x; a failure to decide is an error, not a "no".
    let has_uniform = |x: f64| -> Result<bool, NestorError> {
        let m = sweep.model_along(x)?;
        let u = tc.uniform(&m, &m.channels()[opts.channel])?;
        Ok(u.status == TcStatus::Unstable)
    };
    // Failures of the special-point searches are recorded, so that "none in range" is not
    // reported where a search failed.
    let failures = std::cell::RefCell::new(Vec::<String>::new());
    let fail = |what: &str, e: String| failures.borrow_mut().push(format!("{what}: {e}"));
    let refine =
        |pick: fn(&Column) -> Option<f64>, what: &str, which: u8| -> Option<SpecialPoint> {
            for w in columns.windows(2) {
                let (Ok(a), Ok(b)) = (&w[0], &w[1]) else {
                    continue;
                };
                let (lo, hi, fa) = match (pick(a), pick(b)) {
                    (Some(fa), Some(fb)) if fa.signum() != fb.signum() => (a.value, b.value, fa),
                    // The uniform line ends (its nose) between the two columns: the point may lie
                    // between the last column and the nose.
                    (Some(fa), None) | (None, Some(fa)) => {
                        let (mut inside, mut outside) = if pick(a).is_some() {
                            (a.value, b.value)
                        } else {
                            (b.value, a.value)
                        };
                        let mut failed = false;
                        for _ in 0..30 {
                            let mid = 0.5 * (inside + outside);
                            match has_uniform(mid) {
                                Ok(true) => inside = mid,
                                Ok(false) => outside = mid,
                                Err(e) => {
                                    fail(what, e.to_string());
                                    failed = true;
                                    break;
                                }
                            }
                        }
                        if failed {
                            continue;
                        }
                        let start = if pick(a).is_some() { a.value } else { b.value };
                        (start.min(inside), start.max(inside), fa)
                    }
                    _ => continue,
                };
                let _ = fa;
                let eval = |x: f64| -> Result<f64, NumericalError> {
                    let m = sweep
                        .model_along(x)
                        .map_err(|reason| NumericalError::Stopped {
                            what: what.to_string(),
                            at: x,
                            reason,
                        })?;
                    let ch = &m.channels()[opts.channel];
                    let u = tc.uniform(&m, ch)?;
                    if u.status != TcStatus::Unstable {
                        return Err(NumericalError::NoUniformInstability {
                            what: what.to_string(),
                            at: x,
                        });
                    }
                    if which == 0 {
                        Ok(
                            quartic_loop(&Shell::for_channel(&m, ch, [0.0, 0.0])?, u.tc, &tc.acc)?
                                .value,
                        )
                    } else {
                        lowest_curvature(tc, &m, ch, u.tc)
                    }
                };
                let x = match brent_root(what, lo, hi, 1e-8, eval) {
                    Ok(r) => r.x,
                    // No sign change between a column and the nose of the uniform line: no point.
                    Err(NumericalError::NotBracketed { .. }) => continue,
                    Err(e) => {
                        fail(what, e.to_string());
                        continue;
                    }
                };
                let m = match sweep.model_along(x) {
                    Ok(m) => m,
                    Err(e) => {
                        fail(what, e.to_string());
                        return None;
                    }
                };
                let ch = &m.channels()[opts.channel];
                let (u, md) = match tc
                    .uniform(&m, ch)
                    .and_then(|u| Ok((u.clone(), tc.modulated(&m, ch, &u)?)))
                {
                    Ok(x) => x,
                    Err(e) => {
                        fail(what, e.to_string());
                        return None;
                    }
                };
                let preempted_by_modulated = md.q != [0.0, 0.0] && md.tc.tc > u.tc * (1.0 + 1e-6);
                let on_boundary = if which == 0 {
                    !preempted_by_modulated
                } else {
                    // The Lifshitz point is on the boundary when the uniform line there is second order.
                    match Shell::for_channel(&m, ch, [0.0, 0.0])
                        .and_then(|sh| quartic_loop(&sh, u.tc, &tc.acc))
                    {
                        Ok(b) => b.value > 0.0,
                        Err(e) => {
                            fail(what, e.to_string());
                            return None;
                        }
                    }
                };
                return Some(SpecialPoint {
                    value: x,
                    t: u.tc,
                    on_boundary,
                });
            }
            None
        };
    let tricritical = refine(|c| c.beta_uniform, "tricritical point", 0);
    let lifshitz = refine(|c| c.curvature_uniform, "Lifshitz point", 1);
    let special_point_failures = failures.into_inner();
    Ok(PhaseDiagram {
        channel: opts.channel,
        temperatures: temps,
        columns,
        first_order,
        spinodal,
        tricritical,
        lifshitz,
        special_point_failures,
        structure_marks: vec![],
    })
}
