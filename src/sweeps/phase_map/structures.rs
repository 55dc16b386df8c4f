//! The structure marks of a phase diagram: the multi-wavevector structures ranked at points of the
//! modulated instability line (after the grid and the lines of [`super::phase_diagram`]).

use super::PhaseDiagram;
use crate::solvers::pattern::PatternSolver;
use crate::sweeps::{par_map, Sweep};

/// The structure ranking at one point of the modulated instability line.
#[derive(Debug, Clone, serde::Serialize)]
pub struct StructureMark {
    /// The swept parameter's value.
    pub value: f64,
    /// meV.
    pub t: f64,
    /// The preferred structure's name (None: no positive quartic coefficient, or failed).
    pub preferred: Option<String>,
    /// Its number of wavevectors.
    pub wavevectors: usize,
    /// Names of structures with a negative quartic coefficient (first order there).
    pub first_order: Vec<String>,
    /// Why the ranking failed, if it did.
    pub failure: Option<String>,
}

/// A column on the modulated line: (index, value, T meV, q* 1/nm).
type LinePoint = (usize, f64, f64, [f64; 2]);

/// Up to `count` points spread along the modulated instability line of `d` (columns where
/// q* != 0).
fn picks(d: &PhaseDiagram, count: usize) -> Vec<LinePoint> {
    let on_line: Vec<LinePoint> = d
        .columns
        .iter()
        .enumerate()
        .filter_map(|(i, c)| c.as_ref().ok().map(|c| (i, c)))
        .filter(|(_, c)| c.t_modulated > 0.0 && c.q_star != [0.0, 0.0])
        .map(|(i, c)| (i, c.value, c.t_modulated, c.q_star))
        .collect();
    if on_line.len() <= count {
        return on_line;
    }
    (0..count)
        .map(|k| on_line[(k * (on_line.len() - 1) + (count - 1) / 2) / (count - 1).max(1)])
        .collect()
}

/// Ranks the structures at up to `count` points spread along the modulated instability line of
/// `d` (columns where q* != 0), in parallel; the marks land in `d.structure_marks`.
pub fn mark_structures(
    sweep: &Sweep,
    d: &mut PhaseDiagram,
    ps: &PatternSolver,
    count: usize,
    threads: Option<usize>,
) {
    if count == 0 {
        return;
    }
    let picks = picks(d, count);
    if picks.is_empty() {
        return;
    }
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
        let structures = PatternSolver::candidate_structures(&line, &[]);
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
