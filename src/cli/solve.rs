//! `nestor solve`: the self-consistent ordered states of every channel at one temperature, with
//! the fixed-density state on request and the uniform states of channels that share a pocket.

use super::{print_json, ConfigArgs, Failure, Outcome};
use crate::cli::tc::require_channels;
use clap::Args;
use nestor::error::NestorError;
use nestor::model::Model;
use nestor::observables::spectrum;
use nestor::reports::tables;
use nestor::solvers::canonical::canonical_state;
use nestor::solvers::defaults::{fixed_density_window, pocket_sharing_pairs};
use nestor::solvers::ordered::{
    coupled_uniform, normal_instability, plane_wave_q_scale, OrderedSolver,
};
use nestor::solvers::TcSolver;

/// Options of `nestor solve`.
#[derive(Args, Debug)]
pub struct SolveStateArgs {
    /// The configuration and its overrides.
    #[command(flatten)]
    pub cfg: ConfigArgs,
    /// Temperature in K (0 allowed).
    #[arg(long, value_name = "K")]
    pub temperature: f64,
    /// Skip the plane-wave (single-wavevector) search; uniform and normal states only.
    #[arg(long)]
    pub uniform_only: bool,
    /// Also solve at fixed net carrier density (that of the configuration's normal state at
    /// T = 0): the normal or uniform phase at its own chemical potential, or their coexistence.
    #[arg(long)]
    pub fixed_density: bool,
    /// Print JSON instead of tables.
    #[arg(long)]
    pub json: bool,
}

/// Solves every channel at `--temperature` and prints the tables (or JSON).
pub fn run(a: &SolveStateArgs) -> Result<Outcome, Failure> {
    let (src, model) = a.cfg.load()?;
    require_channels(&src, &model, "nothing to solve")?;
    if !(a.temperature.is_finite() && (0.0..=1e4).contains(&a.temperature)) {
        return Err(Failure::Input(format!(
            "--temperature {}: must lie in [0, 10000] K",
            a.temperature
        )));
    }
    let t = nestor::units::kelvin_to_mev(a.temperature);
    let s = OrderedSolver::default();
    let at = SolveAt {
        model: &model,
        s: &s,
        t,
    };
    let mut json_channels = Vec::new();
    let mut text = String::new();
    for idx in 0..model.channels().len() {
        let mut cj = at.channel_states(idx, a.uniform_only, &mut text)?;
        if a.fixed_density {
            cj["fixed_density"] = at.fixed_density(idx, &mut text)?;
        }
        json_channels.push(cj);
        text.push('\n');
    }
    let coupled = at.coupled_channels(&mut text)?;
    if a.json {
        let mut v = tables::header(&src, "solve");
        v["coupled_channels"] = serde_json::Value::Array(coupled);
        v["channels"] = serde_json::Value::Array(json_channels);
        v["warnings"] = serde_json::json!(model.warnings());
        print_json(&v);
    } else {
        print!("{text}");
        println!("* = chosen state. Delta/g is the interband coherence |<c_a^+ c_b>| per nm^2 and spin channel.");
    }
    Ok(Outcome::Done)
}

/// The model, the ordered solver and the temperature (meV) of one `solve`.
struct SolveAt<'a> {
    model: &'a Model,
    s: &'a OrderedSolver,
    t: f64,
}

impl SolveAt<'_> {
    /// The ordered states of channel `idx` with their spectra: the text appended to `text`, the JSON
    /// returned.
    fn channel_states(
        &self,
        idx: usize,
        uniform_only: bool,
        text: &mut String,
    ) -> Result<serde_json::Value, Failure> {
        let (model, s, t) = (self.model, self.s, self.t);
        let ch = &model.channels()[idx];
        let qs = (!uniform_only).then(|| plane_wave_q_scale(model, ch, t));
        let mut st = s.solve(model, ch, t, qs).map_err(NestorError::from)?;
        let inst =
            normal_instability(&TcSolver::default(), s, model, ch, t).map_err(NestorError::from)?;
        st.set_normal_instability(inst);
        let spectra = st
            .solutions
            .iter()
            .map(|sol| spectrum(model, ch, sol))
            .collect::<Result<Vec<_>, _>>()
            .map_err(NestorError::from)?;
        *text += &tables::ordered_text(ch, &st, &spectra);
        Ok(tables::ordered_json(model, ch, &st, &spectra))
    }

    /// The state of channel `idx` at the fixed net carrier density: a line appended to `text`, the
    /// JSON returned.
    fn fixed_density(&self, idx: usize, text: &mut String) -> Result<serde_json::Value, Failure> {
        let (model, s, t) = (self.model, self.s, self.t);
        let window = fixed_density_window(model, idx, t);
        let cs = canonical_state(s, model, idx, t, window).map_err(NestorError::from)?;
        *text += &format!(
            "fixed density {:.6e}/nm^2: {}{} (chemical potential shifted by {:.5} meV, Delta = {:.5} meV)\n",
            cs.density,
            cs.state,
            cs.ordered_fraction.map(|f| format!(", ordered fraction {f:.4}")).unwrap_or_default(),
            cs.mu_shift,
            cs.delta
        );
        Ok(serde_json::to_value(&cs).unwrap_or_default())
    }

    /// The uniform channels that share a pocket, ordered together: lines appended to `text`, the
    /// JSON of each pair returned.
    fn coupled_channels(&self, text: &mut String) -> Result<Vec<serde_json::Value>, Failure> {
        let (model, s, t) = (self.model, self.s, self.t);
        let mut coupled = Vec::new();
        for pair in pocket_sharing_pairs(model) {
            let c = coupled_uniform(s, model, pair, t).map_err(NestorError::from)?;
            *text += &format!(
                "channels {} and {} share a pocket: they {} (uniform gaps {:.5}, {:.5} meV; Omega {:.5e} vs {:.5e} / {:.5e} alone, meV/nm^2 per spin channel); relative phase: {}\n",
                c.channels[0], c.channels[1], c.outcome, c.deltas[0], c.deltas[1], c.omega, c.omega_single[0], c.omega_single[1], c.relative_phase
            );
            coupled.push(serde_json::to_value(&c).unwrap_or_default());
        }
        Ok(coupled)
    }
}
