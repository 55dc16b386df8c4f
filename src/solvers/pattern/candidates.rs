//! The candidate states of the pattern search at the configuration as given: normal, uniform
//! and plane wave from the single-wavevector solver, and the nonlinear multi-wavevector states of
//! the ranked structures; the lowest Omega is the chosen state. Last step of the pattern search;
//! the observables of the chosen state are in [`crate::observables`].

use super::RankedStructure;
use crate::error::NumericalError;
use crate::model::{Channel, Model};
use crate::solvers::pattern_state::{solve_structure, HarmonicCheck, PatternOptions, PatternState};

/// One candidate state at the configuration as given.
#[derive(Debug, Clone)]
pub struct StateCandidate {
    /// "normal", "uniform", or a structure's name ("plane" is the single-wavevector state).
    pub name: String,
    /// Omega relative to the normal state, total over spin channels, meV/nm^2.
    pub omega: f64,
    /// Estimated absolute error of `omega`, meV/nm^2.
    pub omega_error: f64,
    /// Fourier components (G in 1/nm, Delta_G in meV) of Delta(r); the first harmonics first.
    pub components: Vec<([f64; 2], num_complex::Complex64)>,
    /// Number of first harmonics among `components`.
    pub first_harmonics: usize,
    /// Intraband density components at q_i - q_j, total over pockets and spin channels, per nm^2.
    pub intraband: Vec<([f64; 2], num_complex::Complex64)>,
    /// Convergence and provenance notes.
    pub notes: Vec<String>,
}

/// The normal, uniform and plane-wave candidates at temperature t from the single-wavevector
/// solver (the lowest minimum of each kind), with Omega as a total over spin channels.
pub fn single_wavevector_candidates(
    model: &Model,
    channel: usize,
    t: f64,
    solver: &crate::solvers::ordered::OrderedSolver,
) -> Result<Vec<StateCandidate>, NumericalError> {
    use crate::solvers::ordered::{plane_wave_q_scale, StateKind};
    let ch = &model.channels()[channel];
    let ns = ch.spin_channels();
    let qs = plane_wave_q_scale(model, ch, t);
    let states = solver.solve(model, ch, t, Some(qs))?;
    let mut out = vec![StateCandidate {
        name: "normal".into(),
        omega: 0.0,
        omega_error: 0.0,
        components: vec![],
        first_harmonics: 0,
        intraband: vec![],
        notes: vec![],
    }];
    for (kind, name) in [
        (StateKind::Uniform, "uniform"),
        (StateKind::Modulated, "plane"),
    ] {
        if let Some(s) = states
            .solutions
            .iter()
            .filter(|s| s.state == kind && s.minimum)
            .min_by(|a, b| a.omega.total_cmp(&b.omega))
        {
            out.push(StateCandidate {
                name: name.into(),
                omega: ns * s.omega,
                omega_error: ns * s.omega_error,
                components: vec![(s.q, num_complex::Complex64::new(s.delta, 0.0))],
                first_harmonics: 1,
                intraband: vec![],
                notes: vec![],
            });
        }
    }
    Ok(out)
}

/// Index of the lowest Omega.
pub fn lowest(candidates: &[StateCandidate]) -> usize {
    candidates
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.omega.total_cmp(&b.1.omega))
        .map(|(i, _)| i)
        .unwrap_or(0)
}

/// The multi-wavevector candidates at the configuration as given: the nonlinear states
/// ([`crate::solvers::pattern_state`]) of the preferred structure and the stripe, or with `every`
/// of every ranked structure on the line with several wavevectors; the preferred one first. Their
/// wavevectors have the length of the plane-wave state's |q| at this configuration when there is
/// one (else the line's |q*|); the start is the plane-wave gap shared over the components. The
/// harmonic truncation is checked by solving again one order higher for two wavevectors, and by
/// evaluating one order higher for more (a re-solve is too slow there); both changes are reported
/// in the notes and in the error.
pub fn structure_candidates(
    model: &Model,
    channel: usize,
    t: f64,
    ranking: &[RankedStructure],
    single: &[StateCandidate],
    every: bool,
) -> Result<Vec<StateCandidate>, NumericalError> {
    let ch = &model.channels()[channel];
    let plane = single.iter().find(|c| c.name == "plane");
    let q_len = plane
        .and_then(|p| p.components.first())
        .map(|(q, _)| q[0].hypot(q[1]));
    let start = plane
        .and_then(|p| p.components.first())
        .map(|(_, d)| d.norm())
        .unwrap_or(t);
    let mut picks: Vec<&RankedStructure> = ranking
        .iter()
        .filter(|r| {
            r.on_line && r.wavevectors.len() >= 2 && (every || r.preferred || r.name == "stripe")
        })
        .collect();
    picks.sort_by_key(|r| !r.preferred);
    let mut out = Vec::new();
    for r in picks {
        let n = r.wavevectors.len();
        let (qs, scale) = scaled_wavevectors(&r.wavevectors, q_len);
        let opts = options_for(n);
        let Some(st) = lowest_ordered(model, channel, &qs, &r.phases, t, start, &opts)? else {
            continue;
        };
        out.push(structure_candidate(ch, &r.name, &st, n, scale));
    }
    Ok(out)
}

/// The wavevectors (1/nm) scaled to the length `q_len` of the plane-wave state's wavevector when
/// there is one, with the scale factor (1 otherwise).
fn scaled_wavevectors(wavevectors: &[[f64; 2]], q_len: Option<f64>) -> (Vec<[f64; 2]>, f64) {
    let scale = match q_len {
        Some(l) if l > 0.0 => {
            let l0 = wavevectors[0][0].hypot(wavevectors[0][1]);
            l / l0
        }
        _ => 1.0,
    };
    let qs = wavevectors
        .iter()
        .map(|q| [q[0] * scale, q[1] * scale])
        .collect();
    (qs, scale)
}

/// The harmonic order and its check for a structure of n wavevectors.
fn options_for(n: usize) -> PatternOptions {
    PatternOptions {
        // Two wavevectors: order 3 (the harmonic change is 0.3% there against 3% at order 2).
        order: if n <= 2 { 3 } else { 2 },
        harmonic_check: if n <= 2 {
            HarmonicCheck::Resolve
        } else {
            HarmonicCheck::Evaluate
        },
        ..PatternOptions::default()
    }
}

/// The ordered nonlinear state of lowest Omega from three starts (None when every start falls to
/// the normal state; the last failure when no start gives an ordered state).
///
/// Delta = 0 is always a solution and attracts the iteration from below near the line, and more
/// than one ordered solution of the structure's symmetry can exist, so the iteration runs from
/// three starts shared over the components: the T = 0 uniform gap of a constant pair density of
/// states, cutoff/sinh(1/lambda) (from above), 1.5 times and once the plane-wave gap `start`
/// (meV).
fn lowest_ordered(
    model: &Model,
    channel: usize,
    qs: &[[f64; 2]],
    phases: &[f64],
    t: f64,
    start: f64,
    opts: &PatternOptions,
) -> Result<Option<PatternState>, NumericalError> {
    let ch = &model.channels()[channel];
    let n = qs.len();
    let mut best: Option<PatternState> = None;
    let mut failure = None;
    let above = ch.cutoff() / (1.0 / ch.lambda().max(1e-3)).sinh();
    for a in [above.max(1.5 * start), 1.5 * start, start].map(|a| a / (n as f64).sqrt()) {
        match solve_structure(model, channel, qs, phases, t, a, opts) {
            Ok(st) if !st.normal => {
                if best.as_ref().is_none_or(|b| st.omega < b.omega) {
                    best = Some(st);
                }
            }
            Ok(_) => {}
            Err(e) => failure = Some(e),
        }
    }
    match (best, failure) {
        (Some(b), _) => Ok(Some(b)),
        (None, Some(e)) => Err(e),
        (None, None) => Ok(None),
    }
}

/// The candidate of a solved structure `name` of n wavevectors (scaled by `scale`), with Omega
/// and the intraband densities as totals over spin channels and the convergence notes.
fn structure_candidate(
    ch: &Channel,
    name: &str,
    st: &PatternState,
    n: usize,
    scale: f64,
) -> StateCandidate {
    let ns = ch.spin_channels();
    let mut notes = vec![format!(
        "m = {}: Omega(m+1) - Omega(m) = {:.1e} ({}), grid {:.1e}",
        st.order,
        st.harmonic_change * ns,
        if n <= 2 { "re-solved" } else { "evaluated" },
        st.grid_change * ns
    )];
    if st.harmonic_change.is_finite() && st.harmonic_change > 0.1 * st.omega.abs() {
        notes.push("not converged in harmonics: compare with care".into());
    }
    if (scale - 1.0).abs() > 0.0 {
        notes.push("|q| from the plane wave".into());
    }
    StateCandidate {
        name: name.to_string(),
        omega: ns * st.omega,
        omega_error: ns * st.omega_error,
        components: st.components.clone(),
        first_harmonics: n,
        intraband: st
            .intraband
            .iter()
            .map(|(q, na, nb)| (*q, (na + nb) * ns))
            .collect(),
        notes,
    }
}
