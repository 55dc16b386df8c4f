//! One column of the phase diagram (one value of the swept parameter): the instability lines,
//! the quartic coefficient and q-curvature on the uniform line, and the chosen grand-canonical
//! state at every temperature of the grid (the first step of [`super::phase_diagram`]).

use super::{Cell, Column, PhaseOptions};
use crate::error::{NestorError, NumericalError};
use crate::kernels::grand_potential::quartic_loop;
use crate::kernels::Shell;
use crate::model::{Channel, Model};
use crate::solvers::ordered::{plane_wave_q_scale, OrderedSolver, OrderedStates, StateKind};
use crate::solvers::{TcSolver, TcStatus};
use crate::sweeps::lifshitz::lowest_curvature;

/// Relative temperature step taken when a grid temperature lies on the instability line itself,
/// where Omega is flat to fourth order in Delta and no minimum is resolved on the gap grid.
pub const AT_TC_NUDGE: f64 = 1e-6;

/// All states at one cell, the plane wave searched near the instability's q*.
fn solve_cell(
    os: &OrderedSolver,
    m: &Model,
    ch: &Channel,
    t: f64,
    q_scale: Option<f64>,
    hint: [f64; 2],
) -> Result<OrderedStates, NumericalError> {
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

/// The states at one cell. A temperature within a relative [`AT_TC_NUDGE`] of an instability
/// temperature in `lines` (meV), where Omega is flat to fourth order and the solver may find
/// no minimum or no converged integral, is solved a relative [`AT_TC_NUDGE`] above (then below)
/// it when it fails there, and the returned note says so.
fn solve_cell_near_tc(
    os: &OrderedSolver,
    (m, ch): (&Model, &Channel),
    t: f64,
    lines: [f64; 2],
    q_scale: Option<f64>,
    hint: [f64; 2],
) -> Result<(OrderedStates, Option<String>), NumericalError> {
    let first = match solve_cell(os, m, ch, t, q_scale, hint) {
        Ok(st) => return Ok((st, None)),
        Err(e) => e,
    };
    let on_line = lines
        .iter()
        .any(|&l| l > 0.0 && (t - l).abs() <= AT_TC_NUDGE * l);
    if !on_line {
        return Err(first);
    }
    for factor in [1.0 + AT_TC_NUDGE, 1.0 - AT_TC_NUDGE] {
        if let Ok(st) = solve_cell(os, m, ch, t * factor, q_scale, hint) {
            let note = format!(
                "T lies on the instability line, where the solver failed; solved at T x {factor}"
            );
            return Ok((st, Some(note)));
        }
    }
    Err(first)
}

/// The grid cell of the chosen grand-canonical state.
fn cell(st: &OrderedStates, note: Option<String>) -> Cell {
    let c = st.chosen();
    let lowest = |uniform: bool| {
        st.solutions
            .iter()
            .filter(|s| (s.state == StateKind::Uniform) == uniform && s.minimum)
            .map(|s| s.omega)
            .reduce(f64::min)
    };
    Cell {
        state: c.state,
        delta: c.delta,
        q: c.q,
        omega: c.omega,
        uniform_omega: lowest(true),
        normal_minimum: st.solutions[0].minimum,
        other_omega: lowest(false),
        note,
    }
}

/// The uniform instability temperature (meV; 0 when none), the quartic coefficient and the
/// lowest q-curvature there.
fn uniform_line(
    m: &Model,
    ch: &Channel,
    tc: &TcSolver,
    u: &crate::solvers::TcReport,
) -> Result<(f64, Option<f64>, Option<f64>), NumericalError> {
    if u.status != TcStatus::Unstable {
        return Ok((0.0, None, None));
    }
    let shell = Shell::for_channel(m, ch, [0.0, 0.0])?;
    let b = quartic_loop(&shell, u.tc, &tc.acc)?.value;
    Ok((u.tc, Some(b), Some(lowest_curvature(tc, m, ch, u.tc)?)))
}

/// One column of the diagram at parameter `value` on the temperatures `temps` (meV).
pub(super) fn column(
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
    let (t_u, beta, curv) = uniform_line(m, ch, tc, &u)?;
    let modulated_above = md.tc.status == TcStatus::Unstable && md.q != [0.0, 0.0];
    let cells = temps
        .iter()
        .map(|&t| {
            let want_pw = opts.modulated && modulated_above && t < md.tc.tc;
            let qs =
                want_pw.then(|| plane_wave_q_scale(m, ch, t).max(2.0 * md.q[0].hypot(md.q[1])));
            let lines = [
                t_u,
                md.tc.tc * f64::from(md.tc.status == TcStatus::Unstable),
            ];
            solve_cell_near_tc(os, (m, ch), t, lines, qs, md.q)
                .map(|(st, note)| cell(&st, note))
                .map_err(NestorError::from)
        })
        .collect();
    Ok(Column {
        value,
        mismatch: ch.mismatch(),
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
