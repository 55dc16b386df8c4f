//! `nestor tc`: the uniform and modulated critical temperatures of every channel.

use super::{print_json, ConfigArgs, Failure, Outcome, SolveOpts};
use clap::Args;
use nestor::config::ConfigSource;
use nestor::model::Model;
use nestor::reports::tables;
use nestor::solvers::tc_channel::{channel_tc, ChannelTc, Method};
use nestor::solvers::TcSolver;

/// Options of `nestor tc`.
#[derive(Args, Debug)]
pub struct TcArgs {
    /// The configuration and its overrides.
    #[command(flatten)]
    pub cfg: ConfigArgs,
    /// The Tc solver options.
    #[command(flatten)]
    pub solve: SolveOpts,
    /// Print JSON instead of a table.
    #[arg(long)]
    pub json: bool,
}

/// Prints the Tc table (or JSON) of every channel.
pub fn run(a: &TcArgs) -> Result<Outcome, Failure> {
    let (src, model) = a.cfg.load()?;
    require_channels(&src, &model, "nothing to compute")?;
    let s = a.solve.solver()?;
    let results = all_channels(&model, &s, a.solve.method.into())?;
    if a.json {
        print_json(&tables::tc_json(&src, &model, &results));
    } else {
        print!("{}", tables::tc_text(&model, &results));
        for r in &results {
            println!("channel {}: {}", r.label, r.coupling_held);
        }
    }
    Ok(Outcome::Done)
}

/// The Tc results of every channel of the model.
pub fn all_channels(
    model: &Model,
    s: &TcSolver,
    method: Method,
) -> Result<Vec<ChannelTc>, Failure> {
    Ok(model
        .channels()
        .iter()
        .map(|ch| channel_tc(model, ch, s, method))
        .collect::<Result<Vec<_>, _>>()?)
}

/// An input error naming the configuration when it has no channel ("...: `what`").
pub fn require_channels(src: &ConfigSource, model: &Model, what: &str) -> Result<(), Failure> {
    if model.channels().is_empty() {
        return Err(Failure::Input(format!(
            "{}: the configuration has no [[channel]]: {what}",
            src.origin
        )));
    }
    Ok(())
}
