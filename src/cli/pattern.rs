//! `nestor pattern`: the ranking of multi-wavevector structures on the modulated instability line
//! at one temperature, the chosen state at the configuration as given, and its density waves
//! (JSON, text and a density map).

use super::args::channel_index;
use super::{create_out, print_json, ConfigArgs, Failure, Outcome};
use crate::cli::tc::require_channels;
use clap::Args;
use nestor::config::{ConfigSource, Override};
use nestor::error::NestorError;
use nestor::model::structure::Structure;
use nestor::model::Model;
use nestor::observables::{density_waves, plan_maps};
use nestor::reports::pattern::{
    pattern_json, pattern_text, unpaired_correlation, write_pattern, PatternReport,
};
use nestor::solvers::defaults::default_line_path;
use nestor::solvers::ordered::OrderedSolver;
use nestor::solvers::pattern::{
    lowest, single_wavevector_candidates, structure_candidates, LinePoint, PatternSolver,
    RankedStructure,
};
use std::path::PathBuf;

/// Options of `nestor pattern`.
#[derive(Args, Debug)]
pub struct PatternArgs {
    /// The configuration and its overrides.
    #[command(flatten)]
    pub cfg: ConfigArgs,
    /// Temperature in K (> 0).
    #[arg(long, value_name = "K")]
    pub temperature: f64,
    /// The parameter varied to reach the modulated instability line, NAME.key (default: the
    /// hole-like pocket's offset of the channel).
    #[arg(long, value_name = "PATH")]
    pub along: Option<String>,
    /// Side of the real-space density map in nm (default: from the wavevectors, at least two
    /// periods of the longest wave; with an atomic-scale wave and a long envelope, two maps). A
    /// field that cannot be sampled with 8 points per shortest period in 1024 samples is shrunk
    /// to the largest that can, with a warning.
    #[arg(long, value_name = "NM")]
    pub fov: Option<f64>,
    /// Channel name or label (default: the first channel).
    #[arg(long)]
    pub channel: Option<String>,
    /// A further structure to rank, as wavevectors in 1/nm: "qx,qy;qx,qy;..." (repeatable).
    #[arg(long, value_name = "QX,QY;...")]
    pub wavevectors: Vec<String>,
    /// Solve the nonlinear state of every ranked structure on the line (default: the preferred
    /// one and the stripe).
    #[arg(long)]
    pub every_structure: bool,
    /// Print JSON instead of tables.
    #[arg(long)]
    pub json: bool,
    /// Output directory for the JSON report and the figures.
    #[arg(long, default_value = "nestor-out")]
    pub out: PathBuf,
}

/// Loads the configuration and runs the pattern search.
pub fn run(a: &PatternArgs) -> Result<Outcome, Failure> {
    let (src, model) = a.cfg.load()?;
    run_on(&src, &model, a)
}

/// The pattern search on `model` with the options of `a`: report written and printed, failed
/// steps (line point, ranking, multi-wavevector states) turned into warnings and `PartlyFailed`.
pub fn run_on(src: &ConfigSource, model: &Model, a: &PatternArgs) -> Result<Outcome, Failure> {
    let (channel, path, extra) = validate(src, model, a)?;
    create_out(&a.out)?;
    let t = nestor::units::kelvin_to_mev(a.temperature);
    let mut problems: Vec<String> = Vec::new();
    let (line, ranking) = line_and_ranking(src, channel, &path, t, &extra, &mut problems)?;
    let os = OrderedSolver::default();
    let mut candidates = single_wavevector_candidates(model, channel, t, &os)
        .map_err(|e| Failure::Computation(e.to_string()))?;
    if line.is_some() {
        match structure_candidates(model, channel, t, &ranking, &candidates, a.every_structure) {
            Ok(mut c) => candidates.append(&mut c),
            Err(e) => problems.push(format!("multi-wavevector states: {e}")),
        }
    }
    let ch = &model.channels()[channel];
    let chosen = lowest(&candidates);
    let waves = density_waves(model, ch, &candidates[chosen]);
    let kind = waves
        .iter()
        .find(|w| w.period_nm.is_some())
        .map_or("charge", |w| w.kind);
    let maps = plan_maps(&waves, kind, a.fov);
    warn_map_notes(&maps.notes);
    let unpaired = unpaired_correlation(&waves, &candidates[chosen], maps.widest_fov_nm());
    let report = PatternReport {
        src,
        model,
        channel,
        line: line.as_ref(),
        line_failure: problems.first().cloned(),
        structures: &ranking,
        candidates: &candidates,
        chosen,
        waves: &waves,
        maps: &maps,
        unpaired_correlation: unpaired,
    };
    let stem = format!("pattern_{}", ch.label());
    let written =
        write_pattern(&report, &a.out, &stem).map_err(|e| Failure::Input(e.to_string()))?;
    if a.json {
        print_json(&pattern_json(&report));
    } else {
        print!("{}", pattern_text(&report));
        for w in &written {
            println!("wrote {}", w.display());
        }
    }
    for p in &problems {
        eprintln!("nestor: warning: {p}");
    }
    if problems.is_empty() {
        Ok(Outcome::Done)
    } else {
        Ok(Outcome::PartlyFailed(problems.join("; ")))
    }
}

/// Largest `--fov`, nm (1 mm; whether a field can be sampled is checked once the waves are known).
const MAX_FOV_NM: f64 = 1e6;

/// Prints the notes of the map fields as warnings (they do not make the run fail).
fn warn_map_notes(notes: &[String]) {
    for n in notes {
        eprintln!("nestor: warning: {n}");
    }
}

/// Checks the options: the channel index, the path varied to reach the line (`--along` or the
/// library default) and the user's structures.
fn validate(
    src: &ConfigSource,
    model: &Model,
    a: &PatternArgs,
) -> Result<(usize, String, Vec<Structure>), Failure> {
    require_channels(src, model, "nothing to compute")?;
    let channel = channel_index(model, a.channel.as_ref())?;
    if !(a.temperature.is_finite() && a.temperature > 0.0 && a.temperature <= 1e4) {
        return Err(Failure::Input(format!(
            "--temperature {}: must lie in (0, 10000] K (the quartic coefficients need T > 0)",
            a.temperature
        )));
    }
    if let Some(fov) = a.fov {
        if !(fov.is_finite() && fov > 0.0 && fov <= MAX_FOV_NM) {
            return Err(Failure::Input(format!(
                "--fov {fov}: must lie in (0, {MAX_FOV_NM}] nm"
            )));
        }
    }
    let path = match &a.along {
        Some(p) => p.clone(),
        None => default_line_path(model, channel),
    };
    // The path must name a field of the configuration.
    let probe = Override::parse(&format!("{path}=0"))
        .map_err(|e| Failure::Input(e.0.replace("--set", "--along")))?;
    probe
        .resolve(&src.origin, model)
        .map_err(|e| Failure::Input(format!("--along {path}: {}", e.0)))?;
    let extra = user_structures(&a.wavevectors)?;
    Ok((channel, path, extra))
}

/// The line point and the ranking of the structures there; a failed numerical step is recorded
/// in `problems` (no line, or an empty ranking), an input error ends the command.
fn line_and_ranking(
    src: &ConfigSource,
    channel: usize,
    path: &str,
    t: f64,
    extra: &[Structure],
    problems: &mut Vec<String>,
) -> Result<(Option<LinePoint>, Vec<RankedStructure>), Failure> {
    let ps = PatternSolver::default();
    match ps.line_point(src, channel, path, t) {
        Ok((line, at_line)) => {
            let structures = PatternSolver::candidate_structures(&line, extra);
            match ps.rank(&at_line, channel, &line, &structures) {
                Ok(r) => Ok((Some(line), r)),
                Err(e) => {
                    problems.push(format!("structure ranking: {e}"));
                    Ok((Some(line), vec![]))
                }
            }
        }
        Err(NestorError::Input(e)) => Err(Failure::Input(e.0)),
        Err(NestorError::Numerical(e)) => {
            problems.push(format!("line point: {e}"));
            Ok((None, vec![]))
        }
    }
}

/// Parses `--wavevectors "qx,qy;qx,qy"` lists into structures named custom1, custom2, ...
fn user_structures(lists: &[String]) -> Result<Vec<Structure>, Failure> {
    let mut out = Vec::new();
    for (i, l) in lists.iter().enumerate() {
        let mut qs = Vec::new();
        for part in l.split(';').map(str::trim).filter(|p| !p.is_empty()) {
            let nums: Vec<&str> = part.split(',').map(str::trim).collect();
            let parsed: Option<Vec<f64>> = nums.iter().map(|x| x.parse::<f64>().ok()).collect();
            match parsed.as_deref() {
                Some([x, y]) if x.is_finite() && y.is_finite() && x.hypot(*y) <= 1e3 => {
                    qs.push([*x, *y])
                }
                _ => {
                    return Err(Failure::Input(format!(
                        "--wavevectors {l}: `{part}` is not a wavevector qx,qy in 1/nm (finite, |q| <= 1000/nm)"
                    )))
                }
            }
        }
        if qs.is_empty() || qs.len() > 12 {
            return Err(Failure::Input(format!(
                "--wavevectors {l}: give 1 to 12 wavevectors as \"qx,qy;qx,qy;...\" in 1/nm"
            )));
        }
        if qs.iter().any(|q| q[0].hypot(q[1]) == 0.0) {
            return Err(Failure::Input(format!(
                "--wavevectors {l}: a wavevector is zero (the uniform state is always compared)"
            )));
        }
        out.push(Structure {
            name: format!("custom{}", i + 1),
            wavevectors: qs,
        });
    }
    Ok(out)
}
