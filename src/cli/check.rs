//! `nestor check`: the derived quantities of every pocket and channel, as a table or JSON.

use super::{print_json, ConfigArgs, Outcome};
use crate::cli::Failure;
use clap::Args;
use nestor::reports::tables;

/// Options of `nestor check`.
#[derive(Args, Debug)]
pub struct CheckArgs {
    /// The configuration and its overrides.
    #[command(flatten)]
    pub cfg: ConfigArgs,
    /// Print JSON instead of a table.
    #[arg(long)]
    pub json: bool,
}

/// Prints the check table (or JSON) of the configuration.
pub fn run(a: &CheckArgs) -> Result<Outcome, Failure> {
    let (src, model) = a.cfg.load()?;
    if a.json {
        print_json(&tables::check_json(&src, &model));
    } else {
        print!("{}", tables::check_text(&model));
    }
    Ok(Outcome::Done)
}
